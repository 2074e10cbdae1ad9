import { scaleLinear, scaleUtc } from 'd3-scale';
import { line } from 'd3-shape';
import type { AdvisorySeries, OxygenStep, Spo2Point } from '../store/store.js';
import { html, joinHtml, type HtmlFragment } from './html.js';
import { formatClock, formatDay, formatReviewTime } from './review-time.js';

/**
 * The advisory page's chart, drawn on the server as SVG: SpO2 over time with the target band shaded,
 * and below it, on the same time axis, the oxygen device, flow and FiO2 in force. Every point, the
 * band, the axis ticks and the oxygen steps carry data attributes so a browser test (or a reader with
 * a screen reader, through the table that follows) can check what is drawn. Pure.
 */

const WIDTH = 960;
const MARGIN_LEFT = 56;
const MARGIN_RIGHT = 20;
const SPO2_TOP = 16;
const SPO2_BOTTOM = 256;
const AXIS_Y = SPO2_BOTTOM + 24;
const OXYGEN_TOP = AXIS_Y + 28;
const OXYGEN_ROW = 26;
const HEIGHT = OXYGEN_TOP + OXYGEN_ROW + 24;
/** Half an hour either side when every time is the same instant, so the axis has a width. */
const SINGLE_INSTANT_PAD_MS = 30 * 60_000;

export interface Spo2ChartInput {
  readonly series: AdvisorySeries;
  /** When the card was issued: marked on the time axis. */
  readonly issuedAt: string;
  readonly timeZone: string;
}

interface TimedPoint extends Spo2Point {
  readonly ms: number;
}

interface TimedStep extends OxygenStep {
  readonly ms: number;
}

function timed<T extends { readonly at: string }>(items: readonly T[]): (T & { readonly ms: number })[] {
  return items
    .map((item) => ({ ...item, ms: Date.parse(item.at) }))
    .filter((item) => Number.isFinite(item.ms))
    .sort((a, b) => a.ms - b.ms);
}

/** "nasal cannula · 2 L/min" or "Venturi mask · FiO2 0.28". */
export function describeOxygenStep(step: OxygenStep): string {
  const parts = [step.device];
  if (step.flowLPerMin !== undefined) {
    parts.push(`${step.flowLPerMin} L/min`);
  }
  if (step.fio2Fraction !== undefined) {
    parts.push(`FiO2 ${step.fio2Fraction.toFixed(2)}`);
  }
  return parts.join(' · ');
}

const round = (value: number): number => Math.round(value * 100) / 100;

/** The lowest value the SpO2 axis shows: 80 % or lower, in fives, to include every reading and the band. */
function spo2AxisLow(points: readonly TimedPoint[], target: AdvisorySeries['target']): number {
  const lowest = Math.min(80, ...points.map((p) => p.spo2Percent), target?.lowPercent ?? 100);
  return Math.max(0, Math.floor((lowest - 2) / 5) * 5);
}

function readingCounts(points: readonly TimedPoint[], target: AdvisorySeries['target']): string {
  if (target === undefined) {
    return `${points.length} reading(s); no target band was recorded with this advisory.`;
  }
  const below = points.filter((p) => p.spo2Percent < target.lowPercent).length;
  const above = points.filter((p) => p.spo2Percent > target.highPercent).length;
  const within = points.length - below - above;
  return (
    `${points.length} reading(s) against the target ${target.lowPercent}–${target.highPercent} %: ` +
    `${within} within, ${below} below, ${above} above.`
  );
}

