import type { AuditPair } from './audit-cases.js';
import type { AuditMicroResult } from './audit-micro.js';
import type { LoadResult } from './load-test.js';
import type { MicroResult } from './micro.js';
import { CDS_HOOKS_BUDGET_MS, NOISE_PERCENT, fixed, markdownTable, micros, ratio, whole, type AuditReport } from './report.js';

/**
 * The audit trail's cost as tables and plain sentences, every number from the run described. What
 * "noticeably" means (the issue asks that the audit write not slow the hook call noticeably): the
 * audit-on throughput within the run-to-run noise of the audit-off throughput, and p99 with the audit
 * on well inside the CDS Hooks budget.
 */

/** p99 above this share of the budget is not "well inside" it. */
export const BUDGET_SHARE_WELL_INSIDE = 0.5;

export type AuditVerdict = 'within-noise' | 'slower' | 'faster';

/** How an audit-on / audit-off throughput ratio reads against the machines' run-to-run noise. */
export function auditVerdict(onOverOff: number): AuditVerdict {
  if (onOverOff < 1 - NOISE_PERCENT / 100) {
    return 'slower';
  }
  return onOverOff > 1 + NOISE_PERCENT / 100 ? 'faster' : 'within-noise';
}

const signed = (ms: number): string => (ms > 0 ? `+${ms}` : ms < 0 ? `−${-ms}` : '0');
const onOverOff = (pair: AuditPair): number => pair.on.reqPerSec / pair.off.reqPerSec;
const budgetPercent = (ms: number): string => fixed((100 * ms) / CDS_HOOKS_BUDGET_MS, 1);

export function auditLoadTable(pairs: readonly AuditPair[], baselineReqPerSec: number): string {
  return markdownTable(
    [
      'case (fresh hookInstance each call)',
      'cards',
      'audit on req/s',
      'audit off req/s',
      'on / off req/s',
      'p50 ms on / off',
      'p50 on − off ms',
      'p99 ms on / off',
      'p99 on − off ms',
      'on × baseline req/s',
      'on p99 % of 500 ms',
    ],
    pairs.map((pair) => [
      pair.example,
      String(pair.cards),
      whole(pair.on.reqPerSec),
      whole(pair.off.reqPerSec),
      ratio(onOverOff(pair)),
      `${pair.on.latencyMs.p50} / ${pair.off.latencyMs.p50}`,
      signed(pair.on.latencyMs.p50 - pair.off.latencyMs.p50),
      `${pair.on.latencyMs.p99} / ${pair.off.latencyMs.p99}`,
      signed(pair.on.latencyMs.p99 - pair.off.latencyMs.p99),
      ratio(pair.on.reqPerSec / baselineReqPerSec),
      budgetPercent(pair.on.latencyMs.p99),
    ]),
  );
}

export function feedbackTable(feedback: LoadResult, baselineReqPerSec: number): string {
  return markdownTable(
    ['case', 'request B', 'req/s', 'p50 ms', 'p97.5 ms', 'p99 ms', '× baseline req/s', 'p99 % of 500 ms'],
    [
      [
        feedback.label,
        whole(feedback.requestBytes),
        whole(feedback.reqPerSec),
        String(feedback.latencyMs.p50),
        String(feedback.latencyMs.p97_5),
        String(feedback.latencyMs.p99),
        ratio(feedback.reqPerSec / baselineReqPerSec),
        budgetPercent(feedback.latencyMs.p99),
      ],
    ],
  );
}

