import { formatFraction } from '../assessment/format.js';
import type { DeviceKind, Finding } from '../types.js';
import { deliveryComputation, describeDelivery, describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/** Devices whose use already marks a high oxygen requirement, whatever the estimated FiO2. */
const HIGH_REQUIREMENT_DEVICES: readonly DeviceKind[] = ['reservoir-mask', 'high-flow-nasal-cannula', 'cpap-niv'];

/**
 * The order delivers a high oxygen concentration: estimated FiO2 at or above
 * `thresholds.highOxygenFio2AtLeast` (the estimate's central value), or a reservoir mask, high-flow
 * nasal cannula or CPAP/NIV.
 *
 * Rationale: a rising or high oxygen requirement is a sign of serious illness; BTS 2017 advises
 * senior review and consideration of critical care for such patients (wording from memory). Not
 * raised where high-concentration oxygen is itself the indication (carbon monoxide, pneumothorax,
 * cluster headache), which their own rules address. Warning.
 * Source: BTS 2017 (from memory for the exact wording); the FiO2 threshold is the local policy's.
 */
export const rule: Rule = {
  id: 'high-oxygen-requirement',
  title: 'High oxygen requirement: senior review',
  version: 1,
  hooks: ['order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, delivery, target } = assessment;
    if (order === undefined || target.kind === 'no-spo2-target') {
      return [];
    }
    const threshold = policy.thresholds.highOxygenFio2AtLeast;
    const highFio2 = delivery.kind === 'ok' && delivery.value.fio2.estimate >= threshold;
    const highDevice = order.device !== undefined && HIGH_REQUIREMENT_DEVICES.includes(order.device);
    if (!highFio2 && !highDevice) {
      return [];
    }
    const computation = deliveryComputation(assessment);
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          deliveredFio2: describeDelivery(assessment),
          fio2Threshold: formatFraction(threshold),
          trigger: highFio2 ? `estimated FiO2 at or above ${formatFraction(threshold)}` : 'the device itself',
        },
        computations: computation === undefined ? [] : [computation],
        sourceKeys: ['bts-2017', 'local-policy'],
      }),
    ];
  },
};
