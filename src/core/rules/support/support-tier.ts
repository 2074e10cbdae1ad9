import { isWithin } from '../../assessment/current-values.js';
import { deviceTier, highestTier, isLowerTier, tierShownByRecordedFlow } from '../../devices/device-tier.js';
import type { SupportTier } from '../../devices/device-tier.js';
import type { Policy } from '../../policy.js';
import type { Facts, OrderChange, OxygenOrder } from '../../types.js';

/**
 * The highest level of support the patient is on or is being put on: the order under check, every
 * active oxygen order on record, and a current recorded O2 flow that only high flow reaches.
 * Undefined when none of them names a device.
 */
export function patientSupportTier(
  facts: Facts,
  order: OxygenOrder | undefined,
  policy: Policy,
  now: Date,
): SupportTier | undefined {
  const orders = [...facts.activeOrders, ...(order === undefined ? [] : [order])];
  const recorded = facts.o2FlowLPerMin
    .filter((flow) => isWithin(flow, now, policy.freshness.vitalSignsMinutes))
    .map((flow) => tierShownByRecordedFlow(flow.value));
  return highestTier([
    ...orders.map((o) => (o.device === undefined ? undefined : deviceTier(o.device))),
    ...recorded,
  ]);
}

/**
 * `change`, unless it moves the patient to a device on a lower tier than they are on (a reservoir
 * mask or a Venturi for a patient on high flow or NIV): then nothing. A flow or target change, or a
 * device on the same or a higher tier, passes unchanged.
 */
export function keepTier(change: OrderChange | undefined, tier: SupportTier | undefined): OrderChange | undefined {
  if (change?.kind === 'set-device' && isLowerTier(change.device, tier)) {
    return undefined;
  }
  return change;
}
