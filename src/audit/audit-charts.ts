import { scaleBand, scaleLinear } from 'd3-scale';
import { percentOf } from '../core/audit/audit-wards.js';
import type { WardFigures } from '../core/audit/types.js';
import { html, type HtmlFragment } from '../review/html.js';
import { MEASURES, TIME_PARTS, formatCountOf, formatHours } from './audit-text.js';

/**
 * The audit report's two charts, drawn as SVG on the server in the way of the review summary chart
 * (src/review/summary-chart.ts): d3 scales, text escaped by the `html` template, no script. Each
 * bar carries its ward, measure and numbers as data attributes for the browser test. Pure.
 */

const WIDTH = 960;
const LABEL_WIDTH = 230;
const RIGHT = 140;
const TOP = 34;
const round = (value: number): number => Math.round(value * 100) / 100;

const MEASURE_FILLS = ['#0b4f8a', '#3d7a3d', '#6a4c93', '#b5542a'] as const;

function percentAxis(x: (v: number) => number, top: number, bottom: number): HtmlFragment[] {
  return [0, 25, 50, 75, 100].map(
    (tick) => html`<g class="axis" data-x-tick="${tick}"><line class="grid" x1="${round(x(tick))}" x2="${round(x(tick))}" y1="${top - 4}" y2="${bottom}"></line>
<text x="${round(x(tick))}" y="${bottom + 14}" text-anchor="middle">${tick} %</text></g>`,
  );
}

/** One group of bars a ward: the share of each audit measure, with its count and denominator. */
export function renderMeasuresChart(wards: readonly WardFigures[]): HtmlFragment {
  const rowHeight = MEASURES.length * 16 + 14;
  const height = TOP + wards.length * rowHeight + 30;
  const y = scaleBand<string>()
    .domain(wards.map((w) => w.ward))
    .range([TOP, TOP + wards.length * rowHeight])
    .paddingInner(0.15);
  const x = scaleLinear().domain([0, 100]).range([LABEL_WIDTH, WIDTH - RIGHT]);
  const bar = y.bandwidth() / MEASURES.length;
  const groups = wards.map((w) => {
    const top = y(w.ward) ?? 0;
    const bars = MEASURES.map((m, i) => {
      const c = w[m.key];
      const percent = percentOf(c.count, c.of);
      const barTop = round(top + i * bar);
      return html`<g data-measure="${m.key}" data-count="${c.count}" data-of="${c.of}"><rect x="${LABEL_WIDTH}" y="${barTop}" width="${round(x(percent ?? 0) - LABEL_WIDTH)}" height="${round(bar * 0.85)}" fill="${MEASURE_FILLS[i] ?? '#888'}"><title>${w.ward}: ${m.label}, ${formatCountOf(c)}</title></rect>
<text x="${round(x(percent ?? 0)) + 4}" y="${round(barTop + bar * 0.7)}">${formatCountOf(c)}</text></g>`;
    });
    return html`<g data-ward-measures="${w.ward}">
<text x="${LABEL_WIDTH - 8}" y="${round(top + y.bandwidth() / 2 + 4)}" text-anchor="end">${w.ward}</text>
${bars}</g>`;
  });
  const legend = MEASURES.map(
    (m, i) => html`<g data-legend="${m.key}"><rect x="${LABEL_WIDTH + i * 175}" y="6" width="12" height="12" fill="${MEASURE_FILLS[i] ?? '#888'}"></rect><text x="${LABEL_WIDTH + i * 175 + 16}" y="16">${m.short}</text></g>`,
  );
  const description = wards
    .map((w) => `${w.ward}: ${MEASURES.map((m) => `${m.label} ${formatCountOf(w[m.key])}`).join(', ')}`)
    .join('; ');
  return html`<figure id="measures-chart">
<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${WIDTH} ${height}" width="${WIDTH}" height="${height}" role="img" aria-labelledby="measures-chart-title measures-chart-desc">
<title id="measures-chart-title">Audit measures per ward</title>
<desc id="measures-chart-desc">${description}</desc>
${legend}
${percentAxis((v) => x(v), TOP, height - 24)}
${groups}
</svg>
<figcaption>Each bar is a share of its own denominator (shown beside it). The first three are better higher; "at risk on standard" (at-risk patients prescribed the standard range) is better lower.</figcaption>
</figure>`;
}

/** One stacked bar a ward: observed SpO2 time in, above on oxygen, below and above on air. */
export function renderTimeChart(wards: readonly WardFigures[]): HtmlFragment {
  const rowHeight = 30;
  const height = TOP + wards.length * rowHeight + 30;
  const y = scaleBand<string>()
    .domain(wards.map((w) => w.ward))
    .range([TOP, TOP + wards.length * rowHeight])
    .paddingInner(0.25);
  const x = scaleLinear().domain([0, 100]).range([LABEL_WIDTH, WIDTH - RIGHT]);
  const bars = wards.map((w) => {
    const top = round(y(w.ward) ?? 0);
    const observed = w.time.observedMinutes;
    let start = 0;
    const segments = TIME_PARTS.map((part) => {
      const minutes = w.time[part.key];
      const share = observed > 0 ? (100 * minutes) / observed : 0;
      const from = start;
      start += share;
      return html`<rect data-part="${part.key}" data-minutes="${round(minutes)}" x="${round(x(from))}" y="${top}" width="${round(x(from + share) - x(from))}" height="${round(y.bandwidth())}" fill="${part.fill}"><title>${w.ward}: ${part.label} ${formatHours(minutes)} of ${formatHours(observed)} observed</title></rect>`;
    });
    return html`<g data-ward-time="${w.ward}" data-observed-minutes="${round(observed)}">
<text x="${LABEL_WIDTH - 8}" y="${round(top + y.bandwidth() / 2 + 4)}" text-anchor="end">${w.ward}</text>
${segments}
<text x="${WIDTH - RIGHT + 6}" y="${round(top + y.bandwidth() / 2 + 4)}">${formatHours(observed)} observed</text></g>`;
  });
  const legend = TIME_PARTS.map(
    (p, i) => html`<g data-legend="${p.key}"><rect x="${LABEL_WIDTH + i * 150}" y="6" width="12" height="12" fill="${p.fill}"></rect><text x="${LABEL_WIDTH + i * 150 + 16}" y="16">${p.label}</text></g>`,
  );
  const description = wards
    .map((w) => `${w.ward}: ${TIME_PARTS.map((p) => `${p.label} ${formatHours(w.time[p.key])}`).join(', ')} of ${formatHours(w.time.observedMinutes)} observed`)
    .join('; ');
  return html`<figure id="time-chart">
<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${WIDTH} ${height}" width="${WIDTH}" height="${height}" role="img" aria-labelledby="time-chart-title time-chart-desc">
<title id="time-chart-title">SpO2 time against the target range, per ward</title>
<desc id="time-chart-desc">${description}</desc>
${legend}
${percentAxis((v) => x(v), TOP, height - 24)}
${bars}
</svg>
<figcaption>Share of observed SpO2 time from the first time on oxygen: in range, above it while on oxygen, below it, and above it on air (no oxygen to reduce).</figcaption>
</figure>`;
}
