import { formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/**
 * The order names no target saturation range.
 *
 * Rationale: BTS 2017 asks that oxygen be prescribed to a target range, so that staff titrate up and
 * down against a stated goal; an order without one invites both under- and over-oxygenation.
 * Fires when the target comparison is `missing` (so never where no SpO2 target applies, and not for
 * paraquat or bleomycin, which `oxygen-toxicity-target` owns). Suggests the applicable range.
 * Thresholds: `targets.standard`, `targets.hypercapnicRisk` through target selection.
 * Source: BTS 2017 (prescribing to a target range; Tables 1–4).
 */
export const rule: Rule = {
  id: 'target-range-missing',
  title: 'No target saturation range on the oxygen order',
  version: 1,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, target, targetComparison } = assessment;
    if (order === undefined || targetComparison.kind !== 'missing' || target.kind !== 'range') {
      return [];
    }
    // Only a titration needs a target to titrate against (comfort oxygen has none, BTS 2017).
    if (!isTitration(order)) {
      return [];
    }
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          advisedRange: formatRange(targetComparison.advised),
          targetReason: target.reason,
        },
        sourceKeys: [target.sourceKey, policy.basisKey, 'local-policy'],
        change: { kind: 'set-target', range: targetComparison.advised },
      }),
    ];
  },
};
