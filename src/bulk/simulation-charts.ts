import { scaleBand, scaleLinear } from 'd3-scale';
import { html, type HtmlFragment } from '../review/html.js';
import type { PolicyLabel } from './simulate.js';
import type { RuleIndicatorCount } from './simulation-tally.js';

/**
 * The simulation report's two charts, drawn as inline SVG with d3-scale as src/review's charts are:
 * advisories per rule under each policy (grouped bars), and the SpO2 at order time against each
 * policy's target bands. Every mark carries data attributes for tests. Pure.
 */

const WIDTH = 960;
const round = (value: number): number => Math.round(value * 100) / 100;

export const POLICY_FILLS = { baseline: '#7a7a7a', proposed: '#0b4f8a' } as const;

export interface RuleTotal {
  readonly ruleId: string;
  readonly baseline: number;
  readonly proposed: number;
}

/** Counts by rule across indicators, rules with the most advisories first. */
export function totalsByRule(counts: readonly RuleIndicatorCount[]): RuleTotal[] {
  const byRule = new Map<string, { baseline: number; proposed: number }>();
  for (const c of counts) {
    const entry = byRule.get(c.ruleId) ?? { baseline: 0, proposed: 0 };
    entry.baseline += c.baseline;
    entry.proposed += c.proposed;
    byRule.set(c.ruleId, entry);
  }
  return [...byRule]
    .map(([ruleId, t]) => ({ ruleId, ...t }))
    .sort((a, b) => Math.max(b.baseline, b.proposed) - Math.max(a.baseline, a.proposed) || a.ruleId.localeCompare(b.ruleId));
}

export function renderRuleChart(totals: readonly RuleTotal[], names: { baseline: string; proposed: string }): HtmlFragment {
  if (totals.length === 0) {
    return html`<p id="rule-chart-empty" class="muted">No advisories under either policy, so there is nothing to chart.</p>`;
  }
  const LABEL = 280;
  const TOP = 30;
  const ROW = 30;
  const height = TOP + totals.length * ROW + 30;
  const y = scaleBand<string>().domain(totals.map((t) => t.ruleId)).range([TOP, TOP + totals.length * ROW]).paddingInner(0.2);
  const max = Math.max(1, ...totals.map((t) => Math.max(t.baseline, t.proposed)));
  const x = scaleLinear().domain([0, max]).range([LABEL, WIDTH - 60]).nice();
  const half = round(y.bandwidth() / 2);
  const rows = totals.map((t) => {
    const top = round(y(t.ruleId) ?? 0);
    const bar = (side: 'baseline' | 'proposed', offset: number) =>
      html`<rect data-policy="${side}" data-count="${t[side]}" x="${LABEL}" y="${round(top + offset)}" width="${round(x(t[side]) - LABEL)}" height="${half}" fill="${POLICY_FILLS[side]}"><title>${t.ruleId}: ${t[side]} under ${names[side]}</title></rect>
<text x="${round(x(t[side])) + 4}" y="${round(top + offset + half - 3)}">${t[side]}</text>`;
    return html`<g data-rule-bars="${t.ruleId}">
<text x="${LABEL - 8}" y="${top + half + 4}" text-anchor="end">${t.ruleId}</text>
${bar('baseline', 0)}${bar('proposed', half)}</g>`;
  });
  const ticks = x.ticks(8).map(
    (tick) => html`<g class="axis"><line class="grid" x1="${round(x(tick))}" x2="${round(x(tick))}" y1="${TOP - 4}" y2="${height - 24}"></line><text x="${round(x(tick))}" y="${height - 10}" text-anchor="middle">${tick}</text></g>`,
  );
  const legend = (['baseline', 'proposed'] as const).map(
    (side, i) => html`<g data-legend="${side}"><rect x="${LABEL + i * 300}" y="6" width="12" height="12" fill="${POLICY_FILLS[side]}"></rect><text x="${LABEL + i * 300 + 16}" y="16">${names[side]}</text></g>`,
  );
  const description = totals.map((t) => `${t.ruleId}: ${t.baseline} before, ${t.proposed} after`).join('; ');
  return html`<figure id="rule-chart">
<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${WIDTH} ${height}" width="${WIDTH}" height="${height}" role="img" aria-labelledby="rule-chart-title rule-chart-desc">
<title id="rule-chart-title">Advisories per rule under each policy</title>
<desc id="rule-chart-desc">${description}</desc>
${legend}${ticks}${rows}
</svg>
<figcaption>Each rule's advisories over all replayed orders, under the baseline (grey) and the new policy (blue), all indicators together. The table has them by indicator.</figcaption>
</figure>`;
}

/** The histogram's x range: 70 % (or lower if readings are) to 100 %. */
function spo2Domain(histogram: readonly number[]): [number, number] {
  const lowest = histogram.findIndex((count) => count > 0);
  return [Math.min(70, lowest < 0 ? 70 : lowest), 100];
}

