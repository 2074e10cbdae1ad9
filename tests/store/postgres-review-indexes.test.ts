import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { migratePostgres, POSTGRES_MIGRATIONS } from '../../src/store/postgres-migrations.js';
import { postgresQueries, type PostgresQueries } from '../../src/store/postgres-queries.js';
import { advisoryToRow } from '../../src/store/sqlite-rows.js';
import {
  REVIEW_CARD_COUNT,
  reviewListQueries,
  reviewOutcome,
  reviewRecords,
  reviewSummaryQueries,
} from './support/review-seed.js';
import { POSTGRES_SKIP_REASON, requireTestDatabaseUrl } from './support/store-kinds.js';

/** As review-indexes.test.ts, on PostgreSQL: schema step 3 leaves every review answer as it was. */
describe('the PostgreSQL advisory indexes of schema step 3', () => {
  const cleanups: (() => Promise<void>)[] = [];

  beforeEach((context) => {
    context.skip(POSTGRES_SKIP_REASON !== undefined, POSTGRES_SKIP_REASON);
  });
  afterEach(async () => {
    for (const cleanup of cleanups.splice(0).reverse()) {
      await cleanup();
    }
  });

  async function schemaAtVersion2(): Promise<{ schema: string; pool: pg.Pool; client: pg.PoolClient }> {
    const schema = `review_index_test_${randomBytes(6).toString('hex')}`;
    const pool = new pg.Pool({ connectionString: requireTestDatabaseUrl(), options: `-c search_path=${schema}`, max: 3 });
    cleanups.push(async () => {
      await pool.query(`DROP SCHEMA IF EXISTS ${schema} CASCADE`);
      await pool.end();
    });
    const client = await pool.connect();
    cleanups.push(() => {
      client.release();
      return Promise.resolve();
    });
    await migratePostgres(client, 'test', { schema, migrations: POSTGRES_MIGRATIONS.filter((m) => m.version <= 2) });
    for (const [i, record] of reviewRecords().entries()) {
      const row = advisoryToRow(record);
      const columns = Object.keys(row);
      await client.query(
        `INSERT INTO advisory (${columns.join(', ')}) VALUES (${columns.map((_c, c) => `$${String(c + 1)}`).join(', ')})`,
        Object.values(row),
      );
      const outcome = reviewOutcome(i + 1);
      if (outcome !== undefined) {
        await client.query(
          `UPDATE advisory SET latest_outcome = $1, latest_override_reason_code = $2, feedback_count = 1
            WHERE card_uuid = $3`,
          [outcome.outcome, outcome.reasonCode, record.cardUuid],
        );
      }
    }
    return { schema, pool, client };
  }

  async function answers(queries: PostgresQueries): Promise<unknown> {
    const lists = [];
    for (const query of reviewListQueries()) {
      lists.push(await queries.listAdvisories(query));
    }
    const summaries = [];
    for (const query of reviewSummaryQueries()) {
      summaries.push(await queries.summarise(query));
    }
    return { lists, summaries, facets: await queries.facets() };
  }

  async function advisoryIndexes(client: pg.PoolClient, schema: string): Promise<string[]> {
    const result = await client.query<{ name: string }>(
      "SELECT indexname AS name FROM pg_indexes WHERE schemaname = $1 AND tablename = 'advisory' ORDER BY 1",
      [schema],
    );
    return result.rows.map((row) => row.name);
  }

  it('leave every review answer on a version 2 schema with advisories in it as it was, with the same indexes as SQLite', async () => {
    const { schema, pool, client } = await schemaAtVersion2();
    const queries = postgresQueries(pool);
    const before = await answers(queries);
    expect(await advisoryIndexes(client, schema)).toStrictEqual([
      'advisory_indicator',
      'advisory_issued',
      'advisory_outcome',
      'advisory_patient',
      'advisory_pkey',
      'advisory_rule',
      'advisory_unit',
    ]);
    await migratePostgres(client, 'test', { schema });
    expect(await answers(queries)).toStrictEqual(before);
    expect(await advisoryIndexes(client, schema)).toStrictEqual([
      'advisory_patient',
      'advisory_pkey',
      'advisory_rule',
      'advisory_unit',
      'advisory_window',
    ]);
    expect((await client.query('SELECT count(*)::int AS n FROM advisory')).rows).toStrictEqual([{ n: REVIEW_CARD_COUNT }]);
    const lists = (before as { lists: { total: number }[] }).lists;
    expect(lists.filter((page) => page.total > 0).length).toBeGreaterThan(lists.length / 4);
  });
});
