import type { AdvisoryListItem, AdvisoryPage, FeedbackPage } from '../store/store.js';
import { issuesNotice, selectField, timeFields } from './filter-fields.js';
import { html, type HtmlFragment } from './html.js';
import { renderPage } from './layout.js';
import { describeReason, type ReasonDisplay } from './override-reasons.js';
import { filterQueryString, INDICATORS, type ListFilters, type QueryIssue } from './review-query.js';
import { formatReviewTime } from './review-time.js';

/**
 * `/review`: recent advisories, newest first, with a GET filter form and pages that keep the
 * filters; below, feedback received for cards this service never issued, flagged. Pure.
 */

export interface AdvisoryListInput {
  readonly timeZone: string;
  readonly facets: { readonly units: readonly string[]; readonly ruleIds: readonly string[] };
  readonly reasonDisplay: ReasonDisplay;
  /** The advisories on this page, or the filter issues that stopped the query. */
  readonly result:
    | { readonly kind: 'ok'; readonly filters: ListFilters; readonly page: AdvisoryPage }
    | { readonly kind: 'invalid'; readonly issues: readonly QueryIssue[] };
  /** The newest feedback for cards never issued, and how many there are; no section when absent. */
  readonly unmatched?: FeedbackPage;
}

export function advisoryPath(cardUuid: string): string {
  return `/review/advisories/${encodeURIComponent(cardUuid)}`;
}

const OUTCOME_LABELS = { accepted: 'accepted', overridden: 'overridden', none: 'no feedback yet' } as const;

function outcomeCell(item: AdvisoryListItem, reasonDisplay: ReasonDisplay): HtmlFragment {
  if (item.latestOutcome === undefined) {
    return html`<td data-outcome="none" class="muted">no feedback yet</td>`;
  }
  if (item.latestOutcome === 'accepted') {
    return html`<td data-outcome="accepted">accepted</td>`;
  }
  const reason = item.latestOverrideReasonCode;
  return html`<td data-outcome="overridden">overridden${reason === undefined ? html`, no reason given` : html`: ${describeReason(reasonDisplay, item.ruleId, reason)}`}</td>`;
}

function row(item: AdvisoryListItem, input: AdvisoryListInput): HtmlFragment {
  return html`<tr data-card-uuid="${item.cardUuid}">
<td data-col="issued">${formatReviewTime(item.issuedAt, input.timeZone)}</td>
<td data-col="unit">${item.unit ?? html`<span class="muted">not recorded</span>`}</td>
<td data-col="patient"><a href="/review?patient=${encodeURIComponent(item.patientKey)}" data-patient-key="${item.patientKey}" title="This patient's advisories (a keyed pseudonym, not an identifier)"><code>${item.patientKey.slice(0, 8)}</code></a></td>
<td data-col="rule">${item.ruleId}</td>
<td data-col="indicator" class="ind-${item.indicator}">${item.indicator}</td>
<td data-col="summary">${item.summary}</td>
${outcomeCell(item, input.reasonDisplay)}
<td><a href="${advisoryPath(item.cardUuid)}" data-advisory-link>Open</a></td>
</tr>`;
}

function filterForm(input: AdvisoryListInput, filters: Partial<ListFilters>): HtmlFragment {
  const plain = (values: readonly string[]): { value: string; label: string }[] => values.map((value) => ({ value, label: value }));
  return html`<form class="filters" id="advisory-filters" method="get" action="/review">
${selectField('unit', 'Unit', plain(input.facets.units), filters.unit)}
${selectField('rule', 'Rule', plain(input.facets.ruleIds), filters.rule)}
${selectField('indicator', 'Indicator', plain(INDICATORS), filters.indicator)}
${selectField('outcome', 'Outcome', (['accepted', 'overridden', 'none'] as const).map((value) => ({ value, label: OUTCOME_LABELS[value] })), filters.outcome)}
${timeFields(filters)}
${filters.patient === undefined ? '' : html`<input type="hidden" name="patient" value="${filters.patient}"><p id="patient-filter">One patient only: <code>${filters.patient.slice(0, 8)}</code> (a keyed pseudonym; <a href="/review">all patients</a>)</p>`}
<button type="submit" id="filter-apply">Show</button> <a href="/review" id="filter-clear">Clear filters</a>
</form>`;
}