export function renderSpo2Chart(histogram: readonly number[], policies: { baseline: PolicyLabel; proposed: PolicyLabel }): HtmlFragment {
  const total = histogram.reduce((sum, n) => sum + n, 0);
  if (total === 0) {
    return html`<p id="spo2-chart-empty" class="muted">No order had a current SpO2 reading, so there is nothing to chart.</p>`;
  }
  const [from, to] = spo2Domain(histogram);
  const LEFT = 200;
  const STRIP = 22;
  const STRIPS_TOP = 10;
  const PLOT_TOP = STRIPS_TOP + 2 * STRIP + 16;
  const PLOT_BOTTOM = PLOT_TOP + 240;
  const height = PLOT_BOTTOM + 40;
  // One band per whole percent, from `from` to `to` inclusive; a range a–b covers a's band to b's.
  const x = scaleLinear().domain([from, to + 1]).range([LEFT, WIDTH - 20]);
  const maxCount = Math.max(1, ...histogram);
  const y = scaleLinear().domain([0, maxCount]).range([PLOT_BOTTOM, PLOT_TOP]).nice();
  const bars = histogram.flatMap((count, percent) =>
    percent < from || count === 0
      ? []
      : [html`<rect data-spo2-bin="${percent}" data-count="${count}" x="${round(x(percent) + 1)}" y="${round(y(count))}" width="${round(x(percent + 1) - x(percent) - 2)}" height="${round(PLOT_BOTTOM - y(count))}" fill="#4a4a4a"><title>SpO2 ${percent} %: ${count} orders</title></rect>`],
  );
  const strip = (side: 'baseline' | 'proposed', index: number) => {
    const p = policies[side];
    const top = STRIPS_TOP + index * STRIP;
    const band = (kind: 'standard' | 'hypercapnic-risk', r: { lowPercent: number; highPercent: number }, fill: string) =>
      html`<rect data-band="${kind}" data-policy="${side}" data-low="${r.lowPercent}" data-high="${r.highPercent}" x="${round(x(r.lowPercent))}" y="${top + 2}" width="${round(x(r.highPercent + 1) - x(r.lowPercent))}" height="${STRIP - 4}" fill="${fill}" fill-opacity="0.55"><title>${p.id}: ${kind === 'standard' ? 'standard' : 'hypercapnic risk'} ${r.lowPercent}–${r.highPercent} %</title></rect>`;
    return html`<g data-policy-bands="${side}"><text x="${LEFT - 8}" y="${top + STRIP / 2 + 4}" text-anchor="end">${p.id}</text>
${band('hypercapnic-risk', p.hypercapnicRiskRange, '#d9a441')}${band('standard', p.standardRange, '#5b9a5b')}</g>`;
  };
  // The new policy's standard band, shaded faintly behind the bars too, so readings that change sides stand out.
  const behind = (side: 'baseline' | 'proposed', fill: string) => {
    const r = policies[side].standardRange;
    return html`<rect data-plot-band="${side}" x="${round(x(r.lowPercent))}" y="${PLOT_TOP}" width="${round(x(r.highPercent + 1) - x(r.lowPercent))}" height="${PLOT_BOTTOM - PLOT_TOP}" fill="${fill}" fill-opacity="0.12"></rect>`;
  };
  const xTicks = Array.from({ length: to - from + 1 }, (_, i) => from + i)
    .filter((p) => p % 2 === 0)
    .map((p) => html`<text x="${round((x(p) + x(p + 1)) / 2)}" y="${PLOT_BOTTOM + 16}" text-anchor="middle">${p}</text>`);
  const yTicks = y.ticks(5).map(
    (tick) => html`<g class="axis"><line class="grid" x1="${LEFT}" x2="${WIDTH - 20}" y1="${round(y(tick))}" y2="${round(y(tick))}"></line><text x="${LEFT - 6}" y="${round(y(tick)) + 4}" text-anchor="end">${tick}</text></g>`,
  );
  return html`<figure id="spo2-chart">
<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${WIDTH} ${height}" width="${WIDTH}" height="${height}" role="img" aria-labelledby="spo2-chart-title spo2-chart-desc">
<title id="spo2-chart-title">SpO2 at order time against each policy's target ranges</title>
<desc id="spo2-chart-desc">Orders by current SpO2 at the time they were signed, ${total} in all; strips show each policy's standard and hypercapnic-risk ranges.</desc>
${strip('baseline', 0)}${strip('proposed', 1)}
${behind('baseline', '#7a7a7a')}${behind('proposed', '#0b4f8a')}
${yTicks}${bars}${xTicks}
<text x="${round((LEFT + WIDTH - 20) / 2)}" y="${PLOT_BOTTOM + 34}" text-anchor="middle">SpO2 at order time (%)</text>
</svg>
<figcaption>Orders by the patient's current SpO2 when the order was signed (the newest reading within the baseline's freshness window). The strips show each policy's standard (green) and hypercapnic-risk (amber) ranges; the plot shades both standard ranges. Readings between the two standard ranges are where the advice can change.</figcaption>
</figure>`;
}
