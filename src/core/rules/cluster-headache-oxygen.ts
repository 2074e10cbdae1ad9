import { formatFlow, formatNumber, formatRange } from '../assessment/format.js';
import { DEVICE_MODELS } from '../devices/index.js';
import type { Finding } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';
import { reservoirMaskChange } from './support/reservoir-mask-change.js';
import { patientSupportTier } from './support/support-tier.js';

/**
 * Cluster headache is documented and no hypercapnic risk is (target selection gives no SpO2 target).
 *
 * Rationale: oxygen treats the attack itself and is given at 12–15 L/min through a reservoir mask
 * whatever the SpO2, so the usual SpO2 target does not apply (BTS 2017 and BTS home oxygen guidance,
 * quoted secondarily, V2). Info. Fires when the order is not a reservoir mask at 12–15 L/min, or names
 * an SpO2 target; suggests a reservoir mask at the nearest flow in that range.
 * Source: BTS 2017 (V2); the flow range is `thresholds.clusterHeadacheFlowLPerMin` in the policy.
 */
export const rule: Rule = {
  id: 'cluster-headache-oxygen',
  title: 'Cluster headache: high-flow oxygen, no SpO2 target',
  version: 2,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const range = policy.thresholds.clusterHeadacheFlowLPerMin;
    const FLOW = { min: range.from, max: range.to };
    const { order, target } = assessment;
    if (order === undefined || target.kind !== 'no-spo2-target' || target.condition !== 'cluster-headache') {
      return [];
    }
    if (!isTitration(order)) {
      return [];
    }
    const flow = order.flowLPerMin;
    const onReservoir = order.device === 'reservoir-mask';
    const flowInRange = flow !== undefined && flow >= FLOW.min && flow <= FLOW.max;
    if (onReservoir && flowInRange && order.target === undefined) {
      return [];
    }
    const nearest = flow === undefined ? FLOW.max : Math.min(FLOW.max, Math.max(FLOW.min, flow));
    const change = reservoirMaskChange(order, flowInRange, nearest, patientSupportTier(facts, order, policy, now));
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          advisedFlow: `${formatNumber(FLOW.min, 0)}–${formatFlow(FLOW.max)}`,
          orderedTarget: order.target === undefined ? 'none' : formatRange(order.target),
          ...(change === undefined
            ? {}
            : { suggestedDevice: `${DEVICE_MODELS['reservoir-mask'].label} at ${formatFlow(nearest)}` }),
        },
        sourceKeys: ['bts-2017'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