function pager(filters: ListFilters, total: number, shown: number, suffix = ''): HtmlFragment {
  const first = total === 0 ? 0 : (filters.page - 1) * filters.pageSize + 1;
  const last = (filters.page - 1) * filters.pageSize + shown;
  const pages = Math.max(1, Math.ceil(total / filters.pageSize));
  const prev = filters.page > 1 ? html`<a id="page-prev${suffix}" rel="prev" href="/review${filterQueryString(filters, Math.min(filters.page - 1, pages))}">Newer</a>` : '';
  const next = filters.page < pages ? html`<a id="page-next${suffix}" rel="next" href="/review${filterQueryString(filters, filters.page + 1)}">Older</a>` : '';
  return html`<div class="pager"><span id="page-status${suffix}" data-total="${total}" data-page="${filters.page}">${
    shown === 0 ? `None of ${total} shown on this page` : `Showing ${first}–${last} of ${total}`
  }</span>${prev}${next}</div>`;
}

function unmatchedSection(unmatched: FeedbackPage | undefined, timeZone: string): HtmlFragment {
  if (unmatched === undefined) {
    return html``;
  }
  const records = unmatched.items;
  const body =
    records.length === 0
      ? html`<p class="muted">None received.</p>`
      : html`<table id="unmatched-feedback-table"><thead><tr><th>Received</th><th>Client</th><th>Service</th><th>Card uuid sent</th><th>Outcome</th><th>Reason code</th></tr></thead><tbody>
${records.map(
  (r) => html`<tr data-feedback-id="${r.id}"><td>${formatReviewTime(r.receivedAt, timeZone)}</td><td>${r.client.iss}${r.client.tenant === undefined ? '' : html` (${r.client.tenant})`}</td><td>${r.serviceId}</td><td><code>${r.cardUuid}</code></td><td>${r.outcome}</td><td>${r.overrideReason?.code ?? ''}</td></tr>`,
)}</tbody></table>`;
  return html`<section id="unmatched-feedback"><h2>Feedback for cards this service did not issue <span class="flag">(flagged)</span></h2>
<p>These records name a card this service never issued to that client. They are kept for audit and never counted as feedback on a real advisory. A steady stream of them may mean a misconfigured client.</p>
<p id="unmatched-count" data-total="${unmatched.total}">${records.length < unmatched.total ? `The newest ${records.length} of ${unmatched.total}.` : `${unmatched.total} in all.`}</p>
${body}</section>`;
}

export function renderAdvisoryListPage(input: AdvisoryListInput): string {
  const result = input.result;
  if (result.kind === 'invalid') {
    return renderPage({
      title: 'Advisories',
      timeZone: input.timeZone,
      current: 'list',
      body: html`${issuesNotice(result.issues)}${filterForm(input, {})}`,
    });
  }
  const { filters, page } = result;
  const table =
    page.items.length === 0
      ? html`<p id="advisory-empty">No advisories match these filters.</p>`
      : html`<table id="advisory-table"><thead><tr><th>Issued</th><th>Unit</th><th>Patient</th><th>Rule</th><th>Indicator</th><th>Summary</th><th>Latest outcome</th><th></th></tr></thead>
<tbody>${page.items.map((item) => row(item, input))}</tbody></table>`;
  return renderPage({
    title: 'Advisories',
    timeZone: input.timeZone,
    current: 'list',
    body: html`<p>Cards this service issued, newest first, with what the clinician did about each (the latest feedback).</p>
${filterForm(input, filters)}
${pager(filters, page.total, page.items.length)}
${table}
${page.items.length > 0 ? pager(filters, page.total, page.items.length, '-bottom') : ''}
${unmatchedSection(input.unmatched, input.timeZone)}`,
  });
}
