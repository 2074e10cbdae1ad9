import { accessSync, closeSync, constants, mkdirSync, openSync } from 'node:fs';
import { join } from 'node:path';
import { StoreTooNewError } from './migrations.js';
import { openWorkerStore } from './worker-store.js';
import type { Store } from './store.js';

/** The store's file name inside the data directory. */
export const STORE_FILE_NAME = 'oxygen-order-checker.sqlite';

export type OpenStoreResult =
  | { readonly kind: 'opened'; readonly store: Store; readonly file: string }
  /** The service must not start: `problem` says why and what to do, for the start-up message. */
  | { readonly kind: 'refused'; readonly problem: string };

export interface OpenStoreOptions {
  readonly dataDir: string;
}

function describe(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

/**
 * Opens the store in the data directory, creating the directory (owner-only) and the database on
 * first start. Anything that stops the store from opening is answered as a refusal, never thrown, so
 * the caller can print one clear message and exit instead of starting without a memory.
 */
export function openStore(options: OpenStoreOptions): OpenStoreResult {
  const file = join(options.dataDir, STORE_FILE_NAME);
  try {
    // 0o700: the audit trail and the patient-key secret live here; nobody else needs to read it.
    mkdirSync(options.dataDir, { recursive: true, mode: 0o700 });
    accessSync(options.dataDir, constants.W_OK | constants.X_OK);
    // Owner-only from the first byte; SQLite gives its -wal and -shm files the database's mode.
    closeSync(openSync(file, 'a', 0o600));
  } catch (error) {
    return {
      kind: 'refused',
      problem: `the data directory ${options.dataDir} cannot be created or written (${describe(error)}); set OXYGEN_CHECKER_DATA_DIR to a directory this service may write`,
    };
  }
  try {
    return { kind: 'opened', store: openWorkerStore({ file }), file };
  } catch (error) {
    if (error instanceof StoreTooNewError) {
      return { kind: 'refused', problem: error.message };
    }
    return {
      kind: 'refused',
      problem: `the store ${file} could not be opened (${describe(error)}); check that it is a database this service wrote and that the directory is writable`,
    };
  }
}
