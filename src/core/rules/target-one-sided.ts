import { formatPercent, formatRange } from '../assessment/format.js';
import type { Finding, SaturationRange, TargetNote } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { expectsTarget } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';
import { citedGuidelineLabel } from './support/cited-guideline.js';

type Bound = Extract<TargetNote, { kind: 'one-sided' }>['bound'];

const BOUND_WORDS: Readonly<Record<Bound, string>> = {
  'at-least': 'at least',
  above: 'above',
  'at-most': 'at most',
  below: 'below',
};

const isLower = (bound: Bound): boolean => bound === 'at-least' || bound === 'above';

/**
 * Whether a full range keeps a single bound: a lower bound at or below the range's low end, an upper
 * bound at or above its high end. ">" and "≥" are read alike, because prescribers write "SpO2 > 94%"
 * for a range that starts at 94 (common practice).
 */
function rangeKeepsBound(range: SaturationRange, bound: Bound, percent: number): boolean {
  return isLower(bound) ? range.lowPercent >= percent : range.highPercent <= percent;
}

/**
 * The order states its target as one bound ("SpO2 > 94%", "keep sats above 92", "sats not below 88"),
 * or as one value with no bound word ("target SpO2 94%"), which is neither a range nor clearly a floor.
 *
 * Rationale: BTS 2017 asks that oxygen be prescribed to a target range, so that it is turned down as
 * well as up; a lower bound alone invites over-oxygenation, which matters most for a patient at risk
 * of hypercapnic respiratory failure (BTS 2017 Table 4), and an upper bound alone sets no floor.
 * Fires where `target-range-missing` would otherwise (no range ordered, a range applies, the order is a
 * titration). Suggests the applicable range only when it keeps the bound written; otherwise offers no
 * change and says why, because replacing the bound would change what the prescriber asked for.
 * Warning; critical when a lower bound lies above the whole at-risk range and the current gas already
 * shows PCO2 at or above `hypercapnicRisk.hypercapniaPaco2` (as `target-above-hypercapnic-range`).
 * Thresholds: `targets.standard`, `targets.hypercapnicRisk` through target selection.
 * Source: BTS 2017 (prescribing to a target range; Tables 1–4).
 */
export const rule: Rule = {
  id: 'target-one-sided',
  title: 'Target written as one bound or one value, not a range',
  version: 1,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, target, targetComparison, hypercapnicRisk: risk } = assessment;
    const note = order?.targetNote;
    if (order === undefined || (note?.kind !== 'one-sided' && note?.kind !== 'single-value') || !expectsTarget(order)) {
      return [];
    }
    if (targetComparison.kind !== 'missing' || target.kind !== 'range') {
      return [];
    }
    const advised = targetComparison.advised;
    const advisedRange = formatRange(advised);
    const single = note.kind === 'single-value';
    // One value is kept by a range that holds it; read as a floor it is no more than a guess.
    const keeps = single
      ? note.percent >= advised.lowPercent && note.percent <= advised.highPercent
      : rangeKeepsBound(advised, note.bound, note.percent);
    const asksForMore = single || isLower(note.bound);
    const aboveAtRiskRange = target.basis === 'hypercapnic-risk' && asksForMore && note.percent > advised.highPercent;
    const what = single ? 'value' : 'bound';
    const suggestionNote = keeps
      ? `The range ${advisedRange} holds the ${what} written, so it is offered as a one-click change that ` +
        `replaces the ${what} in the order's words.`
      : aboveAtRiskRange
        ? `The ${what} asks for SpO2 above the whole of ${advisedRange}, the range for a patient at risk of ` +
          `hypercapnic respiratory failure: more oxygen than ${citedGuidelineLabel(policy, rule.id)} advises for them. No ` +
          `one-click change is offered, because replacing the ${what} would change what was asked; please ` +
          'choose the range.'
        : `No one-click change is offered: ${advisedRange} would not keep the ${what} written, so choosing ` +
          'the range is the prescriber’s decision.';
    return [
      makeFinding(rule, {
        indicator: aboveAtRiskRange && risk.currentHypercapnia === true ? 'critical' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          writtenWhat: what,
          writtenForm: single
            ? `one value (SpO2 ${formatPercent(note.percent)})`
            : `one bound (SpO2 ${BOUND_WORDS[note.bound]} ${formatPercent(note.percent)})`,
          writtenText: note.text,
          advisedRange,
          targetReason: target.reason,
          suggestionNote,
        },
        sourceKeys: [target.sourceKey, policy.basisKey, 'local-policy'],
        ...(keeps ? { change: { kind: 'set-target', range: advised } } : {}),
      }),
    ];
  },
};
