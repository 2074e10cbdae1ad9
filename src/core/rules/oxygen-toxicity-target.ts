import { formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeMeasured, describeOrder, findCondition } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { givesOxygen } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/**
 * Paraquat poisoning or bleomycin lung injury is documented.
 *
 * Rationale: oxygen adds to the lung injury in both; BTS 2017 Table 3 advises avoiding oxygen unless
 * the patient is hypoxaemic and targeting 85–88 % (`targets.oxygenToxicityRisk`; quoted secondarily,
 * V2). Warning, with the range as a suggestion, when the order's target is missing or different.
 * Silent when the order already targets that range: the prescriber has followed the advice, and a
 * card on every such order is alert fatigue (common practice). An SpO2 above the range is then
 * spo2-above-target's (on oxygen) or oxygen-without-hypoxaemia's (on air), against 85–88 %.
 * Source: BTS 2017 Table 3 (V2).
 */
export const rule: Rule = {
  id: 'oxygen-toxicity-target',
  title: 'Paraquat or bleomycin: lower target, avoid oxygen unless hypoxaemic',
  version: 3,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, facts, now }): readonly Finding[] => {
    const { order, target, targetComparison: comparison, current } = assessment;
    const condition = findCondition(facts, ['paraquat-poisoning', 'bleomycin-lung-injury']);
    if (order === undefined || condition === undefined || target.kind !== 'range' || target.basis !== 'oxygen-toxicity-risk') {
      return [];
    }
    // Kept for weaning orders (the suggestion lowers the range); not for comfort oxygen or none at all.
    if (!givesOxygen(order) || order.purpose === 'comfort') {
      return [];
    }
    if (comparison.kind !== 'toxicity-range-not-ordered') {
      return [];
    }
    const spo2 = current.spo2;
    return [
      makeFinding(rule, {
        indicator: rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          condition: condition.display,
          // Each named for what it is: paraquat a herbicide (a poisoning), bleomycin a chemotherapy drug.
          whatItIs:
            condition.kind === 'paraquat-poisoning'
              ? 'paraquat is a herbicide'
              : 'bleomycin is a chemotherapy drug',
          adviceFrom: condition.kind === 'paraquat-poisoning' ? 'the poisons service' : 'the oncology team',
          orderDescription: describeOrder(order),
          orderedRange: order.target === undefined ? 'none' : formatRange(order.target),
          advisedRange: formatRange(target.range),
          spo2: spo2 === undefined ? 'no current reading' : describeMeasured(spo2, now, '%'),
        },
        sourceKeys: ['bts-2017'],
        change: { kind: 'set-target', range: target.range },
      }),
    ];
  },
};
