import { describe, expect, it } from 'vitest';
import { createStorePool } from '../../src/store/postgres-pool.js';
import { POSTGRES_SKIP_REASON, requireTestDatabaseUrl } from './support/store-kinds.js';

describe('createStorePool', () => {
  it('commits with synchronous_commit on, even when the URL asks for it off', async (context) => {
    context.skip(POSTGRES_SKIP_REASON !== undefined, POSTGRES_SKIP_REASON);
    // PostgreSQL docs, "synchronous_commit": off may lose recent commits a client was told of
    const url = new URL(requireTestDatabaseUrl());
    url.searchParams.set('options', '-c synchronous_commit=off');
    const pool = createStorePool({ connectionString: url.href });
    try {
      const answers = await Promise.all(
        [1, 2, 3].map(async () => (await pool.query<{ synchronous_commit: string }>('SHOW synchronous_commit')).rows),
      );
      expect(answers).toStrictEqual([1, 2, 3].map(() => [{ synchronous_commit: 'on' }]));
    } finally {
      await pool.end();
    }
  });

  it('reads counts and epoch milliseconds (int8) as numbers', async (context) => {
    context.skip(POSTGRES_SKIP_REASON !== undefined, POSTGRES_SKIP_REASON);
    const pool = createStorePool({ connectionString: requireTestDatabaseUrl() });
    try {
      // ECMA-262, Time Values and Time Range: |t| <= 8.64e15 ms, inside 2^53
      const row = (await pool.query('SELECT 8640000000000000::bigint AS latest, count(*) AS n FROM (VALUES (1), (2)) v')).rows[0] as unknown;
      expect(row).toStrictEqual({ latest: 8_640_000_000_000_000, n: 2 });
    } finally {
      await pool.end();
    }
  });
});
