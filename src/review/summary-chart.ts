import { scaleBand, scaleLinear } from 'd3-scale';
import { html, type HtmlFragment } from './html.js';
import type { RuleTotals } from './rule-summary.js';

/**
 * The summary page's bar chart, drawn on the server as SVG: one bar per rule, stacked accepted,
 * overridden and no feedback, so a rule overridden far more often than others stands out. Each
 * segment carries its rule id, kind and count for tests and the browser test. Pure.
 */

const WIDTH = 960;
const LABEL_WIDTH = 300;
const RIGHT = 60;
const BAR_ROW = 26;
const TOP = 30;

export const SEGMENTS = [
  { key: 'accepted', label: 'accepted', fill: '#3d7a3d' },
  { key: 'overridden', label: 'overridden', fill: '#b5542a' },
  { key: 'noFeedback', label: 'no feedback', fill: '#b8b8b8' },
] as const;

export function renderSummaryChart(totals: readonly RuleTotals[]): HtmlFragment {
  if (totals.length === 0) {
    return html`<p id="summary-chart-empty" class="muted">No advisories in this window, so there is nothing to chart.</p>`;
  }
  const height = TOP + totals.length * BAR_ROW + 30;
  const y = scaleBand<string>()
    .domain(totals.map((t) => t.ruleId))
    .range([TOP, TOP + totals.length * BAR_ROW])
    .paddingInner(0.25);
  const maxFired = Math.max(1, ...totals.map((t) => t.fired));
  const x = scaleLinear().domain([0, maxFired]).range([LABEL_WIDTH, WIDTH - RIGHT]).nice();
  const round = (value: number): number => Math.round(value * 100) / 100;

  const bars = totals.map((t) => {
    let start = 0;
    const top = round(y(t.ruleId) ?? 0);
    const segments = SEGMENTS.map((segment) => {
      const count = t[segment.key];
      const from = start;
      start += count;
      return html`<rect data-segment="${segment.key}" data-count="${count}" x="${round(x(from))}" y="${top}" width="${round(x(from + count) - x(from))}" height="${round(y.bandwidth())}" fill="${segment.fill}"><title>${t.ruleId}: ${count} ${segment.label}</title></rect>`;
    });
    return html`<g data-rule-bar="${t.ruleId}" data-fired="${t.fired}">
<text x="${LABEL_WIDTH - 8}" y="${top + round(y.bandwidth() / 2) + 4}" text-anchor="end">${t.ruleId}</text>
${segments}
<text x="${round(x(t.fired)) + 6}" y="${top + round(y.bandwidth() / 2) + 4}">${t.fired}</text></g>`;
  });
  const ticks = x.ticks(Math.min(8, x.domain()[1] ?? 1)).map(
    (tick) => html`<g class="axis" data-x-tick="${tick}"><line class="grid" x1="${round(x(tick))}" x2="${round(x(tick))}" y1="${TOP - 4}" y2="${height - 24}"></line>
<text x="${round(x(tick))}" y="${height - 10}" text-anchor="middle">${tick}</text></g>`,
  );
  const legend = SEGMENTS.map(
    (segment, index) => html`<g data-legend="${segment.key}"><rect x="${LABEL_WIDTH + index * 130}" y="6" width="12" height="12" fill="${segment.fill}"></rect><text x="${LABEL_WIDTH + index * 130 + 16}" y="16">${segment.label}</text></g>`,
  );
  const description = totals
    .map((t) => `${t.ruleId}: fired ${t.fired}, accepted ${t.accepted}, overridden ${t.overridden}, no feedback ${t.noFeedback}`)
    .join('; ');
  return html`<figure id="summary-chart">
<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${WIDTH} ${height}" width="${WIDTH}" height="${height}" role="img" aria-labelledby="summary-chart-title summary-chart-desc">
<title id="summary-chart-title">Advisories per rule, by latest outcome</title>
<desc id="summary-chart-desc">${description}</desc>
${legend}
${ticks}
${bars}
</svg>
<figcaption>Each bar is one rule's advisories in the window: accepted, overridden, and no feedback yet (latest outcome per card). The table below has the same numbers.</figcaption>
</figure>`;
}
