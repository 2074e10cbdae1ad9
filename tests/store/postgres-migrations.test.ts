import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { afterAll, afterEach, beforeEach, describe, expect, it } from 'vitest';
import { LATEST_SCHEMA_VERSION, MIGRATIONS, StoreTooNewError } from '../../src/store/migrations.js';
import { migratePostgres, POSTGRES_MIGRATIONS } from '../../src/store/postgres-migrations.js';
import { openPostgresStore } from '../../src/store/postgres-store.js';
import { advisory, card } from './support/fixtures.js';
import { POSTGRES_SKIP_REASON, requireTestDatabaseUrl } from './support/store-kinds.js';

describe('the PostgreSQL schema steps', () => {
  it('are the SQLite steps one for one: same versions, same descriptions, so one version means one schema', () => {
    expect(POSTGRES_MIGRATIONS.map((m) => [m.version, m.description])).toStrictEqual(
      MIGRATIONS.map((m) => [m.version, m.description]),
    );
  });
});

describe('migratePostgres', () => {
  const schemas: string[] = [];
  const clients: pg.Client[] = [];
  let admin: pg.Pool | undefined;

  beforeEach((context) => {
    context.skip(POSTGRES_SKIP_REASON !== undefined, POSTGRES_SKIP_REASON);
  });
  afterEach(async () => {
    for (const client of clients.splice(0)) {
      await client.end();
    }
    for (const schema of schemas.splice(0)) {
      await admin?.query(`DROP SCHEMA IF EXISTS ${schema} CASCADE`);
    }
  });
  afterAll(async () => {
    await admin?.end();
  });

  function newSchema(): string {
    const schema = `migrate_test_${randomBytes(6).toString('hex')}`;
    schemas.push(schema);
    admin ??= new pg.Pool({ connectionString: requireTestDatabaseUrl(), max: 2 });
    return schema;
  }

  async function connect(schema: string): Promise<pg.Client> {
    const client = new pg.Client({ connectionString: requireTestDatabaseUrl(), options: `-c search_path=${schema}` });
    clients.push(client);
    await client.connect();
    return client;
  }

  async function tables(client: pg.Client, schema: string): Promise<string[]> {
    const result = await client.query<{ name: string }>(
      'SELECT table_name AS name FROM information_schema.tables WHERE table_schema = $1 ORDER BY 1',
      [schema],
    );
    return result.rows.map((row) => row.name);
  }

  it('brings an empty schema to the latest version with the same tables as SQLite, each step listed', async () => {
    const schema = newSchema();
    const client = await connect(schema);
    expect(await migratePostgres(client, 'test', { schema })).toBe(LATEST_SCHEMA_VERSION);
    expect(await tables(client, schema)).toStrictEqual([
      'advisory',
      'feedback',
      'replay_client',
      'replay_id',
      'schema_migration',
      'store_meta',
    ]);
    const steps = await client.query<{ version: number; description: string }>(
      'SELECT version, description FROM schema_migration ORDER BY version',
    );
    expect(steps.rows).toStrictEqual(MIGRATIONS.map((m) => ({ version: m.version, description: m.description })));
  });

  it('ends with one schema and no error when several instances migrate one new schema at once', async () => {
    const schema = newSchema();
    const migrators = await Promise.all([1, 2, 3, 4].map(() => connect(schema)));
    const versions = await Promise.all(migrators.map((client) => migratePostgres(client, 'test', { schema })));
    expect(versions).toStrictEqual([4, 4, 4, 4].map(() => LATEST_SCHEMA_VERSION));
    const [first] = migrators;
    if (first === undefined) {
      throw new Error('no migrator');
    }
    // each step applied once: a second apply of step 1 would have failed on CREATE TABLE advisory
    const steps = await first.query<{ version: number }>('SELECT version FROM schema_migration ORDER BY version');
    expect(steps.rows.map((row) => row.version)).toStrictEqual(MIGRATIONS.map((m) => m.version));
    expect(await tables(first, schema)).toContain('replay_client');
  });

  it('ends with one schema when several stores open a new schema at once, and they share it', async () => {
    const schema = newSchema();
    const stores = await Promise.all(
      [1, 2, 3].map(() => openPostgresStore({ connectionString: requireTestDatabaseUrl(), schema })),
    );
    try {
      const [one, two] = stores;
      await one?.recordAdvisories([advisory(1)]);
      expect((await two?.getAdvisory(card(1)))?.cardUuid).toBe(card(1));
    } finally {
      for (const store of stores) {
        await store.close();
      }
    }
  });

  it('applies only the steps a schema lacks, each once, keeping what it holds', async () => {
    const schema = newSchema();
    const client = await connect(schema);
    await migratePostgres(client, 'test', { schema, migrations: POSTGRES_MIGRATIONS.filter((m) => m.version === 1) });
    await client.query("INSERT INTO store_meta (key, value) VALUES ('kept', 'yes')");
    await client.query("INSERT INTO replay_id (client_key, jti, expires_at_ms) VALUES ('c', 'a', 1), ('c', 'b', 2)");
    const next = [
      ...POSTGRES_MIGRATIONS,
      { version: LATEST_SCHEMA_VERSION + 1, description: 'a later step', sql: 'CREATE TABLE later_step (x integer)' },
    ];
    expect(await migratePostgres(client, 'test', { schema, migrations: next })).toBe(LATEST_SCHEMA_VERSION + 1);
    expect(await migratePostgres(client, 'test', { schema, migrations: next })).toBe(LATEST_SCHEMA_VERSION + 1);
    expect(await tables(client, schema)).toContain('later_step');
    expect((await client.query("SELECT value FROM store_meta WHERE key = 'kept'")).rows).toStrictEqual([
      { value: 'yes' },
    ]);
    // step 2 counted the ids a version 1 schema already held
    expect((await client.query('SELECT client_key, held FROM replay_client')).rows).toStrictEqual([
      { client_key: 'c', held: 2 },
    ]);
  });

  it('leaves the schema at the previous version when a step fails', async () => {
    const schema = newSchema();
    const client = await connect(schema);
    const broken = [
      ...POSTGRES_MIGRATIONS,
      { version: LATEST_SCHEMA_VERSION + 1, description: 'broken', sql: 'CREATE TABLE half (x integer); SELECT 1/0' },
    ];
    await expect(migratePostgres(client, 'test', { schema, migrations: broken })).rejects.toThrow(/division by zero/);
    expect(await migratePostgres(client, 'test', { schema })).toBe(LATEST_SCHEMA_VERSION);
    expect(await tables(client, schema)).not.toContain('half');
  });

  it('refuses a schema written by a newer release, naming both versions and changing nothing', async () => {
    const schema = newSchema();
    const client = await connect(schema);
    await migratePostgres(client, 'test', { schema });
    const newer = LATEST_SCHEMA_VERSION + 1;
    await client.query("INSERT INTO schema_migration (version, description) VALUES ($1, 'from the future')", [newer]);

    const refusal = migratePostgres(client, 'the test database', { schema });
    await expect(refusal).rejects.toBeInstanceOf(StoreTooNewError);
    await expect(refusal).rejects.toThrow(
      new RegExp(`the test database has schema version ${String(newer)}.*versions up to ${String(LATEST_SCHEMA_VERSION)}`),
    );
    await expect(openPostgresStore({ connectionString: requireTestDatabaseUrl(), schema })).rejects.toBeInstanceOf(StoreTooNewError);
    const steps = await client.query<{ version: number }>('SELECT version FROM schema_migration ORDER BY version');
    expect(steps.rows.map((row) => row.version)).toStrictEqual([...MIGRATIONS.map((m) => m.version), newer]);
  });
});
