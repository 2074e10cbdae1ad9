import type { ProfileSummary } from './cpu-profile.js';
import type { LoadResult } from './load-test.js';
import type { AuditMeasurements } from './audit-cases.js';
import type { AuditMicroResult } from './audit-micro.js';
import type { MicroResult } from './micro.js';
import type { BulkMeasurements } from './bulk-cases.js';
import type { ColdStartResult } from './cold-start.js';
import type { HttpTargetMeasurements } from './http-targets.js';
import { targetLimit, type TargetFigure } from './targets.js';

/**
 * Turns one run's measurements into ratios and plain statements. Nothing here is a figure of its
 * own: every number printed comes from the run it describes.
 */

/** CDS Hooks 2.0 §Providing FHIR Resources: services answer "on the order of 500 ms". */
export const CDS_HOOKS_BUDGET_MS = 500;
/** Run-to-run spread on these machines (toolchain.md "Baseline figures"): beyond it, say so. */
export const NOISE_PERCENT = 15;

export interface Machine {
  readonly date: string;
  readonly node: string;
  readonly cpus: number;
  readonly cpuModel: string;
  readonly loadAverage: readonly number[];
  /** The same, when the run ended. */
  readonly loadAverageEnd: readonly number[];
  readonly platform: string;
  readonly commit: string;
  /** Paths under src/, cards/, policies/, examples/ that differed from the commit. */
  readonly uncommitted: readonly string[];
}

export interface LoadRow {
  readonly result: LoadResult;
  readonly kind: 'baseline' | 'reference' | 'service';
  /** Bytes of one answer, from the check call before the load. */
  readonly responseBytes: number;
  /** Cards (hook calls) or services (discovery) in that answer. */
  readonly items: number | undefined;
  /** Lines the service logged during this case's warm-up and load. */
  readonly logLines: number;
}

export interface BaselineSummary {
  readonly first: LoadResult;
  readonly last: LoadResult;
  readonly meanReqPerSec: number;
  /** |last - first| as a percent of their mean. */
  readonly driftPercent: number;
}

export function summariseBaseline(first: LoadResult, last: LoadResult): BaselineSummary {
  const mean = (first.reqPerSec + last.reqPerSec) / 2;
  return { first, last, meanReqPerSec: mean, driftPercent: (100 * Math.abs(last.reqPerSec - first.reqPerSec)) / mean };
}

export interface RunReport {
  readonly machine: Machine;
  readonly settings: {
    readonly runner: string;
    readonly connections: number;
    readonly durationS: number;
    readonly warmupS: number;
    readonly buildS: number | undefined;
    readonly microIterations: number;
    /** Throwaway signed calls to each process before the issue-9 HTTP loads; absent from older runs. */
    readonly primeCalls?: number;
    /** Throwaway pure-path calls in the micro-benchmark's process before its loops; absent from older runs. */
    readonly microPrimeCalls?: number;
    /** Wall time of the whole run up to its report, seconds; absent from older runs. */
    readonly elapsedS?: number;
  };
  readonly rows: readonly LoadRow[];
  readonly baseline: BaselineSummary;
  /** The plain JSON echo of the largest order-sign request and its answer. */
  readonly echo: LoadResult | undefined;
  readonly logLinesDuringLoad: number;
  readonly micro: readonly MicroResult[];
  readonly serviceProfile: ProfileSummary | undefined;
  readonly microProfile: ProfileSummary | undefined;
  readonly profiledExample: string | undefined;
  /** The audit trail's cost (bench/audit-cases.ts, bench/audit-micro.ts); absent from older runs. */
  readonly audit?: AuditReport;
  /** Issue 9's targets and what they were computed from; absent from older runs. */
  readonly targets?: TargetsReport;
}

export interface TargetsReport {
  readonly figures: readonly TargetFigure[];
  readonly http?: Omit<HttpTargetMeasurements, 'problems'>;
  /** The pure pipeline on the 70 KB request (also a row of `micro`). */
  readonly largeMicroName?: string;
  readonly bulk?: BulkMeasurements;
  readonly coldStart?: ColdStartResult;
}

export interface AuditReport {
  readonly http: Omit<AuditMeasurements, 'problems'>;
  readonly micro: readonly AuditMicroResult[];
}

