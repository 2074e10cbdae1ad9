import type { OrderPurpose, OxygenOrder } from '../../types.js';

/**
 * Whether the order titrates oxygen to an SpO2 target: its purpose is `titrate` and it does not set
 * 0 L/min. Comfort oxygen in terminal palliative care is not titrated to a saturation (BTS 2017);
 * stop, weaning and room-air orders reduce or end oxygen. Rules that would raise the oxygen, step it,
 * or ask for a target to titrate against stay quiet, or offer no change, for any other order.
 *
 * A structured flow of 0 L/min gives no oxygen whatever the order's words say, so it is no
 * titration even when the reader found no stop or room-air wording.
 */
export function isTitration(order: OxygenOrder): boolean {
  return order.purpose === 'titrate' && order.flowLPerMin !== 0;
}

/**
 * Whether the order gives oxygen at all: not a stop or room-air order, and not 0 L/min. What such an
 * order says about a device, a flow or a target is moot, so device and target checks skip it.
 */
export function givesOxygen(order: OxygenOrder): boolean {
  return order.purpose !== 'stop' && order.purpose !== 'room-air' && order.flowLPerMin !== 0;
}

/** Purposes with no SpO2 target to titrate to: comfort (BTS 2017, terminal care), stop, room air. */
const NO_TARGET_PURPOSES: readonly OrderPurpose[] = ['comfort', 'stop', 'room-air'];

/**
 * Whether the order needs a target range: false when it says it has no SpO2 target, is for comfort,
 * stops oxygen, is room air or sets 0 L/min. A weaning order is titrated down against a target, so it
 * still needs one.
 */
export function expectsTarget(order: OxygenOrder): boolean {
  return (
    order.targetNote?.kind !== 'no-target' && !NO_TARGET_PURPOSES.includes(order.purpose) && order.flowLPerMin !== 0
  );
}
