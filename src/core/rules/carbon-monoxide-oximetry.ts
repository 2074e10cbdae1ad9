import { estimateOrderDelivery } from '../assessment/build-assessment.js';
import { formatFlow, formatRange } from '../assessment/format.js';
import { flowRangeFor } from '../devices/catalogue.js';
import { DEVICE_MODELS } from '../devices/index.js';
import type { DeviceKind, Finding, OrderChange } from '../types.js';
import { describeDelivery, describeOrder, findCondition } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';
import { keepTier, patientSupportTier } from './support/support-tier.js';

/** Devices that can give high-concentration oxygen when set for it; no device change is offered. */
const HIGH_CONCENTRATION_DEVICES: readonly DeviceKind[] = ['reservoir-mask', 'high-flow-nasal-cannula', 'cpap-niv'];

/**
 * Carbon monoxide poisoning is documented.
 *
 * Rationale: pulse oximeters read carboxyhaemoglobin as oxyhaemoglobin, so SpO2 (and often PaO2)
 * looks normal and no SpO2 target applies; BTS 2017 Table 1 advises as much oxygen as possible
 * (reservoir or bag-valve mask) and checking COHb. Warning; critical when the order titrates to an
 * SpO2 target or gives less oxygen than an active order on record (a down-titration). Suggests a
 * reservoir mask at the top of the hospital's reservoir-mask limits (policy `devices`; the model's top
 * flow by default) when the order is on another device, or that top flow when a
 * reservoir mask is run below it; no device change to a patient on high flow or CPAP/NIV (device tiers).
 * Source: BTS 2017 Table 1 (recommendation on CO poisoning).
 */
export const rule: Rule = {
  id: 'carbon-monoxide-oximetry',
  title: 'Carbon monoxide poisoning: SpO2 is not a valid target',
  version: 3,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, delivery, current } = assessment;
    const condition = findCondition(facts, ['carbon-monoxide-poisoning']);
    if (order === undefined || condition === undefined) {
      return [];
    }
    const onRecord = facts.activeOrders
      .filter((o) => o.reference !== order.reference)
      .map((o) => estimateOrderDelivery(o, current))
      .flatMap((d) => (d.kind === 'ok' ? [d.value.fio2.estimate] : []));
    const downTitration =
      delivery.kind === 'ok' && onRecord.some((fio2) => delivery.value.fio2.estimate < fio2);
    const reservoir = DEVICE_MODELS['reservoir-mask'];
    // The top of the hospital's reservoir-mask limits (policy `devices`; the model's 15 L/min by default).
    const topFlow = flowRangeFor(policy.devices, 'reservoir-mask').max;
    // A stop, weaning, room-air or comfort order still gets the card (CO poisoning needs as much
    // oxygen as possible), but never a one-click change that turns it into high-flow oxygen; and never
    // a mask for a patient on high flow or NIV (an order on record, a recorded high flow).
    const change: OrderChange | undefined = !isTitration(order)
      ? undefined
      : keepTier(
      order.device === 'reservoir-mask'
        ? order.flowLPerMin === undefined || order.flowLPerMin < topFlow
          ? { kind: 'set-flow', flowLPerMin: topFlow }
          : undefined
        : order.device !== undefined && HIGH_CONCENTRATION_DEVICES.includes(order.device)
          ? undefined
          : { kind: 'set-device', device: 'reservoir-mask', flowLPerMin: topFlow },
      patientSupportTier(facts, order, policy, now),
    );
    return [
      makeFinding(rule, {
        indicator: order.target !== undefined || downTitration ? 'critical' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          condition: condition.display,
          orderDescription: describeOrder(order),
          deliveredFio2: describeDelivery(assessment),
          orderedTarget: order.target === undefined ? 'none' : formatRange(order.target),
          downTitration: downTitration ? 'yes: less oxygen than an active order on record' : 'no',
          ...(change === undefined
            ? {}
            : { suggestedDevice: `${reservoir.label} at ${formatFlow(topFlow)}` }),
        },
        sourceKeys: ['bts-2017'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
