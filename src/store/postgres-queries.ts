import type pg from 'pg';
import { inTransaction } from './postgres-pool.js';
import {
  checkPaging,
  FEEDBACK_COLUMNS,
  LIST_COLUMNS,
  windowMs,
  rowToAdvisory,
  rowToFeedback,
  rowToListItem,
  type AdvisoryListRow,
  type AdvisoryRow,
  type FeedbackRow,
} from './sqlite-rows.js';
import type {
  AdvisoryPage,
  AdvisoryQuery,
  AdvisoryWithFeedback,
  FeedbackPage,
  RuleUnitSummary,
  SummaryQuery,
} from './store.js';

const ADVISORY_COLUMNS = `card_uuid, service_id, hook, hook_instance, client_iss, client_tenant, rule_id,
  rule_version, indicator, summary, detail, workings, suggestion_uuids_json, key_numbers_json,
  series_json, policy_id, policy_version, policy_content_hash, unit, issued_at, issued_at_ms, patient_key`;

/** Reads of several statements see one snapshot, and never take a write lock. */
const SNAPSHOT = 'BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY';

export interface PostgresQueries {
  listAdvisories(query: AdvisoryQuery): Promise<AdvisoryPage>;
  getAdvisory(cardUuid: string): Promise<AdvisoryWithFeedback | undefined>;
  listUnmatchedFeedback(limit: number, offset: number): Promise<FeedbackPage>;
  summarise(query: SummaryQuery): Promise<readonly RuleUnitSummary[]>;
  facets(): Promise<{ readonly units: readonly string[]; readonly ruleIds: readonly string[] }>;
  isEmpty(): Promise<boolean>;
}

/** The advisory list's WHERE clause and its parameters, numbered from $1. */
function listFilter(query: AdvisoryQuery): { where: string; params: unknown[] } {
  const window = windowMs(query);
  const params: unknown[] = [window.from, window.to];
  const conditions = ['issued_at_ms >= $1', 'issued_at_ms < $2'];
  const add = (column: string, value: unknown): void => {
    params.push(value);
    conditions.push(`${column} = $${String(params.length)}`);
  };
  if (query.unit !== undefined) {
    add('unit', query.unit);
  }
  if (query.ruleId !== undefined) {
    add('rule_id', query.ruleId);
  }
  if (query.indicator !== undefined) {
    add('indicator', query.indicator);
  }
  if (query.outcome === 'none') {
    conditions.push('latest_outcome IS NULL');
  } else if (query.outcome !== undefined) {
    add('latest_outcome', query.outcome);
  }
  if (query.patientKey !== undefined) {
    add('patient_key', query.patientKey);
  }
  return { where: conditions.join(' AND '), params };
}

/**
 * The read side of the PostgreSQL store: the same answers as sqlite-queries.ts. Text is ordered by
 * its bytes (`COLLATE "C"`), as SQLite orders it, whatever collation the database was created with,
 * so the review pages list units, rules and ties in the same order on both stores.
 */
