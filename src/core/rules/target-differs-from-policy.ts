import { formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/**
 * The ordered range matches neither the applicable policy range nor a case the more specific target
 * rules own (for example 90–94 % for a patient with no hypercapnic risk, or 85–90 % for an at-risk
 * patient).
 *
 * Rationale: a non-standard range may be a deliberate individual target, so this is information, not
 * a warning; it names the policy range and offers it. Thresholds: `targets.standard`,
 * `targets.hypercapnicRisk` through target selection.
 * Source: the local policy and its basis guideline (BTS 2017 Tables 1–4 for the bundled policy).
 */
export const rule: Rule = {
  id: 'target-differs-from-policy',
  title: 'Target range differs from the policy range',
  version: 2,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, target, targetComparison: comparison } = assessment;
    if (order === undefined || comparison.kind !== 'differs' || comparison.ordered === undefined || target.kind !== 'range') {
      return [];
    }
    if (!isTitration(order)) {
      return [];
    }
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          orderedRange: formatRange(comparison.ordered),
          advisedRange: formatRange(comparison.advised),
          targetReason: target.reason,
          policyTitle: policy.title,
        },
        sourceKeys: [target.sourceKey, policy.basisKey, 'local-policy'],
        change: { kind: 'set-target', range: comparison.advised },
      }),
    ];
  },
};
