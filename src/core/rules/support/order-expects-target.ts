import type { OrderPurpose, OxygenOrder } from '../../types.js';

/**
 * Orders that are not titrations to an SpO2 target: comfort oxygen in terminal palliative care (BTS
 * 2017: oxygen there is for comfort, not to a saturation), orders that stop oxygen, and room air.
 * A weaning order is still titrated down against a target, so it expects one.
 */
const NO_TARGET_PURPOSES: readonly OrderPurpose[] = ['comfort', 'stop', 'room-air'];

/** False when the order says it has no SpO2 target, or is for comfort, stops oxygen or is room air. */
export function orderExpectsTarget(order: OxygenOrder): boolean {
  return order.targetNote?.kind !== 'no-target' && !NO_TARGET_PURPOSES.includes(order.purpose);
}
