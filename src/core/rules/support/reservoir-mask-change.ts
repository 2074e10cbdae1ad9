import type { SupportTier } from '../../devices/device-tier.js';
import type { OrderChange, OxygenOrder } from '../../types.js';
import { keepTier } from './support-tier.js';

/**
 * The change that puts an order on a reservoir mask at `flowLPerMin`: the device when the order uses
 * another one, the flow when the mask's flow is off, nothing when the order already fits. Used where
 * high-concentration oxygen is itself the indication (pneumothorax, cluster headache). Never offered
 * to a patient on high flow or CPAP/NIV (`tier`): a mask would be a step down in support.
 */
export function reservoirMaskChange(
  order: OxygenOrder,
  flowFits: boolean,
  flowLPerMin: number,
  tier: SupportTier | undefined,
): OrderChange | undefined {
  if (order.device !== 'reservoir-mask') {
    return keepTier({ kind: 'set-device', device: 'reservoir-mask', flowLPerMin }, tier);
  }
  return flowFits ? undefined : { kind: 'set-flow', flowLPerMin };
}
