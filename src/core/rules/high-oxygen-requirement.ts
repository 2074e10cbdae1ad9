import { formatFraction, formatNumber } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import type { DeviceKind, Finding } from '../types.js';
import { deliveryComputation, describeDelivery, describeOrder } from './support/describe.js';
import { escalatedSupportFailingSpeaks } from './support/escalated-support.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/** Devices whose use already marks a high oxygen requirement, whatever the estimated FiO2. */
// High flow is judged by its set FiO2 like any other device: high flow at FiO2 0.30 while weaning
// is no high requirement. A reservoir mask only delivers high concentrations, and CPAP/NIV is
// respiratory support whatever its FiO2.
const HIGH_REQUIREMENT_DEVICES: readonly DeviceKind[] = ['reservoir-mask', 'cpap-niv'];

/**
 * When ROX predicts high-flow failure: a short line for the summary ("ROX 3.26 after 6 h, below the
 * 3.47 failure threshold"; "… (start unknown)") and the threshold note for the detail.
 */
function roxFailure(assessment: Assessment): { readonly concern: string; readonly note: string } | undefined {
  const rox = assessment.physiology.rox;
  if (rox.kind !== 'ok' || rox.value.value.interpretation !== 'high-risk' || rox.value.value.threshold === undefined) {
    return undefined;
  }
  const { index, threshold, thresholdNote, hoursOnHighFlow } = rox.value.value;
  const after = hoursOnHighFlow === undefined ? '' : ` after ${formatNumber(hoursOnHighFlow, 1)} h`;
  const unknown = threshold.startKnown ? '' : ' (start unknown)';
  return {
    concern: `ROX ${formatNumber(index, 2)}${after}, below the ${threshold.failureBelow} failure threshold${unknown}`,
    note: thresholdNote,
  };
}

/**
 * The order delivers a high oxygen concentration: estimated FiO2 at or above
 * `thresholds.highOxygenFio2AtLeast` (the estimate's central value), or a reservoir mask, high-flow
 * nasal cannula or CPAP/NIV.
 *
 * Rationale: a rising or high oxygen requirement is a sign of serious illness; BTS 2017 advises
 * senior review and consideration of critical care for such patients (wording from memory). CPAP
 * or NIV at a low FiO2 is named as respiratory support, not a high oxygen requirement. Not
 * raised where high-concentration oxygen is itself the indication (carbon monoxide, pneumothorax,
 * cluster headache), which their own rules address. Warning; critical when the ROX index on high
 * flow (with the set FiO2) is below the Roca 2019 failure threshold for the time on high flow
 * (2.85 / 3.47 / 3.85 at 2 / 6 / 12 h; the 12-h one when the start is unknown), which predicted
 * high-flow failure (intubation).
 * Silent when escalated-support-failing speaks for the order (below target on failing high flow or
 * NIV), whose card carries the ROX reading.
 * Source: BTS 2017 (from memory for the exact wording); the FiO2 threshold is the local policy's.
 */
export const rule: Rule = {
  id: 'high-oxygen-requirement',
  title: 'High oxygen requirement: senior review',
  version: 4,
  hooks: ['order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, delivery, target } = assessment;
    // One card says one thing: failing high flow or NIV below target is escalated-support-failing's.
    if (order === undefined || target.kind === 'no-spo2-target' || escalatedSupportFailingSpeaks(assessment, facts, policy, now)) {
      return [];
    }
    // A comfort, stop, weaning or room-air order states no oxygen requirement to escalate.
    if (!isTitration(order)) {
      return [];
    }
    const threshold = policy.thresholds.highOxygenFio2AtLeast;
    const highFio2 = delivery.kind === 'ok' && delivery.value.thresholdFio2.fraction >= threshold;
    const highDevice = order.device !== undefined && HIGH_REQUIREMENT_DEVICES.includes(order.device);
    const rox = roxFailure(assessment);
    if (!highFio2 && !highDevice && rox === undefined) {
      return [];
    }
    const support = !highFio2 && order.device === 'cpap-niv';
    // With SpO2 above the range being titrated to, the order gives more than is needed: the point is
    // to step down (BMJ 2018: SpO2 at or below 96 %), not to escalate, so the card is information.
    const spo2 = assessment.current.spo2;
    const aboveTarget =
      rox === undefined &&
      spo2 !== undefined &&
      assessment.titrationTarget !== undefined &&
      spo2.value > assessment.titrationTarget.range.highPercent;
    const concern =
      rox?.concern ??
      (aboveTarget
        ? 'high-concentration oxygen with SpO2 above target'
        : support
          ? 'respiratory support'
          : 'high oxygen requirement');
    const computation = deliveryComputation(assessment);
    const roxComputation = assessment.physiology.rox.kind === 'ok' && rox !== undefined
      ? [assessment.physiology.rox.value.computation]
      : [];
    return [
      makeFinding(rule, {
        indicator: rox !== undefined ? 'critical' : aboveTarget ? 'info' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          deliveredFio2: describeDelivery(assessment),
          fio2Threshold: formatFraction(threshold),
          concern,
          advice: aboveTarget ? 'consider stepping down' : 'consider senior review',
          trigger: highFio2
            ? `estimated FiO2 at or above ${formatFraction(threshold)}`
            : highDevice
              ? support
                ? 'the device itself: CPAP or NIV is respiratory support'
                : 'the device itself'
              : 'the ROX index',
          roxStatus:
            rox === undefined
              ? 'not below a failure threshold, or not on high flow'
              : `${rox.concern}; ${rox.note} (Roca 2019)`,
        },
        computations: [...(computation === undefined ? [] : [computation]), ...roxComputation],
        sourceKeys: ['bts-2017', 'local-policy', ...(rox === undefined ? [] : ['roca-2019'])],
      }),
    ];
  },
};
