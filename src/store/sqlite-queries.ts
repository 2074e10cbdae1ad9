import type Database from 'better-sqlite3';
import {
  checkPaging,
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

export interface StoreQueries {
  listAdvisories(query: AdvisoryQuery): AdvisoryPage;
  getAdvisory(cardUuid: string): AdvisoryWithFeedback | undefined;
  listUnmatchedFeedback(limit: number, offset: number): FeedbackPage;
  summarise(query: SummaryQuery): readonly RuleUnitSummary[];
  facets(): { readonly units: readonly string[]; readonly ruleIds: readonly string[] };
  isEmpty(): boolean;
}

/**
 * The advisory list's statements for the filters a query sets: the WHERE clause (the key a shape is
 * kept under), the page and the count. Each filter combination is its own statement, so each runs on
 * a plan that can use the index of the columns it filters (migrations.ts: the window index holds every
 * filtered column but the patient after the issue time; unit, rule and patient have their own).
 */
export function advisoryListSql(query: AdvisoryQuery): { where: string; page: string; count: string } {
  const conditions = ['issued_at_ms >= @from', 'issued_at_ms < @to'];
  if (query.unit !== undefined) {
    conditions.push('unit = @unit');
  }
  if (query.ruleId !== undefined) {
    conditions.push('rule_id = @ruleId');
  }
  if (query.indicator !== undefined) {
    conditions.push('indicator = @indicator');
  }
  if (query.outcome === 'none') {
    conditions.push('latest_outcome IS NULL');
  } else if (query.outcome !== undefined) {
    conditions.push('latest_outcome = @outcome');
  }
  if (query.patientKey !== undefined) {
    conditions.push('patient_key = @patientKey');
  }
  const where = conditions.join(' AND ');
  return {
    where,
    page: `SELECT ${LIST_COLUMNS} FROM advisory WHERE ${where}
          ORDER BY issued_at_ms DESC, card_uuid DESC LIMIT @limit OFFSET @offset`,
    count: `SELECT count(*) AS n FROM advisory WHERE ${where}`,
  };
}

/** The summary's two statements: per rule and unit, the counts by latest outcome and the override reasons. */
export const SUMMARY_SQL = {
  counts: `SELECT rule_id, coalesce(unit, '') AS unit, count(*) AS fired,
        count(*) FILTER (WHERE latest_outcome = 'accepted') AS accepted,
        count(*) FILTER (WHERE latest_outcome = 'overridden') AS overridden,
        count(*) FILTER (WHERE latest_outcome IS NULL) AS none
      FROM advisory WHERE issued_at_ms >= @from AND issued_at_ms < @to
      GROUP BY rule_id, coalesce(unit, '') ORDER BY rule_id, unit`,
  reasons: `SELECT rule_id, coalesce(unit, '') AS unit, latest_override_reason_code AS code, count(*) AS n
      FROM advisory
      WHERE issued_at_ms >= @from AND issued_at_ms < @to
        AND latest_outcome = 'overridden' AND latest_override_reason_code IS NOT NULL
      GROUP BY rule_id, coalesce(unit, ''), latest_override_reason_code
      ORDER BY n DESC, code`,
} as const;

/** The units and rule ids on record, offered as filter choices. */
export const FACET_SQL = {
  units: 'SELECT DISTINCT unit FROM advisory WHERE unit IS NOT NULL ORDER BY unit',
  ruleIds: 'SELECT DISTINCT rule_id FROM advisory ORDER BY rule_id',
} as const;

/**
 * The read side of the SQLite store. Each filter combination of the advisory list gets its own
 * statement, prepared the first time it is used and kept (at most 2^6 × 2 shapes), so every query
 * runs on a plan that can use the index of the column it filters.
 */
export function prepareQueries(db: Database.Database): StoreQueries {
  // One read transaction around reads of several statements: they all see the same snapshot.
  const readTransaction = db.transaction((work: () => unknown) => work());
  function snapshot<T>(work: () => T): T {
    return readTransaction(work) as T;
  }
  const listShapes = new Map<string, { page: Database.Statement; count: Database.Statement }>();

  function listStatements(query: AdvisoryQuery): { page: Database.Statement; count: Database.Statement } {
    const sql = advisoryListSql(query);
    const cached = listShapes.get(sql.where);
    if (cached !== undefined) {
      return cached;
    }
    const prepared = { page: db.prepare(sql.page), count: db.prepare(sql.count) };
    listShapes.set(sql.where, prepared);
    return prepared;
  }

  const advisoryByUuid = db.prepare<[string], AdvisoryRow>('SELECT * FROM advisory WHERE card_uuid = ?');
  const feedbackOnCard = db.prepare<[string], FeedbackRow>(
    `SELECT * FROM feedback WHERE advisory_card_uuid = ?
      ORDER BY outcome_at_ms, received_at_ms, seq`,
  );
  const unmatchedPage = db.prepare<[number, number], FeedbackRow>(
    `SELECT * FROM feedback WHERE advisory_card_uuid IS NULL
      ORDER BY received_at_ms DESC, seq DESC LIMIT ? OFFSET ?`,
  );
  const unmatchedCount = db.prepare<[], { n: number }>(
    'SELECT count(*) AS n FROM feedback WHERE advisory_card_uuid IS NULL',
  );
  const summaryCounts = db.prepare<
    { from: number; to: number },
    { rule_id: string; unit: string; fired: number; accepted: number; overridden: number; none: number }
  >(
    SUMMARY_SQL.counts,
  );
  const summaryReasons = db.prepare<
    { from: number; to: number },
    { rule_id: string; unit: string; code: string; n: number }
  >(
    SUMMARY_SQL.reasons,
  );
  const units = db.prepare<[], { unit: string }>(FACET_SQL.units);
  const ruleIds = db.prepare<[], { rule_id: string }>(FACET_SQL.ruleIds);
  const everRecorded = db.prepare<[], { one: number }>(
    "SELECT 1 AS one FROM store_meta WHERE key = 'first_advisory_recorded'",
  );

  return {
    listAdvisories(query) {
      checkPaging(query.limit, query.offset);
      const statements = listStatements(query);
      const params = {
        ...windowMs(query),
        ...(query.unit === undefined ? {} : { unit: query.unit }),
        ...(query.ruleId === undefined ? {} : { ruleId: query.ruleId }),
        ...(query.indicator === undefined ? {} : { indicator: query.indicator }),
        ...(query.outcome === undefined || query.outcome === 'none' ? {} : { outcome: query.outcome }),
        ...(query.patientKey === undefined ? {} : { patientKey: query.patientKey }),
      };
      return snapshot((): AdvisoryPage => {
        const rows = statements.page.all({ ...params, limit: query.limit, offset: query.offset }) as AdvisoryListRow[];
        const total = (statements.count.get(params) as { n: number }).n;
        return { items: rows.map(rowToListItem), total };
      });
    },

    getAdvisory(cardUuid) {
      return snapshot((): AdvisoryWithFeedback | undefined => {
        const row = advisoryByUuid.get(cardUuid);
        if (row === undefined) {
          return undefined;
        }
        return { ...rowToAdvisory(row), feedback: feedbackOnCard.all(cardUuid).map(rowToFeedback) };
      });
    },

    listUnmatchedFeedback(limit, offset) {
      checkPaging(limit, offset);
      return snapshot(
        (): FeedbackPage => ({
          items: unmatchedPage.all(limit, offset).map(rowToFeedback),
          total: unmatchedCount.get()?.n ?? 0,
        }),
      );
    },

    summarise(query) {
      const window = windowMs(query);
      const { counts, reasonRows } = snapshot(() => ({
        counts: summaryCounts.all(window),
        reasonRows: summaryReasons.all(window),
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

    facets() {
      return { units: units.all().map((r) => r.unit), ruleIds: ruleIds.all().map((r) => r.rule_id) };
    },

    isEmpty() {
      return everRecorded.get() === undefined;
    },
  };
}
