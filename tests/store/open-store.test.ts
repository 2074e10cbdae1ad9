import { statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { LATEST_SCHEMA_VERSION } from '../../src/store/migrations.js';
import { openStore, STORE_FILE_NAME } from '../../src/store/open-store.js';
import { advisory, card } from './support/fixtures.js';
import { useTempDirs } from './support/temp-dir.js';

describe('openStore', () => {
  const tempDir = useTempDirs();

  it('creates an owner-only data directory and the store in it on first start', async () => {
    const dataDir = join(tempDir(), 'data', 'nested');
    const result = openStore({ dataDir });
    expect(result.kind).toBe('opened');
    if (result.kind !== 'opened') {
      return;
    }
    expect(statSync(dataDir).mode & 0o777).toBe(0o700);
    expect(result.file).toBe(join(dataDir, STORE_FILE_NAME));
    await result.store.recordAdvisories([advisory(1)]);
    // the audit trail is for this service only: owner-only, like its directory
    for (const suffix of ['', '-wal']) {
      expect(statSync(`${result.file}${suffix}`).mode & 0o777).toBe(0o600);
    }
    await result.store.close();

    const again = openStore({ dataDir });
    expect(again.kind).toBe('opened');
    if (again.kind === 'opened') {
      expect((await again.store.getAdvisory(card(1)))?.cardUuid).toBe(card(1));
      await again.store.close();
    }
  });

  it('refuses, without throwing, a store written by a newer release', async () => {
    const dataDir = tempDir();
    const first = openStore({ dataDir });
    if (first.kind === 'opened') {
      await first.store.close();
    }
    const raw = new Database(join(dataDir, STORE_FILE_NAME));
    raw.pragma(`user_version = ${String(LATEST_SCHEMA_VERSION + 5)}`);
    raw.close();

    const result = openStore({ dataDir });
    expect(result.kind).toBe('refused');
    expect(result.kind === 'refused' ? result.problem : '').toMatch(/newer release/);
  });

  it('refuses a data directory that cannot be created', () => {
    const blocker = join(tempDir(), 'a-file');
    writeFileSync(blocker, 'not a directory');
    const result = openStore({ dataDir: join(blocker, 'data') });
    expect(result.kind).toBe('refused');
    expect(result.kind === 'refused' ? result.problem : '').toMatch(/OXYGEN_CHECKER_DATA_DIR/);
  });

  it('refuses a store file that is not a database', () => {
    const dataDir = tempDir();
    writeFileSync(join(dataDir, STORE_FILE_NAME), 'Larkspur Bay General Hospital ward list, not SQLite '.repeat(100));
    const result = openStore({ dataDir });
    expect(result.kind).toBe('refused');
    expect(result.kind === 'refused' ? result.problem : '').toMatch(/could not be opened/);
  });
});
