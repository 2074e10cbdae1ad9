import type { OrderChange, OxygenOrder } from '../../types.js';

/**
 * The change that puts an order on a reservoir mask at `flowLPerMin`: the device when the order uses
 * another one, the flow when the mask's flow is off, nothing when the order already fits. Used where
 * high-concentration oxygen is itself the indication (pneumothorax, cluster headache).
 */
export function reservoirMaskChange(
  order: OxygenOrder,
  flowFits: boolean,
  flowLPerMin: number,
): OrderChange | undefined {
  if (order.device !== 'reservoir-mask') {
    return { kind: 'set-device', device: 'reservoir-mask', flowLPerMin };
  }
  return flowFits ? undefined : { kind: 'set-flow', flowLPerMin };
}
