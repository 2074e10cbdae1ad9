import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { MIGRATIONS, migrate } from '../../src/store/migrations.js';
import { advisoryListSql, FACET_SQL, prepareQueries, SUMMARY_SQL, type StoreQueries } from '../../src/store/sqlite-queries.js';
import { advisoryToRow, windowMs } from '../../src/store/sqlite-rows.js';
import {
  REVIEW_CARD_COUNT,
  reviewListQueries,
  reviewOutcome,
  reviewRecords,
  reviewSummaryQueries,
} from './support/review-seed.js';

/**
 * The advisory table's indexes are written on every card a hook call records, so schema step 3 keeps
 * fewer of them. These tests hold the review side to what it answered before (same answers on a
 * database upgraded with data in it) and to plans that read the table through an index.
 */

function seededAt(version: number): Database.Database {
  const db = new Database(':memory:');
  migrate(db, ':memory:', MIGRATIONS.filter((m) => m.version <= version));
  const insert = db.prepare(
    `INSERT INTO advisory (card_uuid, service_id, hook, hook_instance, client_iss, client_tenant, rule_id,
        rule_version, indicator, summary, detail, workings, suggestion_uuids_json, key_numbers_json,
        series_json, policy_id, policy_version, policy_content_hash, unit, issued_at, issued_at_ms, patient_key)
      VALUES (@card_uuid, @service_id, @hook, @hook_instance, @client_iss, @client_tenant, @rule_id,
        @rule_version, @indicator, @summary, @detail, @workings, @suggestion_uuids_json, @key_numbers_json,
        @series_json, @policy_id, @policy_version, @policy_content_hash, @unit, @issued_at, @issued_at_ms,
        @patient_key)`,
  );
  // The latest outcome and reason as the feedback writer leaves them (sqlite-feedback.ts).
  const setOutcome = db.prepare(
    `UPDATE advisory SET latest_outcome = ?, latest_override_reason_code = ?, feedback_count = 1
      WHERE card_uuid = ?`,
  );
  reviewRecords().forEach((record, i) => {
    insert.run(advisoryToRow(record));
    const outcome = reviewOutcome(i + 1);
    if (outcome !== undefined) {
      setOutcome.run(outcome.outcome, outcome.reasonCode, record.cardUuid);
    }
  });
  return db;
}

function answers(queries: StoreQueries): unknown {
  return {
    lists: reviewListQueries().map((query) => queries.listAdvisories(query)),
    summaries: reviewSummaryQueries().map((query) => queries.summarise(query)),
    facets: queries.facets(),
  };
}

function advisoryIndexes(db: Database.Database): string[] {
  return db
    .prepare<[], string>("SELECT name FROM sqlite_master WHERE type = 'index' AND tbl_name = 'advisory' ORDER BY name")
    .pluck()
    .all();
}

describe('the advisory indexes of schema step 3', () => {
  it('leave every review answer on a version 2 database with advisories in it as it was before the upgrade', () => {
    const db = seededAt(2);
    const before = answers(prepareQueries(db));
    migrate(db, ':memory:');
    const after = answers(prepareQueries(db));
    expect(after).toStrictEqual(before);
    expect(db.prepare('SELECT count(*) FROM advisory').pluck().get()).toBe(REVIEW_CARD_COUNT);
    // The seed spreads over the filters: a check that every list came back empty would prove nothing.
    const lists = (before as { lists: { total: number }[] }).lists;
    expect(lists.filter((page) => page.total > 0).length).toBeGreaterThan(lists.length / 4);
    db.close();
  });

  it('replace the issue-time, indicator and outcome indexes with one window index and keep unit, rule and patient', () => {
    const db = seededAt(2);
    expect(advisoryIndexes(db)).toStrictEqual([
      'advisory_indicator',
      'advisory_issued',
      'advisory_outcome',
      'advisory_patient',
      'advisory_rule',
      'advisory_unit',
      'sqlite_autoindex_advisory_1',
    ]);
    migrate(db, ':memory:');
    expect(advisoryIndexes(db)).toStrictEqual([
      'advisory_patient',
      'advisory_rule',
      'advisory_unit',
      'advisory_window',
      'sqlite_autoindex_advisory_1',
    ]);
    db.close();
  });

  it('let every list, count, summary and facet statement read the advisory table through an index, never a table scan', () => {
    const db = seededAt(MIGRATIONS.length);
    const planOf = (sql: string, params: Record<string, unknown>): string[] =>
      db
        .prepare<Record<string, unknown>, { detail: string }>(`EXPLAIN QUERY PLAN ${sql}`)
        .all(params)
        .map((row) => row.detail)
        .filter((detail) => /\badvisory\b/.test(detail));
    const statements: { sql: string; params: Record<string, unknown> }[] = [];
    for (const query of reviewListQueries()) {
      const sql = advisoryListSql(query);
      const params = { ...windowMs(query), ...query };
      statements.push({ sql: sql.page, params }, { sql: sql.count, params });
    }
    for (const query of reviewSummaryQueries()) {
      statements.push({ sql: SUMMARY_SQL.counts, params: windowMs(query) }, { sql: SUMMARY_SQL.reasons, params: windowMs(query) });
    }
    statements.push({ sql: FACET_SQL.units, params: {} }, { sql: FACET_SQL.ruleIds, params: {} });
    for (const { sql, params } of statements) {
      const plan = planOf(sql, params);
      expect(plan.length, sql).toBeGreaterThan(0);
      for (const step of plan) {
        // A SEARCH through an index, or for the facets a walk of a whole index that holds the column.
        expect(step, sql).toMatch(/^(SEARCH advisory USING (COVERING )?INDEX|SCAN advisory USING COVERING INDEX) /);
      }
    }
    db.close();
  });
});
