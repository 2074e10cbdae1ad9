import { createHash } from 'node:crypto';
import { html, raw } from '../review/html.js';
import { REVIEW_STYLE } from '../review/layout.js';
import type { SimulationReport } from './simulate.js';
import { renderRuleChart, renderSpo2Chart, totalsByRule } from './simulation-charts.js';
import { CHANGE_WORDS, SIMULATION_CAUTION } from './simulation-summary.js';
import { CHANGE_KINDS, SKIP_REASONS, type SkipReason } from './simulation-tally.js';

/**
 * The simulation as one self-contained HTML file: the review pages' style sheet inline (allowed by its
 * hash in a Content-Security-Policy meta tag), inline SVG charts, no script and nothing fetched.
 * Every value is escaped by the `html` template (src/review/html.ts).
 */

const STYLE_HASH = `'sha256-${createHash('sha256').update(REVIEW_STYLE, 'utf8').digest('base64')}'`;
export const SIMULATION_REPORT_CSP = `default-src 'none'; style-src ${STYLE_HASH}; img-src 'none'; base-uri 'none'; form-action 'none'`;

const signed = (n: number): string => (n > 0 ? `+${n}` : String(n));

export function renderSimulationReport(report: SimulationReport, exportDir: string): string {
  const t = report.tally;
  const names = { baseline: `${report.baseline.id} v${report.baseline.version}`, proposed: `${report.proposed.id} v${report.proposed.version}` };
  const policyRow = (name: string, p: SimulationReport['baseline']) =>
    html`<tr><th>${name}</th><td>${p.id}</td><td>${p.version}</td><td>${p.file}</td><td><code>${p.contentHash.slice(0, 12)}</code></td><td>${p.standardRange.lowPercent}–${p.standardRange.highPercent} %</td><td>${p.hypercapnicRiskRange.lowPercent}–${p.hypercapnicRiskRange.highPercent} %</td></tr>`;
  const skippedRows = (Object.entries(t.skipped) as [SkipReason, number][])
    .filter(([, n]) => n > 0)
    .map(([reason, n]) => html`<tr data-skip="${reason}"><td>${SKIP_REASONS[reason]}</td><td class="num">${n}</td></tr>`);
  const ruleRows = t.byRuleIndicator.map(
    (r) =>
      html`<tr data-rule="${r.ruleId}" data-indicator="${r.indicator}"><td>${r.ruleId}</td><td class="ind-${r.indicator}">${r.indicator}</td><td class="num">${r.baseline}</td><td class="num">${r.proposed}</td><td class="num">${signed(r.proposed - r.baseline)}</td></tr>`,
  );
  const exampleRows = CHANGE_KINDS.flatMap((kind) =>
    t.examples[kind].map(
      (e) =>
        html`<tr data-change="${kind}"><td>${CHANGE_WORDS[kind]}</td><td>${e.orderReference}<br><span class="muted">${e.authoredOn}</span></td><td>${e.ward ?? 'not recorded'}</td><td class="num">${e.spo2Percent ?? '–'}</td><td>${e.before.join(', ') || 'none'}</td><td>${e.after.join(', ') || 'none'}</td></tr>`,
    ),
  );
  const share = t.ordersEvaluated === 0 ? 0 : (100 * t.ordersChanged) / t.ordersEvaluated;
  const body = html`
<p>Every oxygen order in <code>${exportDir}</code> replayed as the order-sign call the EHR would have made when it was signed, with the record as it stood then, under both policies.</p>
<table id="policies"><tr><th></th><th>Policy id</th><th>Version</th><th>File</th><th>sha256</th><th>Standard range</th><th>Hypercapnic risk</th></tr>
${policyRow('Baseline', report.baseline)}${policyRow('New', report.proposed)}</table>
<h2>Totals</h2>
<table id="totals">
<tr><th>Oxygen orders in the export</th><td class="num" data-total="orders">${t.ordersSeen}</td></tr>
<tr><th>Replayed</th><td class="num" data-total="evaluated">${t.ordersEvaluated}</td></tr>
<tr><th>Advisories, baseline → new</th><td class="num" data-total="advisories">${t.advisories.baseline} → ${t.advisories.proposed} (${signed(t.advisories.proposed - t.advisories.baseline)})</td></tr>
<tr><th>Orders whose advice changed</th><td class="num" data-total="changed">${t.ordersChanged} (${share.toFixed(1)} %)</td></tr>
${CHANGE_KINDS.map((k) => html`<tr><th>&nbsp;&nbsp;${CHANGE_WORDS[k]}</th><td class="num" data-changed="${k}">${t.changedByKind[k]}</td></tr>`)}
</table>
${skippedRows.length === 0 ? '' : html`<h3>Orders skipped</h3><table id="skipped">${skippedRows}</table>`}
${report.malformedLines.count === 0 ? '' : html`<p class="notice">${report.malformedLines.count} malformed NDJSON lines were skipped (file and line numbers in the JSON output).</p>`}
<h2>Advisories per rule</h2>
${renderRuleChart(totalsByRule(t.byRuleIndicator), names)}
<table id="by-rule"><tr><th>Rule</th><th>Indicator</th><th class="num">Baseline</th><th class="num">New</th><th class="num">Change</th></tr>${ruleRows}</table>
<h2>SpO2 at order time</h2>
${renderSpo2Chart(t.spo2Histogram, { baseline: report.baseline, proposed: report.proposed })}
<p class="muted">${t.noCurrentSpo2} orders had no current SpO2 reading and are not in the chart.</p>
<h2>Examples of changed advice</h2>
${exampleRows.length === 0 ? html`<p id="no-examples">No order's advice changed.</p>` : html`<table id="examples"><tr><th>Change</th><th>Order</th><th>Ward</th><th class="num">SpO2 %</th><th>Before</th><th>After</th></tr>${exampleRows}</table>`}`;
  return html`<!doctype html>
<html lang="en-GB">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${SIMULATION_REPORT_CSP}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="referrer" content="no-referrer">
<title>Policy simulation: ${report.baseline.id} → ${report.proposed.id}</title>
<style>${raw(REVIEW_STYLE)}</style>
</head>
<body>
<header class="site"><strong>Oxygen policy simulation</strong></header>
<main>
<h1>What ${report.proposed.id} would have changed</h1>
${body}
</main>
<footer class="cautions"><p>${SIMULATION_CAUTION}</p></footer>
</body>
</html>
`.toString();
}
