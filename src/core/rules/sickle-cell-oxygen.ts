import { formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeMeasured, describeOrder, findCondition } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * A sickle cell crisis is documented, oxygen is ordered, and the current SpO2 is already at or above
 * the lower bound of the range being titrated to.
 *
 * Rationale: BTS advises oxygen in sickle cell crisis only when the patient is hypoxaemic, meaning
 * below the target range (94–98 %) or below the patient's known usual saturation (BTS 2008 Table 2,
 * carried into BTS 2017 Table 2, which this service has not read: V for 2008). Info, as a reminder
 * that oxygen may not be needed; never a reason to withhold it from a hypoxaemic patient.
 * Thresholds: the titration target (ordered, or `targets.*` through target selection).
 * Source: BTS 2017 Table 2 / BTS 2008 Table 2.
 */
export const rule: Rule = {
  id: 'sickle-cell-oxygen',
  title: 'Sickle cell crisis: oxygen only if hypoxaemic',
  version: 1,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, now }): readonly Finding[] => {
    const { order, titrationTarget, current } = assessment;
    const condition = findCondition(facts, ['sickle-cell-crisis']);
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
          condition: condition.display,
          orderDescription: describeOrder(order),
          spo2: describeMeasured(spo2, now, '%'),
          targetRange: formatRange(titrationTarget.range),
        },
        sourceKeys: ['bts-2017'],
      }),
    ];
  },
};
