import { findVenturiSetting } from '../devices/venturi-mask.js';
import { formatFlow, formatPercent, formatRange } from '../assessment/format.js';
import type { DeviceKind, Finding, OrderChange } from '../types.js';
import { deliveryComputation, describeDelivery, describeOrder, describeRiskReasons } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';
import { keepTier, patientSupportTier } from './support/support-tier.js';

/** Devices whose FiO2 is high and not controlled: the harm BTS 2017 Table 4 guards CO2 retainers from. */
const UNCONTROLLED_DEVICES: readonly DeviceKind[] = ['reservoir-mask', 'simple-face-mask'];

/** BTS 2017 Table 4: a 28 % Venturi mask at 4 L/min is one of the advised starting devices. */
const CONTROLLED_SETTING_FRACTION = 0.28;

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
 * hypercapnia. Suggests a 28 % Venturi mask at its minimum flow, except to a patient on high flow or
 * CPAP/NIV (an active order or a recorded high flow), for whom a mask is a step down in support.
 * Source: BTS 2017 Tables 1 and 4 (verified).
 */
export const rule: Rule = {
  id: 'uncontrolled-oxygen-at-risk',
  title: 'High-concentration device for a patient at risk of hypercapnia',
  version: 3,
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
    const setting = findVenturiSetting(CONTROLLED_SETTING_FRACTION);
    // A Venturi mask is conventional oxygen: never offered to a patient already on high flow or NIV.
    const change: OrderChange | undefined =
      setting === undefined
        ? undefined
        : keepTier(
            {
              kind: 'set-device',
              device: 'venturi-mask',
              flowLPerMin: setting.minimumFlowLPerMin,
              setFio2Fraction: CONTROLLED_SETTING_FRACTION,
            },
            patientSupportTier(facts, order, policy, now),
          );
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
          ...(change?.kind === 'set-device'
            ? { suggestedDevice: `Venturi mask 28 % at ${formatFlow(change.flowLPerMin)}` }
            : {}),
        },
        computations: computation === undefined ? [] : [computation],
        sourceKeys: ['bts-2017'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
