import type { AuditFigures, WardFigures } from '../core/audit/types.js';
import { html, raw } from '../review/html.js';
import { REVIEW_STYLE } from '../review/layout.js';
import { renderMeasuresChart, renderTimeChart } from './audit-charts.js';
import { MEASURES, TIME_PARTS, formatCountOf, formatHours, formatTimeShare } from './audit-text.js';

/**
 * The audit as one self-contained HTML file: the review pages' style sheet inline, two inline SVG
 * charts, the tables with every denominator, the definitions and the cautions. No script and no
 * external fetch (a Content-Security-Policy in the page forbids both); printable on A4. Pure.
 */

export interface AuditReportInput {
  readonly figures: AuditFigures;
  /** The policy's id, version and the start of its file hash. */
  readonly policy: { readonly label: string; readonly siteName: string };
  /** When the report was made (ISO 8601), shown as given. */
  readonly madeAt: string;
}

const CSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:";

export const AUDIT_CAUTIONS =
  'Advisory only: an audit of recorded data, not of patients. A missing record may be care given but not ' +
  'recorded. Follow local policy and licensed clinical judgement. Pulse oximetry can over-read in people ' +
  'with darker skin and is unreliable with poor perfusion, motion, nail varnish and carbon monoxide poisoning.';

function measureRow(w: WardFigures): ReturnType<typeof html> {
  return html`<tr data-ward-row="${w.ward}"><th scope="row">${w.ward}</th><td class="num">${w.patients}</td><td class="num">${w.onOxygen}</td>${MEASURES.map(
    (m) => html`<td class="num" data-measure="${m.key}">${formatCountOf(w[m.key])}</td>`,
  )}</tr>`;
}

function timeRow(w: WardFigures): ReturnType<typeof html> {
  return html`<tr data-ward-time-row="${w.ward}"><th scope="row">${w.ward}</th><td class="num">${formatHours(w.time.observedMinutes)}</td>${TIME_PARTS.map(
    (p) => html`<td class="num">${formatHours(w.time[p.key])} (${formatTimeShare(w.time[p.key], w.time)})</td>`,
  )}<td class="num">${formatHours(w.time.unobservedMinutes)}</td><td class="num">${formatHours(w.time.notJudgedMinutes)}</td></tr>`;
}

export function renderAuditReport(input: AuditReportInput): string {
  const { figures, policy } = input;
  const rows = [...figures.wards, figures.overall];
  const title = `Oxygen audit, ${policy.siteName}`;
  return html`<!doctype html>
<html lang="en-GB">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${CSP}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${title}</title>
<style>${raw(REVIEW_STYLE)}</style>
</head>
<body>
<main>
<h1>${title}</h1>
<dl class="facts" id="audit-about">
<dt>Period</dt><dd>${figures.period.from} to ${figures.period.to}</dd>
<dt>Policy</dt><dd>${policy.label}</dd>
<dt>Made</dt><dd>${input.madeAt}</dd>
</dl>
<h2>Prescription and target range</h2>
${renderMeasuresChart(rows)}
<table id="measures-table">
<thead><tr><th>Ward</th><th class="num">Patients</th><th class="num">On oxygen</th>${MEASURES.map((m) => html`<th class="num">${m.label}</th>`)}</tr></thead>
<tbody>${figures.wards.map(measureRow)}</tbody>
<tfoot>${measureRow(figures.overall)}</tfoot>
</table>
<h2>SpO2 time against the target range</h2>
${renderTimeChart(rows)}
<table id="time-table">
<thead><tr><th>Ward</th><th class="num">Observed</th>${TIME_PARTS.map((p) => html`<th class="num">${p.label}</th>`)}<th class="num">Not observed</th><th class="num">No range to judge</th></tr></thead>
<tbody>${figures.wards.map(timeRow)}</tbody>
<tfoot>${timeRow(figures.overall)}</tfoot>
</table>
<h2>What the figures mean</h2>
<ul id="definitions">
<li><strong>On oxygen</strong>: an order giving oxygen, or a recorded oxygen flow above 0 L/min or FiO2 above 0.21, at some moment of the patient's stay in the period. Patients below the policy's minimum age are left out (${figures.overall.underMinimumAge} in this period).</li>
<li><strong>On oxygen with an order</strong>: of the patients on oxygen, those with an oxygen order in force during the stay.</li>
<li><strong>Order with a target range</strong>: of those whose order titrates to a target (not comfort oxygen), orders stating a two-sided SpO2 range.</li>
<li><strong>Range the patient's risk calls for</strong>: of the ordered ranges where an SpO2 range applies, those equal to the range this policy selects for the patient from the conditions and gases recorded by the order's time (the service's own target selection).</li>
<li><strong>At-risk patients on the standard range</strong>: of the patients whose risk of hypercapnic respiratory failure calls for the at-risk range and who have an ordered range, those prescribed the standard range.</li>
<li><strong>SpO2 time</strong>: from the first moment on oxygen to the end of the stay in the period; each SpO2 reading stands until the next, for at most the policy's reading hold, never across a switch between oxygen and air or a new order; judged against the range titrated to (the ordered range, or the applicable one when none is ordered or the ordered one is on the unsafe side).</li>
</ul>
<p class="muted">Measures follow those of the British Thoracic Society's national emergency oxygen audits (prescription present, target range documented, SpO2 within the target range).</p>
</main>
<footer class="cautions"><p>${AUDIT_CAUTIONS}</p></footer>
</body>
</html>
`.toString();
}