function readingsTable(points: readonly TimedPoint[], steps: readonly TimedStep[], timeZone: string): HtmlFragment {
  const readingRows = points.map(
    (p) => html`<tr data-reading-row><td>${formatReviewTime(p.at, timeZone)}</td><td class="num">${p.spo2Percent} %</td></tr>`,
  );
  const stepRows = steps.map(
    (s) => html`<tr data-step-row><td>${formatReviewTime(s.at, timeZone)}</td><td>${describeOxygenStep(s)}</td></tr>`,
  );
  return html`<details id="chart-tables"><summary>The readings and oxygen settings as tables (${points.length} reading(s), ${steps.length} setting(s))</summary>
${points.length === 0 ? '' : html`<table id="spo2-readings-table"><caption>SpO2 readings stored with this advisory</caption>
<thead><tr><th>Time</th><th class="num">SpO2</th></tr></thead><tbody>${readingRows}</tbody></table>`}
${steps.length === 0
    ? html`<p class="muted" id="oxygen-steps-empty">No oxygen settings stored with this advisory.</p>`
    : html`<table id="oxygen-steps-table"><caption>Oxygen in force from each time</caption>
<thead><tr><th>From</th><th>Device, flow, FiO2</th></tr></thead><tbody>${stepRows}</tbody></table>`}
</details>`;
}

