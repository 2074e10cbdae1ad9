import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildExportIndex, type ExportIndex } from '../../src/bulk/export-index.js';

/**
 * The export index answers "what did the record hold when this order was signed": Observations known
 * at or before authoredOn (not one second after, not a result issued later), Conditions recorded on
 * or before it, and the oxygen orders in force then. The export below is invented (Larkspur Bay).
 */

const root = mkdtempSync(join(tmpdir(), 'export-index-test-'));
const exportDir = join(root, 'export');
const indexDir = join(root, 'index');
afterAll(() => rmSync(root, { recursive: true, force: true }));

const AUTHORED = '2026-11-10T09:30:00Z';
const at = (offsetSeconds: number): string => new Date(Date.parse(AUTHORED) + offsetSeconds * 1000).toISOString();
const subject = { reference: 'Patient/lb-1' };

function spo2(id: string, effective: string, extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    resourceType: 'Observation',
    id,
    status: 'final',
    code: { coding: [{ system: 'http://loinc.org', code: '59408-5' }] },
    subject,
    effectiveDateTime: effective,
    valueQuantity: { value: 93, unit: '%', system: 'http://unitsofmeasure.org', code: '%' },
    ...extra,
  };
}

function condition(id: string, dates: Record<string, string>): Record<string, unknown> {
  return { resourceType: 'Condition', id, subject, code: { coding: [{ system: 'http://snomed.info/sct', code: '13645005' }] }, ...dates };
}

function oxygenOrder(id: string, authoredOn: string | undefined, extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    resourceType: 'ServiceRequest',
    id,
    status: 'active',
    intent: 'order',
    code: { coding: [{ system: 'http://snomed.info/sct', code: '57485005', display: 'Oxygen therapy' }] },
    subject,
    encounter: { reference: 'Encounter/enc-1' },
    ...(authoredOn === undefined ? {} : { authoredOn }),
    patientInstruction: 'Oxygen 2 L/min via nasal cannula, target SpO2 88-92%',
    ...extra,
  };
}

const ndjson = (rows: readonly unknown[]): string => `${rows.map((r) => JSON.stringify(r)).join('\n')}\n`;

let index: ExportIndex;

beforeAll(async () => {
  const { mkdirSync } = await import('node:fs');
  mkdirSync(exportDir);
  mkdirSync(indexDir);
  writeFileSync(join(exportDir, 'Patient.ndjson'), ndjson([{ resourceType: 'Patient', id: 'lb-1', birthDate: '1950-01-01' }]));
  writeFileSync(join(exportDir, 'Encounter.ndjson'), ndjson([{ resourceType: 'Encounter', id: 'enc-1', status: 'in-progress', subject }]));
  writeFileSync(
    join(exportDir, 'Observation.ndjson'),
    ndjson([
      spo2('before', at(-600)),
      spo2('exactly-at', AUTHORED),
      spo2('one-second-after', at(1)),
      // drawn before, issued after the order: not in the record when it was signed
      spo2('issued-after', at(-900), { issued: at(600) }),
      spo2('issued-before', at(-900), { issued: at(-60) }),
      // a code the observations prefetch does not ask for (LOINC 8867-4 heart rate, from memory)
      { ...spo2('heart-rate', at(-300)), code: { coding: [{ system: 'http://loinc.org', code: '8867-4' }] } },
      { ...spo2('no-time', AUTHORED), effectiveDateTime: undefined },
    ]) + '{"resourceType": "Observation", "id": "cut off\n',
  );
  writeFileSync(
    join(exportDir, 'Condition.ndjson'),
    ndjson([
      condition('recorded-before', { recordedDate: at(-86_400) }),
      condition('recorded-same-second', { recordedDate: AUTHORED }),
      condition('recorded-after', { recordedDate: at(1), onsetDateTime: at(-86_400 * 400) }),
      condition('onset-only-before', { onsetDateTime: at(-3600) }),
      condition('undated', {}),
    ]),
  );
  writeFileSync(
    join(exportDir, 'ServiceRequest.ndjson'),
    ndjson([
      oxygenOrder('this-order', AUTHORED),
      oxygenOrder('earlier-running', at(-7200)),
      oxygenOrder('earlier-ended', at(-7200), { occurrencePeriod: { start: at(-7200), end: at(-60) } }),
      oxygenOrder('earlier-in-error', at(-7200), { status: 'entered-in-error' }),
      oxygenOrder('later', at(3600)),
      oxygenOrder('no-time', undefined),
      { resourceType: 'ServiceRequest', id: 'x-ray', status: 'active', intent: 'order', subject, authoredOn: AUTHORED, code: { text: 'Chest X-ray' } },
    ]),
  );
  // A second file of the same type, out of time order: the index orders across files.
  writeFileSync(join(exportDir, 'ServiceRequest.2.ndjson'), ndjson([oxygenOrder('earliest', at(-86_400 * 2))]));
  index = await buildExportIndex(exportDir, { indexDir });
});