export const whole = (value: number): string => Math.round(value).toLocaleString('en-GB');
export const fixed = (value: number, digits: number): string => value.toFixed(digits);
export const ratio = (value: number): string => `${value >= 10 ? fixed(value, 1) : fixed(value, 2)} ×`;
export const micros = (value: number): string => (value >= 100 ? whole(value) : fixed(value, 1));

export function markdownTable(header: readonly string[], rows: readonly (readonly string[])[]): string {
  const line = (cells: readonly string[]): string => `| ${cells.join(' | ')} |`;
  return [line(header), line(header.map(() => '---')), ...rows.map(line)].join('\n');
}

export function loadTable(report: RunReport): string {
  const base = report.baseline.meanReqPerSec;
  const rows = report.rows.map((row) => {
    const r = row.result;
    const echo =
      report.echo !== undefined && r.method === 'POST' && row.kind === 'service'
        ? ratio(r.reqPerSec / report.echo.reqPerSec)
        : '';
    return [
      r.label,
      r.requestBytes === 0 ? '' : whole(r.requestBytes),
      whole(row.responseBytes),
      row.items === undefined ? '' : String(row.items),
      whole(r.reqPerSec),
      String(r.latencyMs.p50),
      String(r.latencyMs.p97_5),
      String(r.latencyMs.p99),
      ratio(r.reqPerSec / base),
      echo,
      fixed((100 * r.latencyMs.p99) / CDS_HOOKS_BUDGET_MS, 1),
    ];
  });
  return markdownTable(
    [
      'case',
      'request B',
      'answer B',
      'cards / services',
      'req/s',
      'p50 ms',
      'p97.5 ms',
      'p99 ms',
      '× baseline req/s',
      '× JSON echo req/s',
      'p99 % of 500 ms',
    ],
    rows,
  );
}

/**
 * Medians carry the ratios: on a shared machine a pause lands on whichever loop was running, and
 * the mean takes it in full. The p99 shows how far such pauses reach.
 */
export function microTable(micro: readonly MicroResult[]): string {
  return markdownTable(
    [
      'example',
      'request B',
      'cards',
      'JSON parse+stringify µs median (baseline)',
      'evaluateHook µs median / p99',
      '× baseline',
      'JSON.parse µs median',
      'evaluateHook × JSON.parse',
      'whole pure path µs median / p99',
      '× baseline',
    ],
    micro.map((m) => [
      m.name,
      whole(m.requestBytes),
      String(m.cards),
      micros(m.baseline.p50Us),
      `${micros(m.evaluate.p50Us)} / ${micros(m.evaluate.p99Us)}`,
      ratio(m.evaluate.p50Us / m.baseline.p50Us),
      m.parseOnly === undefined ? 'not measured' : micros(m.parseOnly.p50Us),
      m.parseOnly === undefined ? '' : ratio(m.evaluate.p50Us / m.parseOnly.p50Us),
      `${micros(m.wholePath.p50Us)} / ${micros(m.wholePath.p99Us)}`,
      ratio(m.wholePath.p50Us / m.baseline.p50Us),
    ]),
  );
}

