import { formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeOrder, describeRiskReasons } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/**
 * The at-risk range (`targets.hypercapnicRisk`, 88–92 %) is ordered for a patient with no documented
 * risk of hypercapnic respiratory failure, or for an at-risk patient whose current gas shows normal
 * PCO2 and who has no previous NIV, IMV or hypercapnic failure (BTS re-targeting).
 *
 * Rationale: without CO2 retention, 88–92 % accepts needless hypoxaemia; BTS 2017 sets 94–98 % for
 * other acutely ill adults and re-targets at-risk patients to it once a gas shows normal PCO2
 * (Tables 2–4). Info when no risk is documented (the prescriber may know of an alert card); warning
 * after a normal gas. Suggests the applicable standard range (`targets.standard`). For acute
 * hypercapnia without chronic retention kept at the standard range by local policy, the summary says
 * so rather than "no risk documented".
 * Source: BTS 2017 Tables 1–4.
 */
export const rule: Rule = {
  id: 'lower-range-without-risk',
  title: 'Lower target range ordered without a documented hypercapnic risk',
  version: 3,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, target, targetComparison: comparison } = assessment;
    if (
      order === undefined ||
      comparison.kind !== 'lower-range-without-risk' ||
      comparison.ordered === undefined ||
      target.kind !== 'range'
    ) {
      return [];
    }
    // Its suggestion raises the target: never for an order that is not a titration.
    if (!isTitration(order)) {
      return [];
    }
    const retargeted = target.basis === 'standard-after-normal-gas';
    // The summary names why the standard range applies: a re-targeted patient has a documented risk,
    // so "no documented risk" would contradict the risk factors the card lists.
    const whyStandard = retargeted
      ? `the current gas shows PCO2 below ${policy.hypercapnicRisk.hypercapniaPaco2.display}, ` +
        'with no previous NIV or hypercapnic failure'
      : target.basis === 'standard-despite-acute-hypercapnia'
        ? 'the raised PCO2 is acute, with no sign of chronic CO2 retention'
        : 'no hypercapnic risk is documented';
    return [
      makeFinding(rule, {
        indicator: retargeted ? 'warning' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          orderedRange: formatRange(comparison.ordered),
          advisedRange: formatRange(comparison.advised),
          targetReason: target.reason,
          whyStandard,
          riskReasons: describeRiskReasons(assessment),
        },
        sourceKeys: ['bts-2017', policy.basisKey],
        change: { kind: 'set-target', range: comparison.advised },
      }),
    ];
  },
};
