import { formatFlow, formatNumber, formatPercent } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import { stockedVenturiSettings } from '../devices/catalogue.js';
import { DEVICE_MODELS, findVenturiSetting } from '../devices/index.js';
import type { Policy } from '../policy.js';
import type { Finding, OrderChange, OxygenOrder } from '../types.js';
import { deliveryComputation, describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { givesOxygen, isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/**
 * A Venturi order at a standard setting with no O2 flow: the adaptor entrains as labelled only at
 * or above its minimum flow (BTS 2017 Table 4 for 24 % and 28 %; device labelling for the rest), so
 * the flow is part of the order. Suggests the minimum, or the minimum × the tachypnoea multiplier,
 * when a ward flowmeter (`thresholds.flowmeterMaxLPerMin`) can give it.
 */
function flowNotStated(order: OxygenOrder, assessment: Assessment, policy: Policy): readonly Finding[] {
  // The hospital's valve, with the minimum flow printed on it, when it stocks this setting.
  const setting =
    order.setFio2Fraction === undefined
      ? undefined
      : findVenturiSetting(order.setFio2Fraction, stockedVenturiSettings(policy.devices));
  if (setting === undefined) {
    return [];
  }
  const minimum = setting.minimumFlowLPerMin;
  const rr = assessment.current.respRate?.value;
  const { venturiTachypnoeaRespRateAbove: rrAbove, venturiTachypnoeaFlowMultiplier: multiplier } = policy.thresholds;
  const needed = rr !== undefined && rr > rrAbove ? minimum * multiplier : minimum;
  // As for a stated flow: a flow a ward flowmeter cannot give is no suggestion (60 % at 15 L/min raised
  // by half is 22.5 L/min); the patient needs another device.
  const maxFlow = Math.min(DEVICE_MODELS['venturi-mask'].flowRangeLPerMin.max, policy.thresholds.flowmeterMaxLPerMin);
  const settingText = formatPercent(setting.fio2Fraction * 100);
  return [
    makeFinding(rule, {
      orderReference: order.reference,
      values: {
        problem: `with no O2 flow stated: this setting needs at least ${formatFlow(minimum)}`,
        orderDescription: describeOrder(order),
        setting: settingText,
        orderedFlow: 'no stated flow',
        minimumFlow: formatFlow(minimum),
        respRate: rr === undefined ? 'not recorded' : `${formatNumber(rr, 0)}/min`,
        respRateThreshold: `${formatNumber(rrAbove, 0)}/min`,
        flowBalance:
          'With no flow stated, the total flow from the mask cannot be estimated.' +
          (needed > maxFlow
            ? ` The raised flow, ${formatFlow(needed)}, is beyond a ward flowmeter (${formatFlow(maxFlow)}): another device is needed.`
            : ''),
        ...(needed <= maxFlow ? { suggestedFlow: formatFlow(needed) } : {}),
      },
      sourceKeys: ['bts-2017', 'jones-1984'],
      ...(needed <= maxFlow && isTitration(order) ? { change: { kind: 'set-flow', flowLPerMin: needed } as const } : {}),
    }),
  ];
}

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
 * Also fires, with the setting's minimum as the suggestion, when a Venturi order at a standard
 * setting states no O2 flow at all.
 * Silent for stop and room-air orders and 0 L/min; comfort and weaning orders get the card but no
 * raised flow (`isTitration`).
 * The minimum flow is the one printed on the hospital's valve (policy `devices`) when it stocks the
 * setting, else the usual one (devices/venturi-mask.ts).
 * Sources: BTS 2017 Table 4; Jones, Turner & Hughes, Lancet 1984.
 */
export const rule: Rule = {
  id: 'venturi-flow-insufficient',
  title: 'Venturi mask flow too low for the setting or the patient',
  version: 6,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, delivery, current } = assessment;
    // A stop or room-air order (or 0 L/min) gives no oxygen: no flow to find insufficient.
    if (order !== undefined && !givesOxygen(order)) {
      return [];
    }
    if (order?.device === 'venturi-mask' && order.flowLPerMin === undefined) {
      return flowNotStated(order, assessment, policy);
    }
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
    // A flow a ward flowmeter cannot give (60 % at 15 L/min raised by half is 22.5 L/min) is no
    // one-click fix: the patient needs another device, with senior input.
    const maxFlow = Math.min(DEVICE_MODELS['venturi-mask'].flowRangeLPerMin.max, policy.thresholds.flowmeterMaxLPerMin);
    const beyondFlowmeter = flow < needed && needed > maxFlow;
    const change: OrderChange | undefined =
      flow < needed && needed <= maxFlow && isTitration(order) ? { kind: 'set-flow', flowLPerMin: needed } : undefined;
    const computation = deliveryComputation(assessment);
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          problem: `at ${formatFlow(flow)}: flow too low for the setting or the breathing rate`,
          orderDescription: describeOrder(order),
          setting: order.setFio2Fraction === undefined ? 'not stated' : formatPercent(order.setFio2Fraction * 100),
          orderedFlow: formatFlow(flow),
          minimumFlow: formatFlow(minimum),
          respRate: rr === undefined ? 'not recorded' : `${formatNumber(rr, 0)}/min`,
          respRateThreshold: `${formatNumber(rrAbove, 0)}/min`,
          flowBalance:
            `Estimated total flow from the mask: ${total === undefined ? 'not estimated' : formatFlow(total)}, ` +
            `against an estimated peak inspiratory flow of ${peak === undefined ? 'not estimated' : formatFlow(peak)}.` +
            (beyondFlowmeter
              ? ` The raised flow, ${formatFlow(needed)}, is beyond a ward flowmeter (${formatFlow(maxFlow)}): another device is needed.`
              : ''),
          ...(change?.kind === 'set-flow' ? { suggestedFlow: formatFlow(change.flowLPerMin) } : {}),
        },
        computations: computation === undefined ? [] : [computation],
        sourceKeys: ['bts-2017', 'jones-1984', ...estimate.sourceKeys],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
