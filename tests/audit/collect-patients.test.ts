import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { ExportCollector } from '../../src/audit/collect-patients.js';
import { BTS } from '../core/facts-builder.js';

/**
 * Reading an export into per-patient audit data with the service's own FHIR readers, on the
 * hand-made two-ward export (invented Larkspur Bay patients; tests/cli/audit-command.test.ts).
 */

const EXPORT = new URL('../fixtures/audit/larkspur-two-wards/', import.meta.url);
const END = new Date('2026-12-01T00:00:00Z');

function collectFixture(extra: readonly unknown[] = []): ReturnType<ExportCollector['finish']> {
  const collector = new ExportCollector();
  for (const name of ['Patient', 'Encounter', 'Observation', 'Condition', 'MedicationRequest', 'ServiceRequest']) {
    for (const line of readFileSync(new URL(`${name}.ndjson`, EXPORT), 'utf8').split('\n')) {
      if (line.trim() !== '') collector.add(JSON.parse(line));
    }
  }
  extra.forEach((r) => collector.add(r));
  return collector.finish(BTS, END);
}

describe('ExportCollector', () => {
  it('reads each patient with their ward, stay, age, readings, conditions and orders', () => {
    const { patients, skipped } = collectFixture();
    expect(skipped).toBe(0);
    expect(patients.map((p) => p.key)).toEqual(['a', 'b', 'c', 'd', 'e'].map((s) => `Patient/lbgh-audit-${s}`));
    const a = patients[0];
    expect(a?.ward).toBe('Ward 7 (Respiratory)');
    expect(a?.admittedAt).toBe('2026-11-30T07:00:00Z');
    // Born 1956-03-02, admitted 2026-11-30: 70 years (whole years, common practice).
    expect(a?.ageYears).toBe(70);
    expect(a?.spo2Percent.map((m) => m.value).sort()).toEqual([91, 93, 95]);
    expect(a?.conditions.map((c) => c.kind)).toEqual(['copd']); // ICD-10 J44.1: COPD, BTS 2017 Table 4
  });

  it('reads a completed order for what it prescribed, keeping its recorded status apart', () => {
    const { patients } = collectFixture();
    const a = patients.find((p) => p.key === 'Patient/lbgh-audit-a');
    const order = a?.orders[0];
    expect(order?.recordedStatus).toBe('completed');
    expect(order?.order.purpose).toBe('titrate');
    expect(order?.order.flowLPerMin).toBe(2);
    expect(order?.order.target).toMatchObject({ lowPercent: 94, highPercent: 98 });
  });

  it('reads an order period end as the time the order ended', () => {
    const ended = {
      resourceType: 'ServiceRequest',
      id: 'o2-b-2',
      status: 'completed',
      intent: 'order',
      code: { coding: [{ system: 'http://snomed.info/sct', code: '57485005' }], text: 'Oxygen therapy' },
      subject: { reference: 'Patient/lbgh-audit-b' },
      authoredOn: '2026-11-30T12:00:00Z',
      occurrencePeriod: { start: '2026-11-30T12:00:00Z', end: '2026-11-30T13:00:00Z' },
      patientInstruction: 'Oxygen 1 L/min nasal cannula, target SpO2 94-98%',
    };
    const b = collectFixture([ended]).patients.find((p) => p.key === 'Patient/lbgh-audit-b');
    expect(b?.orders.find((o) => o.order.reference === 'ServiceRequest/o2-b-2')?.endedAt).toBe('2026-11-30T13:00:00Z');
  });

  describe('edge cases', () => {
    it('counts resources naming no patient, and types the audit does not read, as skipped', () => {
      const { skipped, patients } = collectFixture([
        { resourceType: 'Observation', id: 'orphan', status: 'final' },
        { resourceType: 'Practitioner', id: 'dr-demo-01' },
        'not a resource',
      ]);
      expect(skipped).toBe(3);
      expect(patients).toHaveLength(5);
    });
  });
});
