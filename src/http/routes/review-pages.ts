import { renderAdvisoryListPage } from '../../review/advisory-list-page.js';
import { renderAdvisoryPage } from '../../review/advisory-page.js';
import { renderMessagePage } from '../../review/layout.js';
import { parseListQuery, parseSummaryQuery } from '../../review/review-query.js';
import { renderSummaryPage } from '../../review/summary-page.js';
import type { ReviewRouteDeps } from './review-deps.js';
import type { Request } from 'express';

/**
 * The review pages' handlers: read the query, ask the store, hand the data to a pure renderer in
 * src/review. A filter that does not read is a 400 page naming the field, not an exception.
 */

export interface PageResult {
  readonly status: number;
  readonly html: string;
}

export type PageHandler = (req: Request) => Promise<PageResult>;

/** How many flagged feedback records the list page shows (the newest). */
export const UNMATCHED_SHOWN = 20;

export function listPageHandler(deps: ReviewRouteDeps): PageHandler {
  return async (req) => {
    const timeZone = deps.policy.site.timeZone;
    const parsed = parseListQuery(req.query, { now: deps.clock(), timeZone });
    const facets = await deps.store.facets();
    const unmatched = await deps.store.listUnmatchedFeedback(UNMATCHED_SHOWN, 0);
    const common = { timeZone, facets, reasonDisplay: deps.reasonDisplay, unmatched };
    if (parsed.kind === 'invalid') {
      return { status: 400, html: renderAdvisoryListPage({ ...common, result: parsed }) };
    }
    const page = await deps.store.listAdvisories(parsed.query);
    return { status: 200, html: renderAdvisoryListPage({ ...common, result: { kind: 'ok', filters: parsed.filters, page } }) };
  };
}

export function advisoryPageHandler(deps: ReviewRouteDeps): PageHandler {
  return async (req) => {
    const timeZone = deps.policy.site.timeZone;
    const advisory = await deps.store.getAdvisory(String(req.params['cardUuid'] ?? ''));
    if (advisory === undefined) {
      return {
        status: 404,
        html: renderMessagePage({ title: 'Advisory not found', timeZone, message: 'No advisory with this card uuid is on record. It may have been removed under the retention policy.' }),
      };
    }
    return { status: 200, html: renderAdvisoryPage({ advisory, timeZone, reasonDisplay: deps.reasonDisplay }) };
  };
}

export function summaryPageHandler(deps: ReviewRouteDeps): PageHandler {
  return async (req) => {
    const timeZone = deps.policy.site.timeZone;
    const parsed = parseSummaryQuery(req.query, { now: deps.clock(), timeZone });
    if (parsed.kind === 'invalid') {
      return { status: 400, html: renderSummaryPage({ timeZone, reasonDisplay: deps.reasonDisplay, result: parsed }) };
    }
    const rows = await deps.store.summarise(parsed.query);
    return { status: 200, html: renderSummaryPage({ timeZone, reasonDisplay: deps.reasonDisplay, result: { kind: 'ok', filters: parsed.filters, rows } }) };
  };
}
