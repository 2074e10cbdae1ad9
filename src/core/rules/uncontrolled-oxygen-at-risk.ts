import { isStocked, stockedVenturiSetting } from '../devices/catalogue.js';
import { VENTURI_FLOW_RANGE_L_PER_MIN, type VenturiSetting } from '../devices/venturi-mask.js';
import { formatFlow, formatNumber, formatPercent, formatRange } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import type { Policy } from '../policy.js';
import type { DeviceKind, Finding, OrderChange } from '../types.js';
import { deliveryComputation, describeDelivery, describeOrder, describeRiskReasons } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';
import { keepTier, patientSupportTier } from './support/support-tier.js';

/** Devices whose FiO2 is high and not controlled: the harm BTS 2017 Table 4 guards CO2 retainers from. */
const UNCONTROLLED_DEVICES: readonly DeviceKind[] = ['reservoir-mask', 'simple-face-mask'];

/**
 * BTS 2017 Table 4's controlled Venturi settings for these patients, in the order offered: 28 % at
 * 4 L/min, then 24 % at 2–3 L/min. Either is the guideline's starting device, so when the hospital
 * stocks no 28 % valve the 24 % one is offered; a 31 % or higher valve is not an equivalent (it gives
 * more oxygen than the guideline starts at-risk patients on) and is never offered in their place.
 */
const CONTROLLED_SETTING_FRACTIONS = [0.28, 0.24] as const;

interface ControlledDevice {
  readonly setting: VenturiSetting;
  readonly flowLPerMin: number;
  readonly raised: boolean;
}

/**
 * The first stocked controlled valve at its printed minimum flow, raised by the policy's multiplier
 * when the patient breathes faster than its threshold (BTS 2017 Table 4); undefined when none is
 * stocked, or when the flow needed is more than the mask and a ward flowmeter give.
 */
function controlledDevice(assessment: Assessment, policy: Policy): ControlledDevice | 'not-stocked' | undefined {
  const setting = CONTROLLED_SETTING_FRACTIONS.map((f) => stockedVenturiSetting(policy.devices, f)).find(
    (s): s is VenturiSetting => s !== undefined,
  );
  if (setting === undefined) {
    return 'not-stocked';
  }
  const { venturiTachypnoeaRespRateAbove, venturiTachypnoeaFlowMultiplier, flowmeterMaxLPerMin } = policy.thresholds;
  const rr = assessment.current.respRate?.value;
  const raised = rr !== undefined && rr > venturiTachypnoeaRespRateAbove;
  const flowLPerMin = setting.minimumFlowLPerMin * (raised ? venturiTachypnoeaFlowMultiplier : 1);
  return flowLPerMin <= Math.min(flowmeterMaxLPerMin, VENTURI_FLOW_RANGE_L_PER_MIN.max)
    ? { setting, flowLPerMin, raised }
    : undefined;
}

/**
 * A reservoir mask or simple face mask ordered for a patient at risk of hypercapnic respiratory
 * failure, where the 88–92 % range applies. These give a high, uncontrolled FiO2; BTS 2017 Table 4
 * advises controlled oxygen instead: a 24 % Venturi mask at 2–3 L/min, a 28 % Venturi mask at
 * 4 L/min, or nasal cannulae at 1–2 L/min.
 *
 * Not raised where BTS Table 1 gives critically ill at-risk patients the same initial high-concentration
 * oxygen as others until blood gases are available: no current gas and SpO2 below
 * `thresholds.criticalSpo2BelowPercent`; nor while SpO2 is below the at-risk range itself, when a
 * lower-concentration device would cut the oxygen of a hypoxaemic patient. Warning; critical when the current gas already shows
 * hypercapnia. Suggests a 28 % Venturi mask (or, where the hospital stocks no 28 % valve, a 24 % one)
 * at the minimum flow printed on the hospital's valve (policy `devices`), raised by
 * `thresholds.venturiTachypnoeaFlowMultiplier` above `thresholds.venturiTachypnoeaRespRateAbove`,
 * except to a patient on high flow or CPAP/NIV (an active order or a recorded high flow), for whom a
 * mask is a step down in support. With neither valve stocked the card says so and offers no device.
 * Source: BTS 2017 Tables 1 and 4 (verified).
 */
export const rule: Rule = {
  id: 'uncontrolled-oxygen-at-risk',
  title: 'High-concentration device for a patient at risk of hypercapnia',
  version: 5,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, target, hypercapnicRisk, current } = assessment;
    if (order?.device === undefined || !UNCONTROLLED_DEVICES.includes(order.device)) {
      return [];
    }
    // Its suggestion is a device change and its card speaks of titration: titrations only.
    if (!isTitration(order)) {
      return [];
    }
    if (target.kind !== 'range' || target.basis !== 'hypercapnic-risk') {
      return [];
    }
    const presumedCriticallyIll =
      current.gas === undefined &&
      current.spo2 !== undefined &&
      current.spo2.value < policy.thresholds.criticalSpo2BelowPercent;
    // Below the at-risk range itself the patient needs more oxygen, not a lower-concentration device:
    // BTS 2017 Table 4 steps to controlled oxygen for patients at or above it, and a patient this ill
    // may be critically ill (Table 1). spo2-below-target speaks for the low reading.
    const belowAtRiskRange = current.spo2 !== undefined && current.spo2.value < target.range.lowPercent;
    if (presumedCriticallyIll || belowAtRiskRange) {
      return [];
    }
    const controlled = controlledDevice(assessment, policy);
    // A Venturi mask is conventional oxygen: never offered to a patient already on high flow or NIV.
    const change: OrderChange | undefined =
      controlled === undefined || controlled === 'not-stocked'
        ? undefined
        : keepTier(
            {
              kind: 'set-device',
              device: 'venturi-mask',
              flowLPerMin: controlled.flowLPerMin,
              setFio2Fraction: controlled.setting.fio2Fraction,
            },
            patientSupportTier(facts, order, policy, now),
          );
    const suggestedDevice =
      change?.kind === 'set-device' && change.setFio2Fraction !== undefined
        ? `Venturi mask ${formatPercent(change.setFio2Fraction * 100)} at ${formatFlow(change.flowLPerMin)}`
        : undefined;
    const computation = deliveryComputation(assessment);
    return [
      makeFinding(rule, {
        indicator: hypercapnicRisk.currentHypercapnia === true ? 'critical' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          deliveredFio2: describeDelivery(assessment),
          riskReasons: describeRiskReasons(assessment),
          advisedRange: formatRange(target.range),
          criticalLevel: formatPercent(policy.thresholds.criticalSpo2BelowPercent),
          controlledDevice:
            controlled === 'not-stocked'
              ? 'No 24 % or 28 % Venturi valve is stocked here (local policy): consider another controlled device' +
                // Only a stocked device is offered (policy `devices`): nasal cannulae are named when stocked.
                (isStocked(policy.devices, 'nasal-cannula') ? ', such as nasal cannulae at 1–2 L/min.' : '.')
              : suggestedDevice === undefined || controlled === undefined
                ? 'Consider a controlled device.'
                : `Consider a controlled device: the ${suggestedDevice}` +
                  (controlled.raised
                    ? `, the valve's ${formatFlow(controlled.setting.minimumFlowLPerMin)} raised for a respiratory rate above ${formatNumber(policy.thresholds.venturiTachypnoeaRespRateAbove, 0)}/min.`
                    : '.'),
          ...(suggestedDevice === undefined ? {} : { suggestedDevice }),
        },
        computations: computation === undefined ? [] : [computation],
        sourceKeys: ['bts-2017'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
