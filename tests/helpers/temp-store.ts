import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll } from 'vitest';
import type { PatientKeyOf } from '../../src/http/audit-trail.js';
import { openStore } from '../../src/store/open-store.js';
import { patientKey } from '../../src/store/patient-key.js';
import type { Store } from '../../src/store/store.js';

/**
 * A real store in a fresh temporary data directory, for tests that need the service's memory but
 * not a particular one. Every store opened here is closed (closing twice is harmless), and every
 * directory removed, when the test file finishes. Never the shared ./data.
 */
export interface TempStore {
  readonly store: Store;
  readonly dataDir: string;
}

const stores: Store[] = [];
const dirs: string[] = [];

afterAll(async () => {
  for (const store of stores.splice(0)) {
    await store.close();
  }
  for (const dir of dirs.splice(0)) {
    rmSync(dir, { recursive: true, force: true });
  }
});

/** A fresh data directory, removed when the test file finishes. */
export function makeTempDataDir(): string {
  const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-data-'));
  dirs.push(dir);
  return dir;
}

/** Opens the store in `dataDir` (a fresh directory when omitted); throws if it refuses. */
export function openTempStore(dataDir: string = makeTempDataDir()): TempStore {
  const result = openStore({ dataDir });
  if (result.kind === 'refused') {
    throw new Error(`test store refused: ${result.problem}`);
  }
  stores.push(result.store);
  return { store: result.store, dataDir };
}

/** An invented 32-byte secret for the tests' patient keys (the service makes a random one). */
const TEST_SECRET = Buffer.from('larkspur-bay-test-patient-key-32', 'latin1');

/** The service's own keyed pseudonym (patient-key.ts), with the tests' secret. */
export const testPatientKey: PatientKeyOf = (patient) => patientKey(TEST_SECRET, patient);
