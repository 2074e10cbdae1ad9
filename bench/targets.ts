import type { BulkMeasurements } from './bulk-cases.js';
import type { ColdStartResult } from './cold-start.js';
import type { HttpTargetMeasurements } from './http-targets.js';
import type { MicroResult } from './micro.js';

/**
 * Issue 9's targets, each judged PASS or FAIL from figures measured side by side in one run. Nothing
 * here times anything: it reads figures it is given, so the judgement can be tested on invented ones.
 */

export type TargetId =
  | 'http-mix-throughput'
  | 'http-large-throughput'
  | 'http-half-rate-p99'
  | 'engine-examples'
  | 'engine-large'
  | 'bulk-throughput'
  | 'bulk-memory'
  | 'cold-start-healthz'
  | 'cold-start-hook';

export interface TargetSpec {
  readonly id: TargetId;
  readonly title: string;
  /** `min`: the value must be at least the limit; `max`: at most; `below`: strictly under. */
  readonly rule: 'min' | 'max' | 'below';
  readonly limit: number;
  readonly unit: 'ratio' | 'seconds';
}

/** The limits are issue 9's "Targets", except bulk-memory's 1.2, which is this bench's reading of "flat". */
export const TARGETS: readonly TargetSpec[] = [
  { id: 'http-mix-throughput', title: 'Hook throughput, examples mix, × baseline', rule: 'min', limit: 0.85, unit: 'ratio' },
  { id: 'http-large-throughput', title: 'Hook throughput, 70 KB request, × baseline', rule: 'min', limit: 0.85, unit: 'ratio' },
  { id: 'http-half-rate-p99', title: 'p99 at half the saturating rate, × baseline p99', rule: 'max', limit: 1.5, unit: 'ratio' },
  { id: 'engine-examples', title: 'evaluateHook × JSON.parse, median over the examples', rule: 'max', limit: 3, unit: 'ratio' },
  { id: 'engine-large', title: 'evaluateHook × JSON.parse, 70 KB request', rule: 'max', limit: 3, unit: 'ratio' },
  { id: 'bulk-throughput', title: 'Bulk simulate throughput × read-and-parse loop', rule: 'min', limit: 0.5, unit: 'ratio' },
  { id: 'bulk-memory', title: 'Bulk simulate peak memory, larger export × smaller', rule: 'max', limit: 1.2, unit: 'ratio' },
  { id: 'cold-start-healthz', title: 'Cold start to first 200 on /healthz', rule: 'below', limit: 1.5, unit: 'seconds' },
  { id: 'cold-start-hook', title: 'Cold start to first 200 on a hook call', rule: 'below', limit: 1.5, unit: 'seconds' },
];

/** A target's limit, as it is judged: the one place prose about a target reads its number from. */
export function targetLimit(id: TargetId): number {
  const spec = TARGETS.find((t) => t.id === id);
  if (spec === undefined) {
    throw new Error(`bench/targets.ts has no ${id} target`);
  }
  return spec.limit;
}

export interface TargetFigure {
  readonly id: TargetId;
  readonly value: number;
  /** How the value was made, in a few words (what over what). */
  readonly basis: string;
  /** Set when the figure cannot pass whatever its value, e.g. the service refused calls under load. */
  readonly failedBecause?: string;
}

export interface JudgedTarget extends TargetSpec {
  readonly value: number | undefined;
  readonly basis: string;
  readonly verdict: 'PASS' | 'FAIL' | 'not measured';
}

export function judge(spec: TargetSpec, value: number | undefined): JudgedTarget['verdict'] {
  if (value === undefined || !Number.isFinite(value)) {
    return 'not measured';
  }
  const ok = spec.rule === 'min' ? value >= spec.limit : spec.rule === 'max' ? value <= spec.limit : value < spec.limit;
  return ok ? 'PASS' : 'FAIL';
}

export function judgeAll(figures: readonly TargetFigure[]): JudgedTarget[] {
  return TARGETS.map((spec) => {
    const figure = figures.find((f) => f.id === spec.id);
    const verdict = judge(spec, figure?.value);
    const basis = [figure?.basis ?? '', figure?.failedBecause ?? ''].filter((part) => part !== '').join('; ');
    return { ...spec, value: figure?.value, basis, verdict: figure?.failedBecause !== undefined && verdict === 'PASS' ? 'FAIL' : verdict };
  });
}

export function median(values: readonly number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  if (sorted.length === 0) {
    return Number.NaN;
  }
  const mid = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? (sorted[mid] as number) : ((sorted[mid - 1] as number) + (sorted[mid] as number)) / 2;
}

/** autocannon reports latency in whole milliseconds; a p99 under 1 ms is counted as 1 ms. */
const MIN_P99_MS = 1;

/** Calls answered 2xx a second: a quick refusal (503) must not count as throughput. */
export function answeredPerSecond(result: HttpTargetMeasurements['mix']['service']): number {
  return result.durationS > 0 ? result.completed / result.durationS : 0;
}