export function postgresQueries(pool: pg.Pool): PostgresQueries {
  const snapshot = <T>(work: (client: pg.PoolClient) => Promise<T>): Promise<T> => inTransaction(pool, work, SNAPSHOT);

  return {
    async listAdvisories(query) {
      checkPaging(query.limit, query.offset);
      const { where, params } = listFilter(query);
      const n = params.length;
      return snapshot(async (client): Promise<AdvisoryPage> => {
        const rows = await client.query<AdvisoryListRow>(
          `SELECT ${LIST_COLUMNS} FROM advisory WHERE ${where}
            ORDER BY issued_at_ms DESC, card_uuid COLLATE "C" DESC
            LIMIT $${String(n + 1)} OFFSET $${String(n + 2)}`,
          [...params, query.limit, query.offset],
        );
        const total = await client.query<{ n: number }>(`SELECT count(*) AS n FROM advisory WHERE ${where}`, params);
        return { items: rows.rows.map(rowToListItem), total: total.rows[0]?.n ?? 0 };
      });
    },

    async getAdvisory(cardUuid) {
      return snapshot(async (client): Promise<AdvisoryWithFeedback | undefined> => {
        const row = (
          await client.query<AdvisoryRow>(`SELECT ${ADVISORY_COLUMNS} FROM advisory WHERE card_uuid = $1`, [cardUuid])
        ).rows[0];
        if (row === undefined) {
          return undefined;
        }
        const feedback = await client.query<FeedbackRow>(
          `SELECT ${FEEDBACK_COLUMNS} FROM feedback WHERE advisory_card_uuid = $1
            ORDER BY outcome_at_ms, received_at_ms, seq`,
          [cardUuid],
        );
        return { ...rowToAdvisory(row), feedback: feedback.rows.map(rowToFeedback) };
      });
    },

    async listUnmatchedFeedback(limit, offset) {
      checkPaging(limit, offset);
      return snapshot(async (client): Promise<FeedbackPage> => {
        const page = await client.query<FeedbackRow>(
          `SELECT ${FEEDBACK_COLUMNS} FROM feedback WHERE advisory_card_uuid IS NULL
            ORDER BY received_at_ms DESC, seq DESC LIMIT $1 OFFSET $2`,
          [limit, offset],
        );
        const total = await client.query<{ n: number }>(
          'SELECT count(*) AS n FROM feedback WHERE advisory_card_uuid IS NULL',
        );
        return { items: page.rows.map(rowToFeedback), total: total.rows[0]?.n ?? 0 };
      });
    },

    async summarise(query) {
      const window = windowMs(query);
      const { counts, reasonRows } = await snapshot(async (client) => ({
        counts: (
          await client.query<{
            rule_id: string;
            unit: string;
            fired: number;
            accepted: number;
            overridden: number;
            none: number;
          }>(
            `SELECT rule_id, coalesce(unit, '') AS unit, count(*) AS fired,
                count(*) FILTER (WHERE latest_outcome = 'accepted') AS accepted,
                count(*) FILTER (WHERE latest_outcome = 'overridden') AS overridden,
                count(*) FILTER (WHERE latest_outcome IS NULL) AS none
              FROM advisory WHERE issued_at_ms >= $1 AND issued_at_ms < $2
              GROUP BY rule_id, coalesce(unit, '')
              ORDER BY rule_id COLLATE "C", coalesce(unit, '') COLLATE "C"`,
            [window.from, window.to],
          )
        ).rows,
        reasonRows: (
          await client.query<{ rule_id: string; unit: string; code: string; n: number }>(
            `SELECT rule_id, coalesce(unit, '') AS unit, latest_override_reason_code AS code, count(*) AS n
              FROM advisory
              WHERE issued_at_ms >= $1 AND issued_at_ms < $2
                AND latest_outcome = 'overridden' AND latest_override_reason_code IS NOT NULL
              GROUP BY rule_id, coalesce(unit, ''), latest_override_reason_code
              ORDER BY count(*) DESC, latest_override_reason_code COLLATE "C"`,
            [window.from, window.to],
          )
        ).rows,
      }));
      const reasons = new Map<string, { code: string; count: number }[]>();
      for (const row of reasonRows) {
        const key = JSON.stringify([row.rule_id, row.unit]);
        const list = reasons.get(key) ?? [];
        list.push({ code: row.code, count: row.n });
        reasons.set(key, list);
      }
      return counts.map((row) => ({
        ruleId: row.rule_id,
        unit: row.unit,
        fired: row.fired,
        accepted: row.accepted,
        overridden: row.overridden,
        noFeedback: row.none,
        overrideReasons: reasons.get(JSON.stringify([row.rule_id, row.unit])) ?? [],
      }));
    },

    async facets() {
      return snapshot(async (client) => ({
        units: (
          await client.query<{ unit: string }>(
            'SELECT DISTINCT unit COLLATE "C" AS unit FROM advisory WHERE unit IS NOT NULL ORDER BY 1',
          )
        ).rows.map((r) => r.unit),
        ruleIds: (
          await client.query<{ rule_id: string }>(
            'SELECT DISTINCT rule_id COLLATE "C" AS rule_id FROM advisory ORDER BY 1',
          )
        ).rows.map((r) => r.rule_id),
      }));
    },

    async isEmpty() {
      const found = await pool.query("SELECT 1 FROM store_meta WHERE key = 'first_advisory_recorded'");
      return found.rowCount === 0;
    },
  };
}
