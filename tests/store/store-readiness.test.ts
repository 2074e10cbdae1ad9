import Database from 'better-sqlite3';
import pg from 'pg';
import { describe, expect, it } from 'vitest';
import { LATEST_SCHEMA_VERSION } from '../../src/store/migrations.js';
import { openWorkerStore } from '../../src/store/worker-store.js';
import { requireTestDatabaseUrl, STORE_KINDS, type StoreKind } from './support/store-kinds.js';
import { useStores } from './support/use-stores.js';
import { useTempDirs } from './support/temp-dir.js';
import { join } from 'node:path';

/** Moves the schema version recorded at `place` to `version`, as a restore or another release would. */
async function setSchemaVersionBehindTheStore(kind: StoreKind, place: string, version: number): Promise<void> {
  if (kind.name === 'SQLite') {
    const db = new Database(place);
    try {
      db.pragma(`user_version = ${String(version)}`);
    } finally {
      db.close();
    }
    return;
  }
  const client = new pg.Client({ connectionString: requireTestDatabaseUrl() });
  await client.connect();
  try {
    // `place` is a schema name the harness made (letters, digits, underscores).
    await client.query(`INSERT INTO ${place}.schema_migration (version, description) VALUES ($1, 'from a newer release')`, [
      version,
    ]);
  } finally {
    await client.end();
  }
}

describe.each(STORE_KINDS)('readiness of the $name store', (kind) => {
  const stores = useStores(kind);

  it('reports the schema current on a store it has just migrated', async () => {
    const store = await stores.fresh();
    expect(await store.readiness()).toStrictEqual({
      schemaVersion: LATEST_SCHEMA_VERSION,
      latestSchemaVersion: LATEST_SCHEMA_VERSION,
    });
  });

  it('reads the version from the database on every call, so a schema changed under it shows', async () => {
    const place = await stores.place();
    const store = await stores.at(place);
    await setSchemaVersionBehindTheStore(kind, place, LATEST_SCHEMA_VERSION + 1);
    const readiness = await store.readiness();
    expect(readiness.schemaVersion).toBe(LATEST_SCHEMA_VERSION + 1);
    expect(readiness.latestSchemaVersion).toBe(LATEST_SCHEMA_VERSION);
  });

  it('rejects once the store is closed', async () => {
    const store = await kind.openAt(await stores.place());
    await store.close();
    await expect(store.readiness()).rejects.toThrow(/closed/);
  });
});

describe('readiness through the store thread', () => {
  const tempDir = useTempDirs();

  it('answers across the thread as the store on it does', async () => {
    const file = join(tempDir(), 'audit.sqlite');
    const store = openWorkerStore({ file });
    try {
      expect(await store.readiness()).toStrictEqual({
        schemaVersion: LATEST_SCHEMA_VERSION,
        latestSchemaVersion: LATEST_SCHEMA_VERSION,
      });
    } finally {
      await store.close();
    }
  });
});
