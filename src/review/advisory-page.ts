import type { AdvisoryWithFeedback, FeedbackRecord } from '../store/store.js';
import { html, type HtmlFragment } from './html.js';
import { renderPage } from './layout.js';
import { describeReason, type ReasonDisplay } from './override-reasons.js';
import { formatReviewTime } from './review-time.js';
import { renderSafeMarkdown } from './safe-markdown.js';
import { renderSpo2Chart } from './spo2-chart.js';

/**
 * `/review/advisories/{cardUuid}`: one advisory as it was issued (summary, rule, policy, unit, key
 * numbers, the card's detail and full workings), the SpO2 chart, and every feedback record on it.
 * Everything shown comes from the store and is escaped; the Markdown goes through the safe subset. Pure.
 */

export interface AdvisoryPageInput {
  readonly advisory: AdvisoryWithFeedback;
  readonly timeZone: string;
  readonly reasonDisplay: ReasonDisplay;
}

function feedbackRow(record: FeedbackRecord, advisory: AdvisoryWithFeedback, input: AdvisoryPageInput): HtmlFragment {
  const reason = record.overrideReason;
  return html`<tr data-feedback-id="${record.id}" data-outcome="${record.outcome}">
<td>${record.outcome}</td>
<td>${reason === undefined ? html`<span class="muted">${record.outcome === 'overridden' ? 'none given' : ''}</span>` : describeReason(input.reasonDisplay, advisory.ruleId, reason.code, reason.system)}</td>
<td class="num">${record.acceptedSuggestionIds.length}</td>
<td>${formatReviewTime(record.outcomeTimestamp, input.timeZone)}</td>
<td>${formatReviewTime(record.receivedAt, input.timeZone)}</td>
</tr>`;
}

function feedbackSection(advisory: AdvisoryWithFeedback, input: AdvisoryPageInput): HtmlFragment {
  if (advisory.feedback.length === 0) {
    return html`<p id="feedback-empty">No feedback received for this card yet.</p>`;
  }
  return html`<table id="feedback-table"><thead><tr><th>Outcome</th><th>Override reason</th><th class="num">Suggestions accepted</th><th>Outcome time (client)</th><th>Received</th></tr></thead>
<tbody>${advisory.feedback.map((record) => feedbackRow(record, advisory, input))}</tbody></table>
<p class="muted">Oldest first. A changed outcome or reason is kept as a new record; the latest counts in the summary.</p>`;
}

/**
 * A card value's name as words for the page: `targetSource` reads "target source", while names that
 * are symbols already (`pH`, `PCO2`, `spo2`) are left as they are.
 */
export function wordsOf(name: string): string {
  return name.replace(/([a-z]{2,})([A-Z])(?=[a-z])/g, (_, before: string, capital: string) => `${before} ${capital.toLowerCase()}`);
}

export function renderAdvisoryPage(input: AdvisoryPageInput): string {
  const a = input.advisory;
  const zone = input.timeZone;
  const keyNumbers =
    a.keyNumbers.length === 0
      ? html`<p class="muted">This card showed no key numbers.</p>`
      : html`<table id="key-numbers"><thead><tr><th>Quantity</th><th>Value</th></tr></thead>
<tbody>${a.keyNumbers.map((n) => html`<tr data-key-number="${n.name}"><td>${wordsOf(n.name)}</td><td>${n.value}</td></tr>`)}</tbody></table>`;
  const body = html`<p id="advisory-summary" class="ind-${a.indicator}">${a.summary}</p>
<dl class="facts" id="advisory-facts" data-card-uuid="${a.cardUuid}">
<dt>Indicator</dt><dd data-field="indicator">${a.indicator}</dd>
<dt>Rule</dt><dd data-field="rule">${a.ruleId}, version ${a.ruleVersion}</dd>
<dt>Policy</dt><dd data-field="policy">${a.policy.id}, version ${a.policy.version} <span class="muted">(content hash <code>${a.policy.contentHash}</code>)</span></dd>
<dt>Unit</dt><dd data-field="unit">${a.unit ?? html`<span class="muted">not recorded</span>`}</dd>
<dt>Issued</dt><dd data-field="issued">${formatReviewTime(a.issuedAt, zone)}</dd>
<dt>Service and hook</dt><dd data-field="service">${a.serviceId} on ${a.hook}</dd>
<dt>Client</dt><dd data-field="client">${a.client.iss}${a.client.tenant === undefined ? '' : html`, tenant ${a.client.tenant}`}</dd>
<dt>Patient key</dt><dd data-field="patient-key"><code>${a.patientKey}</code> <span class="muted">(a keyed pseudonym: the same patient's advisories share it; <a href="/review?patient=${encodeURIComponent(a.patientKey)}" data-patient-advisories>all of them</a>)</span></dd>
<dt>Card uuid</dt><dd data-field="card-uuid"><code>${a.cardUuid}</code></dd>
</dl>
<h2 id="key-numbers-heading">Key numbers</h2>
${keyNumbers}
<h2 id="chart-heading">SpO2 and oxygen around this advisory</h2>
${renderSpo2Chart({ series: a.series, issuedAt: a.issuedAt, timeZone: zone })}
<h2 id="detail-heading">The card as issued</h2>
<div class="markdown" id="card-detail">${renderSafeMarkdown(a.detail)}</div>
<h2 id="workings-heading">Inputs and workings</h2>
<div class="markdown" id="card-workings">${a.workings.trim() === '' ? html`<p class="muted">No workings stored.</p>` : renderSafeMarkdown(a.workings)}</div>
<h2 id="feedback-heading">Feedback</h2>
${feedbackSection(a, input)}`;
  return renderPage({ title: `Advisory: ${a.ruleId}`, timeZone: zone, body });
}
