import { formatPercent, formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeMeasured, describeOrder, findCondition } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * Pregnancy is documented, oxygen is ordered, and the current SpO2 is at or above the lower bound of
 * the range being titrated to.
 *
 * Rationale: BTS 2017 (section on pregnancy, quoted secondarily: V2) gives pregnant women the same
 * targets as other patients (the at-risk range if at risk of hypercapnia), advises no oxygen in
 * uncomplicated labour unless SpO2 is below 94 % (`targets.standard` lower bound in the bundled
 * policy), and left lateral tilt from 20 weeks when a pregnant woman is acutely unwell. Info.
 * Source: BTS 2017 (V2).
 */
export const rule: Rule = {
  id: 'pregnancy-oxygen',
  title: 'Pregnancy: same targets, oxygen only if hypoxaemic in labour',
  version: 1,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, titrationTarget, current } = assessment;
    const condition = findCondition(facts, ['pregnancy']);
    const spo2 = current.spo2;
    if (order === undefined || condition === undefined || titrationTarget === undefined || spo2 === undefined) {
      return [];
    }
    if (spo2.value < titrationTarget.range.lowPercent) {
      return [];
    }
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          spo2: describeMeasured(spo2, now, '%'),
          targetRange: formatRange(titrationTarget.range),
          labourThreshold: formatPercent(policy.targets.standard.lowPercent),
        },
        sourceKeys: ['bts-2017'],
      }),
    ];
  },
};
