import { formatFlow, formatNumber, formatPercent } from '../assessment/format.js';
import { DEVICE_MODELS } from '../devices/index.js';
import type { Finding, OrderChange } from '../types.js';
import { deliveryComputation, describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * A Venturi (fixed-performance) mask is run below the minimum O2 flow for its setting; or the patient
 * breathes faster than `thresholds.venturiTachypnoeaRespRateAbove` and the flow has not been raised
 * by the policy multiplier, or is raised but the total flow is still below the estimated peak
 * inspiratory flow. At rest, a total flow a little under the model's peak is not reported: BTS 2017
 * itself advises 28 % at 4 L/min, whose 45 L/min falls just under the 47 L/min resting estimate, and
 * the device notes in `oxygenation-summary` show the shortfall.
 *
 * Rationale: a Venturi mask delivers its stated FiO2 only while its total flow meets the patient's
 * inspiratory demand (Jones 1984); BTS 2017 Table 4 advises raising the O2 flow by 50 % when the
 * respiratory rate is above 30/min, keeping the setting (the entrained air rises in step, so the FiO2
 * stays the same). Warning. Suggests the setting's minimum flow, or the minimum × 
 * `thresholds.venturiTachypnoeaFlowMultiplier` when tachypnoeic, if that is within the device's
 * flow range; the FiO2 setting is never changed.
 * Sources: BTS 2017 Table 4; Jones, Turner & Hughes, Lancet 1984.
 */
export const rule: Rule = {
  id: 'venturi-flow-insufficient',
  title: 'Venturi mask flow too low for the setting or the patient',
  version: 1,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, delivery, current } = assessment;
    if (order?.device !== 'venturi-mask' || order.flowLPerMin === undefined || delivery.kind !== 'ok') {
      return [];
    }
    const estimate = delivery.value;
    const minimum = estimate.minimumFlowLPerMin;
    if (minimum === undefined) {
      return [];
    }
    const flow = order.flowLPerMin;
    const rr = current.respRate?.value;
    const { venturiTachypnoeaRespRateAbove: rrAbove, venturiTachypnoeaFlowMultiplier: multiplier } = policy.thresholds;
    const tachypnoeic = rr !== undefined && rr > rrAbove;
    const needed = tachypnoeic ? minimum * multiplier : minimum;
    const total = estimate.totalFlowLPerMin;
    const peak = estimate.peakInspiratoryFlowLPerMin;
    // At rest the shortfall at a setting's minimum flow is small (28 % at 4 L/min gives 45 L/min against
    // an estimated 47 L/min peak), and BTS 2017 advises those flows, so demand is judged only when fast.
    const demandNotMet = tachypnoeic && total !== undefined && peak !== undefined && total < peak;
    if (flow >= needed && !demandNotMet) {
      return [];
    }
    const maxFlow = DEVICE_MODELS['venturi-mask'].flowRangeLPerMin.max;
    const change: OrderChange | undefined =
      flow < needed && needed <= maxFlow ? { kind: 'set-flow', flowLPerMin: needed } : undefined;
    const computation = deliveryComputation(assessment);
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          setting: order.setFio2Fraction === undefined ? 'not stated' : formatPercent(order.setFio2Fraction * 100),
          orderedFlow: formatFlow(flow),
          minimumFlow: formatFlow(minimum),
          respRate: rr === undefined ? 'not recorded' : `${formatNumber(rr, 0)}/min`,
          respRateThreshold: `${formatNumber(rrAbove, 0)}/min`,
          totalFlow: total === undefined ? 'not estimated' : formatFlow(total),
          peakInspiratoryFlow: peak === undefined ? 'not estimated' : formatFlow(peak),
          ...(change?.kind === 'set-flow' ? { suggestedFlow: formatFlow(change.flowLPerMin) } : {}),
        },
        computations: computation === undefined ? [] : [computation],
        sourceKeys: ['bts-2017', 'jones-1984', ...estimate.sourceKeys],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
