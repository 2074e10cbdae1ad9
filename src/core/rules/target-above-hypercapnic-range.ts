import { formatGasValue, formatMinuteWindow, formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import {
  deliveryComputation,
  describeAge,
  describeDelivery,
  describeOrder,
  describeRiskReasons,
} from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { givesOxygen } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/**
 * A patient at risk of hypercapnic respiratory failure has an ordered range whose upper bound is above
 * the at-risk range (for example 94–98 % instead of 88–92 %).
 *
 * Rationale: in patients who retain CO2, a high oxygen target worsens hypercapnia and acidosis
 * (BTS 2017 Table 4); in COPD exacerbations an SpO2 above 92 % has been linked with higher inpatient
 * mortality (Echevarria 2021). Warning; critical when the current gas already shows PCO2 at or above
 * `hypercapnicRisk.hypercapniaPaco2`. Suggests `targets.hypercapnicRisk`. The card shows the
 * delivered-FiO2 estimate and the repeat-gas window (`thresholds.repeatGasMinutes`).
 * Source: BTS 2017 Table 4; Echevarria et al., EMJ 2021 (quoted in the card text).
 */
export const rule: Rule = {
  id: 'target-above-hypercapnic-range',
  title: 'Target above the range for a patient at risk of hypercapnia',
  version: 3,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, policy, now }): readonly Finding[] => {
    const { order, targetComparison: comparison, hypercapnicRisk: risk } = assessment;
    if (order === undefined || comparison.kind !== 'above-hypercapnic-range' || comparison.ordered === undefined) {
      return [];
    }
    // Kept for weaning orders: weaning to 94-98 % keeps a CO2 retainer on more oxygen than advised,
    // and the suggestion lowers the range. Not for comfort oxygen or an order that gives none.
    if (!givesOxygen(order) || order.purpose === 'comfort') {
      return [];
    }
    const gas = assessment.current.gas;
    const label =
      gas?.specimen === 'arterial' ? 'PaCO2' : gas?.specimen === 'venous' ? 'venous PCO2' : 'PCO2 (specimen not stated)';
    // A venous (or unlabelled) PCO2 runs about 0.4-1.1 kPa above arterial, so a high one means
    // possible hypercapnia and an arterial sample settles it (docs/clinical-basis.md, Current values).
    const confirm =
      gas !== undefined && gas.specimen !== 'arterial' && risk.currentHypercapnia === true
        ? gas.specimen === 'venous'
          ? '; a venous PCO2 reads higher than arterial, so confirm with an arterial sample'
          : '; the sample may be venous, so confirm with an arterial sample'
        : '';
    const gasStatus =
      gas === undefined || gas.paco2MmHg === undefined
        ? 'none yet'
        : `${label} ${formatGasValue(gas, 'paco2') ?? ''} ${describeAge(gas, now)} (hypercapnia at or above ${
            policy.hypercapnicRisk.hypercapniaPaco2.display
          })${confirm}`;
    const computation = deliveryComputation(assessment);
    const window = policy.thresholds.repeatGasMinutes;
    return [
      makeFinding(rule, {
        indicator: risk.currentHypercapnia === true ? 'critical' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          orderedRange: formatRange(comparison.ordered),
          advisedRange: formatRange(comparison.advised),
          riskReasons: describeRiskReasons(assessment),
          gasStatus,
          hypercapniaThreshold: policy.hypercapnicRisk.hypercapniaPaco2.display,
          deliveredFio2: describeDelivery(assessment),
          repeatGasWindow: formatMinuteWindow(window.from, window.to),
        },
        computations: computation === undefined ? [] : [computation],
        sourceKeys: ['bts-2017', ...(assessment.delivery.kind === 'ok' ? assessment.delivery.value.sourceKeys : [])],
        change: { kind: 'set-target', range: comparison.advised },
      }),
    ];
  },
};
