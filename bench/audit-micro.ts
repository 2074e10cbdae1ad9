import { randomUUID } from 'node:crypto';
import { mkdtempSync } from 'node:fs';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { buildAuditRecords } from '../src/cds/audit-records.js';
import { evaluateHook } from '../src/cds/evaluate-hook.js';
import { openStore } from '../src/store/open-store.js';
import type { AdvisoryRecord } from '../src/store/store.js';
import type { HookExample } from './cases.js';
import { prepareCase, type LoadedFiles, type Timing } from './micro.js';

/**
 * `store.recordAdvisories` in-process for one hook call's cards: the records the service would write
 * for the example, each call with fresh card uuids (a uuid already held is skipped, which would time
 * nothing), committed to a SQLite store in a new temporary folder opened as the service opens it
 * (WAL, synchronous = FULL: one fsync a call). Read beside the example's `evaluateHook` time.
 */
export interface AuditMicroResult {
  readonly name: string;
  readonly cards: number;
  readonly record: Timing;
}

export interface AuditMicroSettings {
  readonly iterations: number;
  readonly warmupIterations: number;
  readonly maxMsPerLoop: number;
}

/** The records of one call again, as a new call would make them: new hook instance, new card uuids. */
export function asNewCall(records: readonly AdvisoryRecord[]): AdvisoryRecord[] {
  const hookInstance = randomUUID();
  return records.map((record) => ({
    ...record,
    hookInstance,
    cardUuid: randomUUID(),
    suggestionUuids: record.suggestionUuids.map(() => randomUUID()),
  }));
}

function timing(values: number[], elapsedMs: number): Timing {
  const sorted = [...values].sort((a, b) => a - b);
  const at = (q: number): number => (sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))] ?? 0) * 1000;
  const count = sorted.length;
  return { iterations: count, meanUs: count === 0 ? 0 : (elapsedMs / count) * 1000, p50Us: at(0.5), p99Us: at(0.99) };
}

export async function runAuditMicro(
  example: HookExample,
  files: LoadedFiles,
  now: Date,
  scratch: string,
  settings: AuditMicroSettings,
): Promise<AuditMicroResult> {
  const prepared = await prepareCase(example);
  const evaluation = evaluateHook(
    { serviceId: example.serviceId, request: prepared.request, data: prepared.data },
    { policy: files.policy, templates: files.templates, now },
  );
  const records = buildAuditRecords(evaluation, {
    serviceId: example.serviceId,
    hook: prepared.request.hook,
    hookInstance: prepared.request.hookInstance,
    client: { iss: 'https://ehr.larkspur-bay.example/bench' },
    policyContentHash: '0'.repeat(64),
    // The shape of a real key (a hex keyed hash); the bench needs no secret to stand for a patient.
    patientKey: 'b'.repeat(64),
    issuedAt: now,
  });
  const opened = openStore({ dataDir: mkdtempSync(join(scratch, 'audit-micro-')) });
  if (opened.kind === 'refused') {
    throw new Error(`the micro-benchmark store did not open: ${opened.problem}`);
  }
  const { store } = opened;
  try {
    for (let i = 0; i < settings.warmupIterations; i += 1) {
      await store.recordAdvisories(asNewCall(records));
    }
    const values: number[] = [];
    let elapsedMs = 0;
    for (let i = 0; i < settings.iterations && elapsedMs < settings.maxMsPerLoop; i += 1) {
      const call = asNewCall(records);
      const start = performance.now();
      await store.recordAdvisories(call);
      const ms = performance.now() - start;
      values.push(ms);
      elapsedMs += ms;
    }
    return { name: example.name, cards: records.length, record: timing(values, elapsedMs) };
  } finally {
    await store.close();
  }
}
