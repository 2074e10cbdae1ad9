import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { oxygenOrderType } from '../../src/fhir/is-oxygen-order.js';
import { runCommandLine } from './cli-harness.js';

/**
 * `demo-export`: an invented Bulk Data export (Bulk Data Access IG: NDJSON, one resource type a file)
 * of the fictional Larkspur Bay General Hospital, exactly N oxygen orders, the same bytes for the same
 * seed, every reference resolving, and the mixture the simulation needs.
 */

const work = mkdtempSync(join(tmpdir(), 'demo-export-test-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

type Resource = Record<string, any> & { resourceType: string; id: string };
const read = (dir: string, type: string): Resource[] =>
  readFileSync(join(dir, `${type}.ndjson`), 'utf8')
    .split('\n')
    .filter((line) => line !== '')
    .map((line) => JSON.parse(line) as Resource);
const TYPES = ['Patient', 'Encounter', 'Observation', 'Condition', 'MedicationRequest', 'ServiceRequest', 'DeviceRequest'];
const ORDERS = 250;
const dir = join(work, 'a');

beforeAll(async () => {
  const run = await runCommandLine(['demo-export', '--orders', String(ORDERS), '--seed', '3', dir]);
  expect(run.code).toBe(0);
  expect(run.stdout).toContain(`${ORDERS} oxygen orders`);
});

describe('oxygen-order-checker demo-export', () => {
  it('writes one NDJSON file per resource type and a manifest whose counts match the files', () => {
    expect(readdirSync(dir).sort()).toStrictEqual([...TYPES.map((t) => `${t}.ndjson`), 'output.json'].sort());
    const manifest = JSON.parse(readFileSync(join(dir, 'output.json'), 'utf8'));
    for (const entry of manifest.output) {
      expect(read(dir, entry.type)).toHaveLength(entry.count);
      expect(read(dir, entry.type).every((r) => r.resourceType === entry.type)).toBe(true);
    }
  });

  it('writes exactly N orders, every one read as an oxygen order by the service, in all three request types', () => {
    const orders = ['MedicationRequest', 'ServiceRequest', 'DeviceRequest'].flatMap((t) => read(dir, t));
    expect(orders).toHaveLength(ORDERS);
    expect(orders.every((o) => oxygenOrderType(o) === o.resourceType)).toBe(true);
    for (const type of ['MedicationRequest', 'ServiceRequest', 'DeviceRequest']) {
      expect(read(dir, type).length).toBeGreaterThan(0);
    }
  });

  it('resolves every reference: each order, Observation and Condition names a Patient, each order an Encounter, in the file', () => {
    const patients = new Set(read(dir, 'Patient').map((p) => `Patient/${p.id}`));
    const encounters = new Set(read(dir, 'Encounter').map((e) => `Encounter/${e.id}`));
    const withSubject = ['Observation', 'Condition', 'MedicationRequest', 'ServiceRequest', 'DeviceRequest', 'Encounter'].flatMap((t) => read(dir, t));
    expect(withSubject.every((r) => patients.has(r['subject'].reference))).toBe(true);
    const orders = ['MedicationRequest', 'ServiceRequest', 'DeviceRequest'].flatMap((t) => read(dir, t));
    expect(orders.every((o) => encounters.has(o['encounter'].reference))).toBe(true);
    const ids = TYPES.flatMap((t) => read(dir, t).map((r) => `${t}/${r.id}`));
    expect(new Set(ids).size).toBe(ids.length);
  });

  it('gives the same bytes for the same seed and different ones for another', async () => {
    const again = join(work, 'again');
    const other = join(work, 'other');
    await runCommandLine(['demo-export', '--orders', String(ORDERS), '--seed', '3', again]);
    await runCommandLine(['demo-export', '--orders', String(ORDERS), '--seed', '4', other]);
    for (const type of TYPES) {
      expect(readFileSync(join(again, `${type}.ndjson`), 'utf8')).toBe(readFileSync(join(dir, `${type}.ndjson`), 'utf8'));
    }
    expect(readFileSync(join(other, 'Observation.ndjson'), 'utf8')).not.toBe(readFileSync(join(dir, 'Observation.ndjson'), 'utf8'));
  });

  it('mixes what makes policies differ: COPD patients ordered 94–98 % and 88–92 %, SpO2 readings from 92 to 98 %, gases issued after the order', () => {
    const copd = new Set(read(dir, 'Condition').filter((c) => c['code'].coding[0].code === '13645005').map((c) => c['subject'].reference));
    const orders = ['MedicationRequest', 'ServiceRequest', 'DeviceRequest'].flatMap((t) => read(dir, t));
    const copdTargets = orders.filter((o) => copd.has(o['subject'].reference)).map((o) => /target SpO2 (\d+)-(\d+)%/.exec(JSON.stringify(o))?.slice(1).join('-'));
    // BTS 2017 Table 4: 88-92 % at hypercapnic risk; Tables 1-3: 94-98 % otherwise.
    expect(copdTargets).toContain('88-92');
    expect(copdTargets).toContain('94-98');
    const spo2 = read(dir, 'Observation').filter((o) => o['code'].coding[0].code === '59408-5').map((o) => o['valueQuantity'].value as number);
    // 92-98 %: where BTS 2017 (94-98 %) and TSANZ 2015 (92-96 %) disagree.
    for (const value of [92, 93, 97, 98]) expect(spo2).toContain(value);
    const lateGas = read(dir, 'Observation').filter((o) => o['issued'] !== undefined && Date.parse(o['issued']) - Date.parse(o['effectiveDateTime']) > 20 * 60_000);
    expect(lateGas.length).toBeGreaterThan(0);
    const icu = read(dir, 'Encounter').filter((e) => /Intensive Care Unit/.test(e['location'][0].location.display));
    expect(icu.length).toBeGreaterThan(0);
  });

  describe('edge cases', () => {
    it('refuses a folder that already holds files (exit 2) and a missing or bad --orders', async () => {
      const used = join(work, 'used');
      await runCommandLine(['demo-export', '--orders', '1', used]);
      writeFileSync(join(used, 'note.txt'), 'x');
      expect((await runCommandLine(['demo-export', '--orders', '1', used])).code).toBe(2);
      expect((await runCommandLine(['demo-export', join(work, 'x')])).code).toBe(2);
      expect((await runCommandLine(['demo-export', '--orders', '0', join(work, 'y')])).code).toBe(2);
      expect((await runCommandLine(['demo-export', '--orders', 'ten', join(work, 'z')])).code).toBe(2);
    });

    it('writes a single order when asked for one', async () => {
      const one = join(work, 'one');
      expect((await runCommandLine(['demo-export', '--orders', '1', one])).code).toBe(0);
      expect(['MedicationRequest', 'ServiceRequest', 'DeviceRequest'].flatMap((t) => read(one, t))).toHaveLength(1);
    });
  });
});