/** Plain sentences on the HTTP comparison and the feedback route. */
export function auditFindings(audit: AuditReport, baselineReqPerSec: number): string[] {
  const lines: string[] = [];
  const pairs = [...audit.http.pairs].sort((a, b) => onOverOff(a) - onOverOff(b));
  const low = pairs[0];
  const high = pairs[pairs.length - 1];
  if (low !== undefined && high !== undefined) {
    const slower = pairs.filter((pair) => auditVerdict(onOverOff(pair)) === 'slower');
    const range =
      low === high
        ? `${ratio(onOverOff(low))} (${low.example})`
        : `from ${ratio(onOverOff(low))} (${low.example}) to ${ratio(onOverOff(high))} (${high.example})`;
    lines.push(
      slower.length === 0
        ? `With the audit trail on, the hook call served ${range} the throughput of the same service with the audit write off: within the ±${NOISE_PERCENT} % these machines vary by, so in this run the audit write did not slow the hook call noticeably.`
        : `With the audit trail on, the hook call served ${range} the throughput of the same service with the audit write off: ${slower.map((pair) => pair.example).join(', ')} fell more than the ${NOISE_PERCENT} % these machines vary by, so in this run the audit write slowed the hook call noticeably there.`,
    );
    const worst = [...pairs].sort((a, b) => b.on.latencyMs.p99 - a.on.latencyMs.p99)[0] ?? low;
    const p99Diffs = pairs.map((pair) => pair.on.latencyMs.p99 - pair.off.latencyMs.p99).sort((a, b) => a - b);
    const p50Diffs = pairs.map((pair) => pair.on.latencyMs.p50 - pair.off.latencyMs.p50).sort((a, b) => a - b);
    const spread = (diffs: number[]): string => {
      const first = diffs[0] ?? 0;
      const last = diffs[diffs.length - 1] ?? 0;
      return first === last ? `${signed(first)} ms` : `from ${signed(first)} to ${signed(last)} ms`;
    };
    const wellInside = worst.on.latencyMs.p99 <= BUDGET_SHARE_WELL_INSIDE * CDS_HOOKS_BUDGET_MS;
    lines.push(
      `Audit on minus audit off: p50 ${spread(p50Diffs)}, p99 ${spread(p99Diffs)}. The worst p99 with the audit on was ` +
        `${worst.on.latencyMs.p99} ms (${worst.example}), ${budgetPercent(worst.on.latencyMs.p99)} % of the ${CDS_HOOKS_BUDGET_MS} ms CDS Hooks budget` +
        (wellInside
          ? `: well inside it (at most ${fixed(100 * BUDGET_SHARE_WELL_INSIDE, 0)} %).`
          : `: not well inside it (more than ${fixed(100 * BUDGET_SHARE_WELL_INSIDE, 0)} %).`),
    );
  }
  const feedback = audit.http.feedback;
  lines.push(
    `The feedback route committed ${whole(feedback.reqPerSec)} single-item calls a second, ${ratio(feedback.reqPerSec / baselineReqPerSec)} the baseline's throughput ` +
      `(${fixed(1000 / feedback.reqPerSec, 2)} ms of wall time per call with the process kept busy), each a new record on one of ` +
      `${whole(audit.http.feedbackCards)} cards the service had issued and recorded; p99 ${feedback.latencyMs.p99} ms.`,
  );
  return lines;
}

export function auditMicroTable(audit: readonly AuditMicroResult[], micro: readonly MicroResult[]): string {
  return markdownTable(
    ['example', 'cards', 'evaluateHook µs median', 'recordAdvisories µs median / p99', 'audit write × evaluateHook (medians)'],
    audit.map((row) => {
      const evaluate = micro.find((m) => m.name === row.name)?.evaluate;
      return [
        row.name,
        String(row.cards),
        evaluate === undefined ? 'not measured' : micros(evaluate.p50Us),
        `${micros(row.record.p50Us)} / ${micros(row.record.p99Us)}`,
        evaluate === undefined || evaluate.p50Us <= 0 ? '' : ratio(row.record.p50Us / evaluate.p50Us),
      ];
    }),
  );
}

export function auditMicroFinding(audit: readonly AuditMicroResult[], micro: readonly MicroResult[]): string {
  const rows = audit.flatMap((row) => {
    const evaluate = micro.find((m) => m.name === row.name)?.evaluate;
    return evaluate === undefined || evaluate.p50Us <= 0 ? [] : [{ row, ratio: row.record.p50Us / evaluate.p50Us }];
  });
  const sorted = [...rows].sort((a, b) => a.ratio - b.ratio);
  const low = sorted[0];
  const high = sorted[sorted.length - 1];
  if (low === undefined || high === undefined) {
    return 'No audit write was timed beside an evaluation in this run.';
  }
  const slowest = [...audit].sort((a, b) => b.record.p50Us - a.record.p50Us)[0] ?? low.row;
  return (
    `In process, committing one call's cards took from ${ratio(low.ratio)} (${low.row.name}) to ${ratio(high.ratio)} (${high.row.name}) ` +
    `the time of evaluating the call (medians); the slowest commit's median was ${micros(slowest.record.p50Us)} µs (${slowest.name}, ${slowest.cards} cards), ` +
    `one transaction and one fsync of the WAL (synchronous = FULL) a call.`
  );
}