/** The chart and its text table, or a plain sentence when no reading was stored. */
export function renderSpo2Chart(input: Spo2ChartInput): HtmlFragment {
  const { timeZone } = input;
  const points = timed(input.series.spo2);
  const steps = timed(input.series.oxygen);
  const target = input.series.target;
  if (points.length === 0) {
    return html`<figure id="spo2-chart" data-chart-empty>
<p class="muted">SpO2 chart: no readings stored with this advisory.</p>
${readingsTable(points, steps, timeZone)}</figure>`;
  }
  const issuedMs = Date.parse(input.issuedAt);
  const times = [...points.map((p) => p.ms), ...steps.map((s) => s.ms), ...(Number.isFinite(issuedMs) ? [issuedMs] : [])];
  let start = Math.min(...times);
  let end = Math.max(...times);
  if (start === end) {
    start -= SINGLE_INSTANT_PAD_MS;
    end += SINGLE_INSTANT_PAD_MS;
  }
  const x = scaleUtc().domain([new Date(start), new Date(end)]).range([MARGIN_LEFT, WIDTH - MARGIN_RIGHT]);
  const y = scaleLinear().domain([spo2AxisLow(points, target), 100]).range([SPO2_BOTTOM, SPO2_TOP]);

  const yTicks = y.ticks(6).map(
    (value) => html`<g class="axis" data-y-tick="${value}" data-y="${round(y(value))}">
<line class="grid" x1="${MARGIN_LEFT}" x2="${WIDTH - MARGIN_RIGHT}" y1="${round(y(value))}" y2="${round(y(value))}"></line>
<text x="${MARGIN_LEFT - 6}" y="${round(y(value)) + 4}" text-anchor="end">${value} %</text></g>`,
  );
  let lastDay = '';
  const xTicks = x.ticks(7).map((tick) => {
    const day = formatDay(tick, timeZone);
    const label = day === lastDay ? formatClock(tick, timeZone) : `${day} ${formatClock(tick, timeZone)}`;
    lastDay = day;
    const at = round(x(tick));
    return html`<g class="axis" data-x-tick="${tick.toISOString()}"><line x1="${at}" x2="${at}" y1="${SPO2_BOTTOM}" y2="${SPO2_BOTTOM + 5}"></line>
<text x="${at}" y="${AXIS_Y - 4}" text-anchor="middle">${label}</text></g>`;
  });

  const band =
    target === undefined
      ? html``
      : html`<rect data-target-band data-low="${target.lowPercent}" data-high="${target.highPercent}" x="${MARGIN_LEFT}" width="${WIDTH - MARGIN_LEFT - MARGIN_RIGHT}" y="${round(y(target.highPercent))}" height="${round(y(target.lowPercent) - y(target.highPercent))}" fill="#d8ecd8"><title>Target ${target.lowPercent}–${target.highPercent} %</title></rect>`;

  const path = line<TimedPoint>()
    .x((p) => x(p.ms))
    .y((p) => y(p.spo2Percent))(points);
  const markers = points.map(
    (p) =>
      html`<circle data-spo2-point data-at="${p.at}" data-value="${p.spo2Percent}" cx="${round(x(p.ms))}" cy="${round(y(p.spo2Percent))}" r="4" fill="#0b4f8a"><title>${formatReviewTime(p.at, timeZone)}: SpO2 ${p.spo2Percent} %</title></circle>`,
  );
  const issued = Number.isFinite(issuedMs)
    ? html`<g data-issued-at="${input.issuedAt}"><line x1="${round(x(issuedMs))}" x2="${round(x(issuedMs))}" y1="${SPO2_TOP}" y2="${OXYGEN_TOP + OXYGEN_ROW}" stroke="#a11d1d" stroke-dasharray="4 3"></line>
${x(issuedMs) > WIDTH / 2
        ? html`<text x="${round(x(issuedMs)) - 4}" y="${SPO2_TOP + 10}" fill="#a11d1d" text-anchor="end">card issued</text>`
        : html`<text x="${round(x(issuedMs)) + 4}" y="${SPO2_TOP + 10}" fill="#a11d1d">card issued</text>`}</g>`
    : html``;

  const stepMarks = steps.map((step, index) => {
    const from = x(step.ms);
    const to = x(steps[index + 1]?.ms ?? end);
    const label = describeOxygenStep(step);
    // A label wider than its segment would run into the next one; the table and <title> still carry it.
    const fits = to - from > label.length * 6.2 + 8;
    return html`<g data-oxygen-step data-index="${index}" data-at="${step.at}" data-device="${step.device}"${step.flowLPerMin === undefined ? '' : html` data-flow="${step.flowLPerMin}"`}${step.fio2Fraction === undefined ? '' : html` data-fio2="${step.fio2Fraction}"`}>
<rect x="${round(from)}" y="${OXYGEN_TOP}" width="${round(Math.max(to - from, 1))}" height="${OXYGEN_ROW}" fill="${index % 2 === 0 ? '#e3ecf5' : '#cfdeed'}" stroke="#7a94ad"><title>${formatReviewTime(step.at, timeZone)}: ${label}</title></rect>
${fits ? html`<text x="${round(from) + 4}" y="${OXYGEN_TOP + 17}">${label}</text>` : ''}</g>`;
  });

  const first = points[0] as TimedPoint;
  const last = points[points.length - 1] as TimedPoint;
  const counts = readingCounts(points, target);
  const description =
    `SpO2 from ${formatReviewTime(first.at, timeZone)} to ${formatReviewTime(last.at, timeZone)}, ` +
    `lowest ${Math.min(...points.map((p) => p.spo2Percent))} %, highest ${Math.max(...points.map((p) => p.spo2Percent))} %. ${counts} ` +
    (steps.length === 0 ? 'No oxygen settings stored.' : `Oxygen: ${steps.map((s) => describeOxygenStep(s)).join(', then ')}.`);

  return html`<figure id="spo2-chart">
<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${WIDTH} ${HEIGHT}" width="${WIDTH}" height="${HEIGHT}" role="img" aria-labelledby="spo2-chart-title spo2-chart-desc" data-y-domain-low="${y.domain()[0]}" data-y-domain-high="${y.domain()[1]}">
<title id="spo2-chart-title">SpO2 over time, with the target band and the oxygen in force</title>
<desc id="spo2-chart-desc">${description}</desc>
${band}
${joinHtml(yTicks)}
<line class="axis" x1="${MARGIN_LEFT}" x2="${WIDTH - MARGIN_RIGHT}" y1="${SPO2_BOTTOM}" y2="${SPO2_BOTTOM}" stroke="#888"></line>
${joinHtml(xTicks)}
<text x="${WIDTH - MARGIN_RIGHT}" y="${AXIS_Y + 12}" text-anchor="end" class="muted">time (${timeZone})</text>
<path d="${path ?? ''}" fill="none" stroke="#0b4f8a" stroke-width="1.5" data-spo2-line></path>
${joinHtml(markers)}
<text x="${MARGIN_LEFT}" y="${OXYGEN_TOP - 6}">Oxygen in force</text>
${steps.length === 0 ? html`<text x="${MARGIN_LEFT + 110}" y="${OXYGEN_TOP - 6}" class="muted">none stored</text>` : joinHtml(stepMarks)}
${issued}
</svg>
<figcaption>${counts}</figcaption>
${readingsTable(points, steps, timeZone)}
</figure>`;
}
