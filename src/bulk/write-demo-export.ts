import { once } from 'node:events';
import { createWriteStream, mkdirSync, writeFileSync, type WriteStream } from 'node:fs';
import { join } from 'node:path';
import { seededSequence } from '../demo/seeded-sequence.js';
import { demoCase } from './demo-cases.js';

/**
 * Writes an invented FHIR Bulk Data export of Larkspur Bay General Hospital: one NDJSON file per
 * resource type and an `output.json` shaped like a Bulk Data export manifest. Admissions are made and
 * written one at a time, waiting for each file to drain, so memory does not grow with the size.
 */

export const DEMO_EXPORT_TYPES = [
  'Patient',
  'Encounter',
  'Observation',
  'Condition',
  'MedicationRequest',
  'ServiceRequest',
  'DeviceRequest',
] as const;

/** 2026-11-01T00:00Z: the invented month the export covers. */
export const DEMO_EXPORT_START_MS = Date.UTC(2026, 10, 1);

export interface DemoExportSummary {
  readonly orders: number;
  readonly patients: number;
  readonly counts: Readonly<Record<string, number>>;
}

async function write(stream: WriteStream, line: string): Promise<void> {
  if (!stream.write(line)) {
    await once(stream, 'drain');
  }
}

async function finish(stream: WriteStream): Promise<void> {
  stream.end();
  await once(stream, 'finish');
}

/** Writes `orders` oxygen orders (and everything around them) into `dir`, same seed same bytes. */
export async function writeDemoExport(dir: string, orders: number, seed: number): Promise<DemoExportSummary> {
  mkdirSync(dir, { recursive: true });
  const rng = seededSequence(seed);
  const streams = new Map(DEMO_EXPORT_TYPES.map((type) => [type as string, createWriteStream(join(dir, `${type}.ndjson`))]));
  const counts: Record<string, number> = Object.fromEntries(DEMO_EXPORT_TYPES.map((type) => [type, 0]));
  let written = 0;
  let patients = 0;
  try {
    while (written < orders) {
      // About one admission in four has a second order a few hours after the first.
      const orderCount = orders - written >= 2 && rng() < 0.25 ? 2 : 1;
      patients += 1;
      const admission = demoCase(patients, orderCount, rng, DEMO_EXPORT_START_MS);
      for (const resource of admission.resources) {
        const type = String(resource['resourceType']);
        const stream = streams.get(type);
        if (stream === undefined) {
          throw new Error(`writeDemoExport: no file for ${type}`);
        }
        await write(stream, `${JSON.stringify(resource)}\n`);
        counts[type] = (counts[type] ?? 0) + 1;
      }
      written += admission.orders;
    }
  } finally {
    await Promise.all([...streams.values()].map(finish));
  }
  const manifest = {
    transactionTime: new Date(DEMO_EXPORT_START_MS + 30 * 24 * 3_600_000).toISOString(),
    request: '$export (invented demo export of Larkspur Bay General Hospital; oxygen-order-checker demo-export)',
    requiresAccessToken: false,
    output: DEMO_EXPORT_TYPES.map((type) => ({ type, url: `${type}.ndjson`, count: counts[type] ?? 0 })),
    error: [],
  };
  writeFileSync(join(dir, 'output.json'), `${JSON.stringify(manifest, null, 2)}\n`);
  return { orders: written, patients, counts };
}
