import { formatFlow, formatRange } from '../assessment/format.js';
import { DEVICE_MODELS } from '../devices/index.js';
import type { Finding } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';
import { reservoirMaskChange } from './support/reservoir-mask-change.js';
import { patientSupportTier } from './support/support-tier.js';

/**
 * Pneumothorax is documented and no hypercapnic risk is (target selection gives no SpO2 target).
 *
 * Rationale: for a pneumothorax admitted for observation without drainage, BTS 2017 Table 2 advises a
 * reservoir mask at 15 L/min aiming for 100 %, because breathing oxygen speeds resorption of the
 * air; a hypoxaemic patient needs aspiration or drainage. Info (this service cannot tell whether a
 * drain is in). Fires when the order is not a reservoir mask at 15 L/min or names an SpO2 target;
 * suggests a reservoir mask at 15 L/min.
 * Source: BTS 2017 Table 2 (recommendations F5–F6).
 */
export const rule: Rule = {
  id: 'pneumothorax-oxygen',
  title: 'Pneumothorax under observation: high-concentration oxygen',
  version: 2,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const FLOW = policy.thresholds.pneumothoraxFlowLPerMin;
    const { order, target } = assessment;
    if (order === undefined || target.kind !== 'no-spo2-target' || target.condition !== 'pneumothorax') {
      return [];
    }
    // Stopping or weaning oxygen once drained, or comfort oxygen, is not to be turned up to 15 L/min.
    if (!isTitration(order)) {
      return [];
    }
    const onReservoir = order.device === 'reservoir-mask';
    const atFlow = order.flowLPerMin !== undefined && order.flowLPerMin >= FLOW;
    if (onReservoir && atFlow && order.target === undefined) {
      return [];
    }
    const change = reservoirMaskChange(order, atFlow, FLOW, patientSupportTier(facts, order, policy, now));
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          advisedFlow: formatFlow(FLOW),
          orderedTarget: order.target === undefined ? 'none' : formatRange(order.target),
          ...(change === undefined
            ? {}
            : { suggestedDevice: `${DEVICE_MODELS['reservoir-mask'].label} at ${formatFlow(FLOW)}` }),
        },
        sourceKeys: ['bts-2017'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