/** "3 of 240 calls refused (3 × 503)" when the service answered any call with other than 2xx. */
export function refusedCalls(result: HttpTargetMeasurements['mix']['service']): string | undefined {
  if (result.non2xx === 0) {
    return undefined;
  }
  const codes = Object.entries(result.statusCodes ?? {})
    .filter(([code]) => !code.startsWith('2'))
    .map(([code, count]) => `${count} × ${code}`)
    .join(', ');
  return `the service answered ${result.non2xx} of ${result.completed + result.non2xx} calls with other than 2xx${codes === '' ? '' : ` (${codes})`}`;
}

export function httpFigures(http: HttpTargetMeasurements): TargetFigure[] {
  const rps = (pair: HttpTargetMeasurements['mix']): number => answeredPerSecond(pair.service) / answeredPerSecond(pair.baseline);
  const p99 = (ms: number): number => Math.max(ms, MIN_P99_MS);
  const half = http.halfRatePair;
  const refused = (pair: HttpTargetMeasurements['mix']): { failedBecause?: string } => {
    const why = refusedCalls(pair.service);
    return why === undefined ? {} : { failedBecause: why };
  };
  const basis = (pair: HttpTargetMeasurements['mix']): string =>
    `${Math.round(answeredPerSecond(pair.service))} / ${Math.round(answeredPerSecond(pair.baseline))} calls answered 2xx a second`;
  return [
    { id: 'http-mix-throughput', value: rps(http.mix), basis: basis(http.mix), ...refused(http.mix) },
    { id: 'http-large-throughput', value: rps(http.large), basis: basis(http.large), ...refused(http.large) },
    {
      id: 'http-half-rate-p99',
      value: p99(half.service.latencyMs.p99) / p99(half.baseline.latencyMs.p99),
      basis: `${half.service.latencyMs.p99} / ${half.baseline.latencyMs.p99} ms at ${http.halfRate} req/s`,
      ...refused(half),
    },
  ];
}

/** The engine ratio of one example: medians of `evaluateHook` over `JSON.parse` alone. */
export function engineRatio(m: MicroResult): number {
  return m.parseOnly === undefined ? Number.NaN : m.evaluate.p50Us / m.parseOnly.p50Us;
}

export function engineFigures(examples: readonly MicroResult[], large: MicroResult | undefined): TargetFigure[] {
  const figures: TargetFigure[] = [];
  if (examples.length > 0) {
    const ratios = examples.map(engineRatio);
    figures.push({
      id: 'engine-examples',
      value: median(ratios),
      basis: `median of ${examples.length} examples (${Math.min(...ratios).toFixed(1)}–${Math.max(...ratios).toFixed(1)})`,
    });
  }
  if (large !== undefined) {
    figures.push({
      id: 'engine-large',
      value: engineRatio(large),
      basis: `${Math.round(large.evaluate.p50Us)} / ${(large.parseOnly?.p50Us ?? Number.NaN).toFixed(0)} µs`,
    });
  }
  return figures;
}

export function bulkFigures(bulk: BulkMeasurements): TargetFigure[] {
  const linesPerS = (r: BulkMeasurements['read']): number => r.lines / (r.ms / 1000);
  return [
    {
      id: 'bulk-throughput',
      value: linesPerS(bulk.simulate) / linesPerS(bulk.read),
      basis: `${Math.round(linesPerS(bulk.simulate))} / ${Math.round(linesPerS(bulk.read))} lines/s, ${bulk.smallOrders} orders`,
    },
    {
      id: 'bulk-memory',
      value: bulk.simulateLarge.maxRssKb / bulk.simulate.maxRssKb,
      basis: `${Math.round(bulk.simulateLarge.maxRssKb / 1024)} MB at ${bulk.largeOrders} orders / ${Math.round(bulk.simulate.maxRssKb / 1024)} MB at ${bulk.smallOrders}`,
    },
  ];
}

export function coldStartFigures(cold: ColdStartResult): TargetFigure[] {
  const s = (values: readonly number[]): number => median(values) / 1000;
  return [
    { id: 'cold-start-healthz', value: s(cold.healthzMs), basis: `median of ${cold.healthzMs.length} starts` },
    { id: 'cold-start-hook', value: s(cold.hookMs), basis: `median of ${cold.hookMs.length} starts` },
  ];
}

export function formatValue(target: Pick<TargetSpec, 'unit'>, value: number | undefined): string {
  if (value === undefined || !Number.isFinite(value)) {
    return '–';
  }
  return target.unit === 'seconds' ? `${value.toFixed(2)} s` : `${value >= 10 ? value.toFixed(1) : value.toFixed(2)} ×`;
}

export function formatLimit(target: TargetSpec): string {
  const sign = target.rule === 'min' ? '≥' : target.rule === 'max' ? '≤' : '<';
  return `${sign} ${formatValue(target, target.limit)}`;
}

/** One line per target for the terminal: `PASS  title: value (limit; basis)`. */
export function targetLines(judged: readonly JudgedTarget[]): string[] {
  return judged.map(
    (t) => `${t.verdict.padEnd(4)}  ${t.title}: ${formatValue(t, t.value)} (target ${formatLimit(t)}${t.basis === '' ? '' : `; ${t.basis}`})`,
  );
}

/** The "before" figures kept from one full run on the code before issue 9's speed work. */
export interface BeforeFigures {
  readonly commit: string;
  readonly date: string;
  readonly note: string;
  readonly figures: readonly TargetFigure[];
}
