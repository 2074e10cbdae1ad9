import { join } from 'node:path';
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { LATEST_SCHEMA_VERSION, MIGRATIONS, migrate, StoreTooNewError } from '../../src/store/migrations.js';
import { openSqliteStore } from '../../src/store/sqlite-store.js';
import { advisory, card } from './support/fixtures.js';
import { useTempDirs } from './support/temp-dir.js';

function tables(db: Database.Database): string[] {
  return db
    .prepare<[], { name: string }>("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name")
    .all()
    .map((row) => row.name);
}

describe('migrate', () => {
  const tempDir = useTempDirs();

  it('brings an empty database to the latest version and lists each step applied', () => {
    const db = new Database(':memory:');
    expect(migrate(db, ':memory:')).toBe(LATEST_SCHEMA_VERSION);
    expect(tables(db)).toStrictEqual(['advisory', 'feedback', 'replay_id', 'schema_migration', 'store_meta']);
    expect(
      db.prepare<[], { version: number; description: string }>('SELECT version, description FROM schema_migration').all(),
    ).toStrictEqual(MIGRATIONS.map((m) => ({ version: m.version, description: m.description })));
    db.close();
  });

  it('numbers its steps 1, 2, 3… with no gap or repeat', () => {
    expect(MIGRATIONS.map((m) => m.version)).toStrictEqual(MIGRATIONS.map((_m, index) => index + 1));
  });

  it('applies only the steps a database lacks, each once', () => {
    const db = new Database(':memory:');
    const first = MIGRATIONS.filter((m) => m.version === 1);
    migrate(db, ':memory:', first);
    db.prepare("INSERT INTO store_meta (key, value) VALUES ('kept', 'yes')").run();
    const next = [
      ...MIGRATIONS,
      { version: LATEST_SCHEMA_VERSION + 1, description: 'a later step', sql: 'CREATE TABLE later_step (x INTEGER);' },
    ];
    expect(migrate(db, ':memory:', next)).toBe(LATEST_SCHEMA_VERSION + 1);
    expect(migrate(db, ':memory:', next)).toBe(LATEST_SCHEMA_VERSION + 1);
    expect(tables(db)).toContain('later_step');
    expect(db.prepare('SELECT value FROM store_meta WHERE key = ?').pluck().get('kept')).toBe('yes');
    db.close();
  });

  it('leaves the version unchanged when a step fails half way', () => {
    const db = new Database(':memory:');
    migrate(db, ':memory:');
    const broken = [
      ...MIGRATIONS,
      { version: LATEST_SCHEMA_VERSION + 1, description: 'broken', sql: 'CREATE TABLE half (x); SELECT * FROM missing;' },
    ];
    expect(() => migrate(db, ':memory:', broken)).toThrow(/missing/);
    expect(db.pragma('user_version', { simple: true })).toBe(LATEST_SCHEMA_VERSION);
    expect(tables(db)).not.toContain('half');
    db.close();
  });

  it('refuses a database newer than the code, naming both versions, and changes nothing', async () => {
    const file = join(tempDir(), 'audit.sqlite');
    const store = openSqliteStore({ file });
    await store.recordAdvisories([advisory(1)]);
    await store.close();
    const raw = new Database(file);
    raw.pragma(`user_version = ${String(LATEST_SCHEMA_VERSION + 1)}`);
    raw.close();

    let refusal: unknown;
    try {
      openSqliteStore({ file });
    } catch (error) {
      refusal = error;
    }
    expect(refusal).toBeInstanceOf(StoreTooNewError);
    expect((refusal as StoreTooNewError).message).toContain(`schema version ${String(LATEST_SCHEMA_VERSION + 1)}`);
    expect((refusal as StoreTooNewError).message).toContain(`versions up to ${String(LATEST_SCHEMA_VERSION)}`);
    expect((refusal as StoreTooNewError).message).toContain('run a newer release');

    const check = new Database(file);
    expect(check.pragma('user_version', { simple: true })).toBe(LATEST_SCHEMA_VERSION + 1);
    expect(check.prepare('SELECT card_uuid FROM advisory').pluck().all()).toStrictEqual([card(1)]);
    check.close();
  });

  it('keeps the data when the file is opened again at the same version', async () => {
    const file = join(tempDir(), 'audit.sqlite');
    const first = openSqliteStore({ file });
    await first.recordAdvisories([advisory(1)]);
    await first.close();
    const again = openSqliteStore({ file });
    expect((await again.getAdvisory(card(1)))?.ruleId).toBe('spo2-above-target');
    await again.close();
  });
});
