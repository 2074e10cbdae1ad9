import { accessSync, closeSync, constants, mkdirSync, openSync } from 'node:fs';
import { join } from 'node:path';
import { StoreTooNewError } from './migrations.js';
import { describeDatabase } from './postgres-pool.js';
import { openPostgresStore } from './postgres-store.js';
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

export interface OpenConfiguredStoreOptions extends OpenStoreOptions {
  /** `DATABASE_URL`: when set, the shared PostgreSQL store; when absent, the embedded SQLite one. */
  readonly databaseUrl?: string;
}

export type OpenConfiguredStoreResult =
  | { readonly kind: 'opened'; readonly store: Store; readonly where: string }
  /** `variable` is the setting to look at first, for the start-up message. */
  | { readonly kind: 'refused'; readonly variable: string; readonly problem: string };

/**
 * Opens the store the configuration names: PostgreSQL when `DATABASE_URL` is set (several
 * instances share it; see postgres-store.ts), else SQLite in the data directory (`openStore`). As
 * with `openStore`, anything that stops the store from opening is a refusal, never a throw. A refusal
 * names the database by user, host, port, database and schema only: never the URL, which may carry
 * a password.
 */
export async function openConfiguredStore(options: OpenConfiguredStoreOptions): Promise<OpenConfiguredStoreResult> {
  if (options.databaseUrl === undefined) {
    const opened = openStore(options);
    return opened.kind === 'opened'
      ? { kind: 'opened', store: opened.store, where: opened.file }
      : { kind: 'refused', variable: 'OXYGEN_CHECKER_DATA_DIR', problem: opened.problem };
  }
  const where = describeDatabase(options.databaseUrl);
  try {
    return { kind: 'opened', store: await openPostgresStore({ connectionString: options.databaseUrl }), where };
  } catch (error) {
    if (error instanceof StoreTooNewError) {
      return { kind: 'refused', variable: 'DATABASE_URL', problem: error.message };
    }
    return {
      kind: 'refused',
      variable: 'DATABASE_URL',
      problem: `${where} could not be opened (${withoutPassword(describe(error), options.databaseUrl)}); check that the server is reachable, the database exists and the user may create tables in it`,
    };
  }
}

/**
 * pg's messages name the host, user or database, not the password; this makes sure of it, whatever a
 * driver or a URL parser puts in its message.
 */
function withoutPassword(message: string, databaseUrl: string): string {
  let secrets: string[] = [databaseUrl];
  try {
    const password = new URL(databaseUrl).password;
    if (password !== '') {
      secrets = [databaseUrl, password, decodeURIComponent(password)];
    }
  } catch {
    // not a URL: only the whole text is hidden
  }
  return secrets.reduce((text, secret) => text.split(secret).join('(hidden)'), message);
}