/** Plain sentences about the run, each computed from it. */
export function findings(report: RunReport): string[] {
  const lines: string[] = [];
  const base = report.baseline;
  const hookRows = report.rows.filter((row) => row.kind === 'service' && row.result.method === 'POST');
  const worst = [...hookRows].sort((a, b) => b.result.latencyMs.p99 - a.result.latencyMs.p99)[0];
  if (worst !== undefined) {
    const within = hookRows.every((row) => row.result.latencyMs.p99 < CDS_HOOKS_BUDGET_MS);
    lines.push(
      `${within ? 'Every' : 'Not every'} hook call case kept p99 under the ${CDS_HOOKS_BUDGET_MS} ms CDS Hooks budget ` +
        `with prefetch supplied and ${report.settings.connections} calls in flight at once: the worst p99 was ` +
        `${worst.result.latencyMs.p99} ms (${worst.result.label}), ${fixed((100 * worst.result.latencyMs.p99) / CDS_HOOKS_BUDGET_MS, 1)} % of the budget.`,
    );
    const perCall = hookRows.map((row) => ({ label: row.result.label, ms: 1000 / row.result.reqPerSec }));
    const cheapest = [...perCall].sort((a, b) => a.ms - b.ms)[0];
    const dearest = [...perCall].sort((a, b) => b.ms - a.ms)[0];
    if (cheapest !== undefined && dearest !== undefined) {
      lines.push(
        `With its one process kept busy, the service spent from ${fixed(cheapest.ms, 1)} ms (${cheapest.label}) to ` +
          `${fixed(dearest.ms, 1)} ms (${dearest.label}) of wall time per call (1 / throughput). On a shared machine that ` +
          `includes time the process waited for a core, so it is longer than the in-process medians below; the p50 and ` +
          `p99 are longer still because each call also waits behind the others in flight.`,
      );
    }
    const slowest = [...hookRows].sort((a, b) => a.result.reqPerSec - b.result.reqPerSec)[0];
    if (slowest !== undefined) {
      lines.push(
        `The slowest hook case, ${slowest.result.label}, served ${ratio(slowest.result.reqPerSec / base.meanReqPerSec)} ` +
          `the baseline's throughput (${whole(slowest.result.reqPerSec)} against ${whole(base.meanReqPerSec)} req/s)` +
          (report.echo === undefined
            ? '.'
            : ` and ${ratio(slowest.result.reqPerSec / report.echo.reqPerSec)} that of a bare express JSON echo of the largest request and its answer (${whole(report.echo.reqPerSec)} req/s).`),
      );
    }
  }
  lines.push(
    `The baseline (GET /healthz) gave ${whole(base.first.reqPerSec)} req/s before the hook cases and ` +
      `${whole(base.last.reqPerSec)} after: ${fixed(base.driftPercent, 1)} % apart` +
      (base.driftPercent > NOISE_PERCENT
        ? `, more than the ${NOISE_PERCENT} % these machines vary by, so the machine was busier at one end of the run; treat the ratios with care.`
        : `, within the ${NOISE_PERCENT} % these machines vary by. Ratios use their mean.`),
  );
  const logged = report.rows.filter((row) => row.logLines > 0);
  lines.push(
    report.logLinesDuringLoad === 0
      ? 'The service wrote no log line during the loads (LOG_LEVEL=warn), so logging is not in these figures.'
      : `The service wrote ${whole(report.logLinesDuringLoad)} log lines during the loads at LOG_LEVEL=warn ` +
          `(${logged.map((row) => `${row.result.label}: ${whole(row.logLines)}`).join(', ')}); they are part of these figures.`,
  );
  return lines;
}

/** The spread of the micro-benchmark's ratios over the examples, as one sentence. */
export function microFinding(micro: readonly MicroResult[]): string {
  const ratios = micro.map((m) => ({ name: m.name, evaluate: m.evaluate.p50Us / m.baseline.p50Us, whole: m.wholePath.p50Us / m.baseline.p50Us }));
  const byEvaluate = [...ratios].sort((a, b) => a.evaluate - b.evaluate);
  const low = byEvaluate[0];
  const high = byEvaluate[byEvaluate.length - 1];
  if (low === undefined || high === undefined) {
    return 'No example was run in process.';
  }
  const slowest = [...micro].sort((a, b) => b.evaluate.p50Us - a.evaluate.p50Us)[0];
  return (
    `In process, \`evaluateHook\` took from ${ratio(low.evaluate)} (${low.name}) to ${ratio(high.evaluate)} (${high.name}) ` +
    `the time of a JSON parse and stringify of the same request (medians)` +
    (slowest === undefined ? '.' : `; the slowest example's median was ${micros(slowest.evaluate.p50Us)} µs a call.`)
  );
}

/** Issue 9's engine limit, evaluateHook ≤ this × JSON.parse, as bench/targets.ts judges it. */
export const engineLimit = (): number => targetLimit('engine-examples');

/** A difference of medians can come out below zero when the loops are noisy: print its sign. */
const signedMicros = (us: number): string => (us < 0 ? `−${micros(-us)}` : micros(us));
const signedRatio = (value: number): string => (value < 0 ? `−${ratio(-value)}` : ratio(value));

