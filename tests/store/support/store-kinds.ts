import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { openPostgresStore } from '../../../src/store/postgres-store.js';
import { openSqliteStore } from '../../../src/store/sqlite-store.js';
import type { Store } from '../../../src/store/store.js';

/**
 * The stores every behaviour test of the store runs on: the embedded SQLite store always, and the
 * PostgreSQL store when a test database is named. The variable is outside the service's
 * `OXYGEN_CHECKER_` prefix, which the service refuses at start for names it does not know
 * (src/config/unknown-variables.ts), so tests that start the service inherit it harmlessly.
 * `.ci/run` starts a throwaway cluster and sets it.
 */
export const TEST_DATABASE_URL_VARIABLE = 'TEST_DATABASE_URL';

export function testDatabaseUrl(): string | undefined {
  const url = process.env[TEST_DATABASE_URL_VARIABLE]?.trim();
  return url === undefined || url === '' ? undefined : url;
}

const MISSING = `${TEST_DATABASE_URL_VARIABLE} is not set, so the PostgreSQL store is not tested here; .ci/run starts a PostgreSQL cluster and sets it`;

/**
 * Why the PostgreSQL tests are skipped here, or undefined when they run. In CI (`CI` set) they are
 * never skipped: without a test database they fail, as the browser tests do without Chromium.
 */
export const POSTGRES_SKIP_REASON: string | undefined =
  testDatabaseUrl() === undefined && (process.env['CI'] ?? '') === '' ? MISSING : undefined;

/** The test database URL, or an error saying how to give one. */
export function requireTestDatabaseUrl(): string {
  const url = testDatabaseUrl();
  if (url === undefined) {
    throw new Error(MISSING);
  }
  return url;
}

/** A place a store lives: a database file, or a PostgreSQL schema. */
export interface StoreKind {
  readonly name: 'SQLite' | 'PostgreSQL';
  /** Why this kind's tests are skipped here, or undefined when they run. */
  readonly skipReason: string | undefined;
  /** A new, empty place. */
  readonly newPlace: () => Promise<string>;
  /** A store on `place`; several may be open on one place at once, as several instances would be. */
  readonly openAt: (place: string) => Promise<Store>;
  /** Removes the place and everything in it. */
  readonly dropPlace: (place: string) => Promise<void>;
  /** Lets go of what the kind holds between tests (a connection to drop schemas with). */
  readonly release: () => Promise<void>;
}

const sqlite: StoreKind = {
  name: 'SQLite',
  skipReason: undefined,
  newPlace: () => Promise.resolve(join(mkdtempSync(join(tmpdir(), 'oxygen-order-checker-store-')), 'audit.sqlite')),
  openAt: (place) => Promise.resolve(openSqliteStore({ file: place })),
  dropPlace: (place) => {
    rmSync(join(place, '..'), { recursive: true, force: true });
    return Promise.resolve();
  },
  release: () => Promise.resolve(),
};

/** Schemas this process made, for names unique across the test files that run at once. */
let schemasMade = 0;

function postgres(): StoreKind {
  let admin: pg.Pool | undefined;
  const adminPool = (): pg.Pool => {
    admin ??= new pg.Pool({ connectionString: requireTestDatabaseUrl(), max: 2 });
    return admin;
  };
  return {
    name: 'PostgreSQL',
    skipReason: POSTGRES_SKIP_REASON,
    newPlace: () => {
      schemasMade += 1;
      // The store creates the schema on first open (postgres-migrations.ts).
      return Promise.resolve(
        `store_test_${String(process.pid)}_${String(schemasMade)}_${randomBytes(4).toString('hex')}`,
      );
    },
    openAt: async (place) => openPostgresStore({ connectionString: requireTestDatabaseUrl(), schema: place }),
    dropPlace: async (place) => {
      await adminPool().query(`DROP SCHEMA IF EXISTS ${place} CASCADE`);
    },
    release: async () => {
      const ending = admin;
      admin = undefined;
      await ending?.end();
    },
  };
}

/** Both kinds, SQLite first; for `describe.each`. */
export const STORE_KINDS: readonly StoreKind[] = [sqlite, postgres()];