afterAll(() => index.close());

const ids = (resources: readonly { id?: string }[]): string[] => resources.map((r) => r.id ?? '').sort();
const AUTHORED_MS = Date.parse(AUTHORED);

describe('buildExportIndex', () => {
  it('holds the record as it stood at authoredOn: an Observation one second after it is not seen', () => {
    expect(ids(index.observationsAsOf('lb-1', AUTHORED_MS))).toStrictEqual(['before', 'exactly-at', 'issued-before']);
  });

  it('returns Observations newest first, at most the limit asked for (the prefetch _count)', () => {
    expect(index.observationsAsOf('lb-1', AUTHORED_MS, 2).map((o) => o.id)).toStrictEqual(['exactly-at', 'before']);
  });

  it('sees a Condition recorded on or before authoredOn, and one with no date, but not one recorded after', () => {
    expect(ids(index.conditionsAsOf('lb-1', AUTHORED_MS))).toStrictEqual([
      'onset-only-before',
      'recorded-before',
      'recorded-same-second',
      'undated',
    ]);
  });

  it('gives the oxygen orders in force at authoredOn: authored before, not ended, not entered in error', () => {
    expect(index.ordersInForce('lb-1', AUTHORED_MS, 'ServiceRequest/this-order').map((o) => o.id).sort()).toStrictEqual([
      'earlier-running',
      'earliest',
    ]);
  });

  it('streams every replayable oxygen order in authoredOn order, whatever file it came from', () => {
    const order = [...index.orders(2)].map((o) => o.id);
    expect(order).toStrictEqual(['earliest', 'earlier-ended', 'earlier-in-error', 'earlier-running', 'this-order', 'later']);
  });

  it('streams each order once whatever the page size, also when a page ends between orders authored at the same time', () => {
    // Three orders share one authoredOn (ties broken by type, then id): every page size puts a page
    // end somewhere among them or around them.
    for (let pageSize = 1; pageSize <= 7; pageSize += 1) {
      expect([...index.orders(pageSize)].map((o) => o.id)).toStrictEqual([
        'earliest',
        'earlier-ended',
        'earlier-in-error',
        'earlier-running',
        'this-order',
        'later',
      ]);
    }
  });

  it('counts what it could not use: a malformed line, an undated Observation, an order without authoredOn, a non-oxygen order', () => {
    expect(index.problems.count).toBe(1);
    expect(index.problems.first[0]).toStrictEqual({ file: 'Observation.ndjson', line: 8, reason: 'not-json' });
    expect(index.counts.undatedObservations).toBe(1);
    expect(index.skippedOrders['no-authored-on']).toBe(1);
    expect(index.counts.otherOrders).toBe(1);
    expect(index.counts.oxygenOrders).toBe(6);
  });

  it('finds the patient and the encounter by id', () => {
    expect(index.patient('lb-1')?.['birthDate']).toBe('1950-01-01');
    expect(index.encounter('enc-1')?.id).toBe('enc-1');
    expect(index.patient('nobody')).toBeUndefined();
  });

  it('keeps its one file under the directory given while open', () => {
    expect(readdirSync(indexDir)).toHaveLength(1);
    expect(existsSync(index.path)).toBe(true);
  });
});

describe('the index file', () => {
  it('is deleted on close, and kept when asked', async () => {
    const dropped = await buildExportIndex(exportDir, { indexDir });
    dropped.close();
    expect(existsSync(dropped.path)).toBe(false);
    const kept = await buildExportIndex(exportDir, { indexDir, keepIndex: true });
    kept.close();
    expect(existsSync(kept.path)).toBe(true);
    rmSync(kept.path);
  });
});
