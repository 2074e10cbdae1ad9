import { formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { expectsTarget } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/**
 * The order names no target saturation range.
 *
 * Rationale: BTS 2017 asks that oxygen be prescribed to a target range, so that staff titrate up and
 * down against a stated goal; an order without one invites both under- and over-oxygenation.
 * Fires when the target comparison is `missing` (so never where no SpO2 target applies, and not for
 * paraquat or bleomycin, which `oxygen-toxicity-target` owns). Not when the words state the target in
 * another way (one bound, two ranges or a condition: `target-one-sided` and `target-ambiguous` own
 * those), nor for an order that says it has no SpO2 target, is for comfort, stops oxygen or is room
 * air (BTS 2017: in terminal palliative care oxygen is for comfort). Suggests the applicable range.
 * Thresholds: `targets.standard`, `targets.hypercapnicRisk` through target selection.
 * Source: BTS 2017 (prescribing to a target range; Tables 1–4).
 */
export const rule: Rule = {
  id: 'target-range-missing',
  title: 'No target saturation range on the oxygen order',
  version: 2,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, target, targetComparison } = assessment;
    if (order === undefined || targetComparison.kind !== 'missing' || target.kind !== 'range') {
      return [];
    }
    // Comfort, stop and room-air orders and a stated "no target" need no range (BTS 2017: comfort
    // oxygen in terminal care); a weaning order is still titrated down against one.
    if (order.targetNote !== undefined || !expectsTarget(order)) {
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
