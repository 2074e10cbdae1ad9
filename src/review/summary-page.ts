import type { RuleUnitSummary } from '../store/store.js';
import { issuesNotice, timeFields } from './filter-fields.js';
import { html, type HtmlFragment } from './html.js';
import { renderPage } from './layout.js';
import { describeReason, type ReasonDisplay } from './override-reasons.js';
import type { QueryIssue, TimeFilters } from './review-query.js';
import { formatRate, overrideRate, sortReasons, totalsByRule, type ReasonCount } from './rule-summary.js';
import { renderSummaryChart } from './summary-chart.js';

/**
 * `/review/summary`: per rule, and per rule and unit, how often the rule fired and what clinicians
 * did (latest outcome per card), the override rate, and the commonest override reasons in the words
 * of the rule's card file. The numbers a policy owner tunes by. Pure.
 */

export interface SummaryPageInput {
  readonly timeZone: string;
  readonly reasonDisplay: ReasonDisplay;
  readonly result:
    | { readonly kind: 'ok'; readonly filters: TimeFilters; readonly rows: readonly RuleUnitSummary[] }
    | { readonly kind: 'invalid'; readonly issues: readonly QueryIssue[] };
}

/** How many override reasons a row shows, commonest first. */
export const TOP_REASONS = 3;

function reasonsCell(ruleId: string, reasons: readonly ReasonCount[], display: ReasonDisplay): HtmlFragment {
  const top = sortReasons(reasons).slice(0, TOP_REASONS);
  if (top.length === 0) {
    return html`<td class="muted">none</td>`;
  }
  return html`<td><ul>${top.map((r) => html`<li data-reason="${r.code}" data-count="${r.count}">${describeReason(display, ruleId, r.code)}: ${r.count}</li>`)}</ul></td>`;
}

function countCells(c: { fired: number; accepted: number; overridden: number; noFeedback: number }): HtmlFragment {
  const rate = overrideRate(c);
  return html`<td class="num" data-col="fired">${c.fired}</td><td class="num" data-col="accepted">${c.accepted}</td><td class="num" data-col="overridden">${c.overridden}</td><td class="num" data-col="no-feedback">${c.noFeedback}</td><td class="num" data-col="override-rate"${rate === undefined ? '' : html` data-rate="${rate.toFixed(4)}"`}>${formatRate(rate)}</td>`;
}

const HEAD = html`<th class="num">Fired</th><th class="num">Accepted</th><th class="num">Overridden</th><th class="num">No feedback</th><th class="num">Override rate</th><th>Top override reasons</th>`;

function form(filters: TimeFilters): HtmlFragment {
  return html`<form class="filters" id="summary-filters" method="get" action="/review/summary">
${timeFields(filters)}
<button type="submit" id="filter-apply">Show</button> <a href="/review/summary" id="filter-clear">All time</a>
</form>`;
}

export function renderSummaryPage(input: SummaryPageInput): string {
  const result = input.result;
  if (result.kind === 'invalid') {
    return renderPage({ title: 'Summary by rule', timeZone: input.timeZone, current: 'summary', body: html`${issuesNotice(result.issues)}${form({})}` });
  }
  const totals = totalsByRule(result.rows);
  const units = [...result.rows].sort((a, b) => a.ruleId.localeCompare(b.ruleId) || a.unit.localeCompare(b.unit));
  const byRule =
    totals.length === 0
      ? html`<p id="summary-empty">No advisories were issued in this window.</p>`
      : html`<table id="summary-by-rule"><thead><tr><th>Rule</th>${HEAD}</tr></thead><tbody>
${totals.map((t) => html`<tr data-rule-id="${t.ruleId}"><td>${t.ruleId}</td>${countCells(t)}${reasonsCell(t.ruleId, t.overrideReasons, input.reasonDisplay)}</tr>`)}
</tbody></table>`;
  const byUnit =
    units.length === 0
      ? html``
      : html`<h2>By rule and unit</h2><table id="summary-table"><thead><tr><th>Rule</th><th>Unit</th>${HEAD}</tr></thead><tbody>
${units.map((r) => html`<tr data-rule-id="${r.ruleId}" data-unit="${r.unit}"><td>${r.ruleId}</td><td>${r.unit === '' ? html`<span class="muted">not recorded</span>` : r.unit}</td>${countCells(r)}${reasonsCell(r.ruleId, r.overrideReasons, input.reasonDisplay)}</tr>`)}
</tbody></table>`;
  return renderPage({
    title: 'Summary by rule',
    timeZone: input.timeZone,
    current: 'summary',
    body: html`<p>How often each rule fired and what clinicians did with its cards (the latest feedback on each card).
The <strong>override rate</strong> is the share of cards with feedback whose latest outcome was an override; cards with no feedback are not counted in it.
A high rate is a prompt to read the override reasons and the local policy, not proof that the rule is wrong.</p>
${form(result.filters)}
<h2>By rule</h2>
${renderSummaryChart(totals)}
${byRule}
${byUnit}`,
  });
}