/** "480 (6.00 ×)": a median in µs and as a multiple of the same example's `JSON.parse` median. */
function phaseCell(us: number, parseUs: number | undefined): string {
  return parseUs === undefined ? signedMicros(us) : `${signedMicros(us)} (${signedRatio(us / parseUs)})`;
}

interface Phases {
  readonly name: string;
  readonly parseUs: number;
  readonly factsUs: number;
  readonly factsAndRulesUs: number;
  /** evaluateHook's median minus facts + rules' median: an estimate, not a timed loop. */
  readonly cardsAndRestUs: number;
  readonly evaluateUs: number;
}

/** The phase medians of one example, or undefined for a run that did not time them. */
function phasesOf(m: MicroResult): Phases | undefined {
  const p = m.phases;
  if (p === undefined) {
    return undefined;
  }
  return {
    name: m.name,
    parseUs: p.parseOnly.p50Us,
    factsUs: p.facts.p50Us,
    factsAndRulesUs: p.factsAndRules.p50Us,
    cardsAndRestUs: p.evaluate.p50Us - p.factsAndRules.p50Us,
    evaluateUs: p.evaluate.p50Us,
  };
}

/** Where an evaluation's time goes, per example: medians, each also as a multiple of `JSON.parse`. */
export function phaseTable(micro: readonly MicroResult[]): string {
  const notMeasured = 'not measured';
  return markdownTable(
    [
      'example',
      'JSON.parse µs',
      'facts µs (× parse)',
      'facts + rules µs (× parse)',
      'cards and the rest µs (× parse)',
      'evaluateHook µs (× parse)',
    ],
    micro.map((m) => {
      const p = phasesOf(m);
      const parseUs = m.parseOnly?.p50Us;
      if (p === undefined) {
        const parse = parseUs === undefined ? notMeasured : micros(parseUs);
        return [m.name, parse, notMeasured, notMeasured, notMeasured, phaseCell(m.evaluate.p50Us, parseUs)];
      }
      return [
        p.name,
        micros(p.parseUs),
        phaseCell(p.factsUs, p.parseUs),
        phaseCell(p.factsAndRulesUs, p.parseUs),
        phaseCell(p.cardsAndRestUs, p.parseUs),
        phaseCell(p.evaluateUs, p.parseUs),
      ];
    }),
  );
}

/** What each example's evaluateHook would have to lose to meet the engine limit, and whether facts + rules alone exceed it. */
export function phaseFindings(micro: readonly MicroResult[]): string[] {
  const phases = micro.flatMap((m) => phasesOf(m) ?? []);
  if (phases.length === 0) {
    return ['The phases of evaluateHook were not timed in this run.'];
  }
  const limit = engineLimit();
  const allowedUs = (p: Phases): number => limit * p.parseUs;
  const over = phases.filter((p) => p.evaluateUs > allowedUs(p));
  const within = phases.filter((p) => p.evaluateUs <= allowedUs(p));
  const losses = over.map(
    (p) => `${micros(p.evaluateUs - allowedUs(p))} µs of ${micros(p.evaluateUs)} in ${p.name} (to ${micros(allowedUs(p))} µs)`,
  );
  const lines: string[] = [
    over.length === 0
      ? `evaluateHook's median is within ${limit} × JSON.parse in every example.`
      : `To reach ${limit} × JSON.parse, evaluateHook's median would have to lose ${losses.join(', ')}` +
        (within.length === 0 ? '.' : `; ${within.map((p) => p.name).join(', ')} ${within.length === 1 ? 'is' : 'are'} already within it.`),
  ];
  const rulesOver = phases.filter((p) => p.factsAndRulesUs > allowedUs(p));
  lines.push(
    rulesOver.length === 0
      ? `Facts + rules alone take at most ${limit} × JSON.parse in every example.`
      : `Facts + rules alone already take more than ${limit} × JSON.parse in ${rulesOver.length} of ${phases.length} examples ` +
          `(${rulesOver.map((p) => `${p.name} ${ratio(p.factsAndRulesUs / p.parseUs)}`).join(', ')}): ` +
          'there evaluateHook would stay above the target even if the cards cost nothing.',
  );
  return lines;
}
