import type { RuleUnitSummary } from '../store/store.js';

/**
 * Totals per rule over its units, and the override rate a policy owner tunes by. Pure.
 *
 * Override rate: of the advisories that got feedback, the share whose latest outcome was an
 * override. Advisories without feedback are left out of the rate (nobody said either way), and the
 * rate is undefined when none got feedback, rather than a misleading 0 %.
 */

export interface ReasonCount {
  readonly code: string;
  readonly count: number;
}

export interface RuleTotals {
  readonly ruleId: string;
  readonly fired: number;
  readonly accepted: number;
  readonly overridden: number;
  readonly noFeedback: number;
  readonly overrideReasons: readonly ReasonCount[];
}

/** Overridden / (accepted + overridden), or undefined when nothing got feedback. */
export function overrideRate(counts: { readonly accepted: number; readonly overridden: number }): number | undefined {
  const answered = counts.accepted + counts.overridden;
  return answered === 0 ? undefined : counts.overridden / answered;
}

/** "33 %", or "no feedback" when the rate is undefined. */
export function formatRate(rate: number | undefined): string {
  return rate === undefined ? 'no feedback' : `${Math.round(rate * 100)} %`;
}

/** Reason counts, most frequent first, ties by code so the order is stable. */
export function sortReasons(reasons: readonly ReasonCount[]): ReasonCount[] {
  return [...reasons].sort((a, b) => b.count - a.count || a.code.localeCompare(b.code));
}

/** One row per rule, adding up its units; most fired first. */
export function totalsByRule(rows: readonly RuleUnitSummary[]): RuleTotals[] {
  const byRule = new Map<string, { fired: number; accepted: number; overridden: number; noFeedback: number; reasons: Map<string, number> }>();
  for (const row of rows) {
    const totals = byRule.get(row.ruleId) ?? { fired: 0, accepted: 0, overridden: 0, noFeedback: 0, reasons: new Map<string, number>() };
    totals.fired += row.fired;
    totals.accepted += row.accepted;
    totals.overridden += row.overridden;
    totals.noFeedback += row.noFeedback;
    for (const reason of row.overrideReasons) {
      totals.reasons.set(reason.code, (totals.reasons.get(reason.code) ?? 0) + reason.count);
    }
    byRule.set(row.ruleId, totals);
  }
  return [...byRule.entries()]
    .map(([ruleId, t]) => ({
      ruleId,
      fired: t.fired,
      accepted: t.accepted,
      overridden: t.overridden,
      noFeedback: t.noFeedback,
      overrideReasons: sortReasons([...t.reasons.entries()].map(([code, count]) => ({ code, count }))),
    }))
    .sort((a, b) => b.fired - a.fired || a.ruleId.localeCompare(b.ruleId));
}
