import { advisoryPath } from '../../review/advisory-list-page.js';
import { filterQueryString, parseListQuery, parseSummaryQuery } from '../../review/review-query.js';
import { overrideRate, sortReasons, totalsByRule } from '../../review/rule-summary.js';
import type { AdvisoryWithFeedback, FeedbackRecord } from '../../store/store.js';
import { AppError } from '../errors.js';
import type { RouteHandler } from '../respond.js';
import type { ReviewRouteDeps } from './review-deps.js';

/**
 * `GET /review/api/*`: the review pages' data as JSON (docs/api.md, "Review API"), with the same
 * filters and the same access rules. A filter that does not read is a 400 naming the field.
 */

export function listApiHandler(deps: ReviewRouteDeps): RouteHandler {
  return async (req) => {
    const parsed = parseListQuery(req.query, { now: deps.clock(), timeZone: deps.policy.site.timeZone });
    if (parsed.kind === 'invalid') {
      throw new AppError('CDS_ERR_REVIEW_FILTER_INVALID', { issues: parsed.issues });
    }
    const { filters } = parsed;
    const page = await deps.store.listAdvisories(parsed.query);
    const more = filters.page * filters.pageSize < page.total;
    return {
      status: 200,
      body: {
        items: page.items.map((item) => ({ ...item, url: advisoryPath(item.cardUuid) })),
        total: page.total,
        page: filters.page,
        pageSize: filters.pageSize,
        ...(filters.page > 1 ? { prev: `/review/api/advisories${filterQueryString(filters, filters.page - 1)}` } : {}),
        ...(more ? { next: `/review/api/advisories${filterQueryString(filters, filters.page + 1)}` } : {}),
      },
    };
  };
}

function feedbackJson(record: FeedbackRecord, advisory: AdvisoryWithFeedback, deps: ReviewRouteDeps): Record<string, unknown> {
  const reason = record.overrideReason;
  const display = reason === undefined ? undefined : deps.reasonDisplay(advisory.ruleId, reason.code, reason.system);
  return {
    id: record.id,
    outcome: record.outcome,
    ...(reason === undefined ? {} : { overrideReason: { ...reason, ...(display === undefined ? {} : { display }) } }),
    outcomeTimestamp: record.outcomeTimestamp,
    acceptedSuggestionIds: [...record.acceptedSuggestionIds],
    receivedAt: record.receivedAt,
  };
}

export function advisoryApiHandler(deps: ReviewRouteDeps): RouteHandler {
  return async (req) => {
    const advisory = await deps.store.getAdvisory(String(req.params['cardUuid'] ?? ''));
    if (advisory === undefined) {
      throw new AppError('CDS_ERR_ADVISORY_NOT_FOUND');
    }
    return { status: 200, body: { ...advisory, feedback: advisory.feedback.map((record) => feedbackJson(record, advisory, deps)) } };
  };
}

export function summaryApiHandler(deps: ReviewRouteDeps): RouteHandler {
  return async (req) => {
    const parsed = parseSummaryQuery(req.query, { now: deps.clock(), timeZone: deps.policy.site.timeZone });
    if (parsed.kind === 'invalid') {
      throw new AppError('CDS_ERR_REVIEW_FILTER_INVALID', { issues: parsed.issues });
    }
    const rows = await deps.store.summarise(parsed.query);
    const withDisplays = (ruleId: string, reasons: readonly { code: string; count: number }[]): Record<string, unknown>[] =>
      sortReasons(reasons).map((r) => {
        const display = deps.reasonDisplay(ruleId, r.code);
        return { code: r.code, count: r.count, ...(display === undefined ? {} : { display }) };
      });
    const rate = (c: { accepted: number; overridden: number }): Record<string, number> => {
      const value = overrideRate(c);
      return value === undefined ? {} : { overrideRate: value };
    };
    return {
      status: 200,
      body: {
        ...parsed.query,
        rules: totalsByRule(rows).map((t) => ({ ...t, ...rate(t), overrideReasons: withDisplays(t.ruleId, t.overrideReasons) })),
        rows: rows.map((r) => ({ ...r, ...rate(r), overrideReasons: withDisplays(r.ruleId, r.overrideReasons) })),
      },
    };
  };
}
