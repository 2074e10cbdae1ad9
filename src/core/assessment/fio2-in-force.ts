import type { DeliveryEstimate } from '../devices/types.js';
import { estimateDelivery } from '../devices/index.js';
import { ROOM_AIR_FIO2 } from '../physiology/constants.js';
import type { Policy } from '../policy.js';
import type { Facts, Measured, Outcome, OxygenOrder } from '../types.js';
import type { Fio2InForce } from './types.js';


function nearest(items: readonly Measured[], atMs: number, windowMinutes: number): Measured | undefined {
  let best: Measured | undefined;
  let bestGap = Number.POSITIVE_INFINITY;
  for (const item of items) {
    const gap = Math.abs(Date.parse(item.at) - atMs) / 60_000;
    // Ties go to the earlier observation: what was running before the sample, not a change after it.
    const earlierTie = gap === bestGap && best !== undefined && Date.parse(item.at) < Date.parse(best.at);
    if (gap <= windowMinutes && (gap < bestGap || earlierTie)) {
      best = item;
      bestGap = gap;
    }
  }
  return best;
}

/**
 * The FiO2 being breathed at `at` (a gas or an SpO2 time): the recorded FiO2 observation nearest that
 * time (within the vital-signs window), else the recorded O2 flow nearest it on the ordered device,
 * else the order's own estimate. The basis travels with the value so a card can say which was used.
 */
export function fio2InForceAt(
  at: string | undefined,
  facts: Facts,
  order: OxygenOrder | undefined,
  orderDelivery: Outcome<DeliveryEstimate>,
  policy: Policy,
): Outcome<Fio2InForce> {
  if (at === undefined || Number.isNaN(Date.parse(at))) {
    return { kind: 'unknown', reason: 'no measurement time to match an FiO2 to' };
  }
  const atMs = Date.parse(at);
  const windowMinutes = policy.freshness.vitalSignsMinutes;
  const recordedFio2 = nearest(facts.fio2Fraction, atMs, windowMinutes);
  if (recordedFio2 !== undefined) {
    const value = recordedFio2.value;
    return {
      kind: 'ok',
      value: {
        estimate: value,
        low: value,
        high: value,
        basis: 'recorded-fio2',
        at: recordedFio2.at,
        onAir: value <= ROOM_AIR_FIO2,
      },
    };
  }
  const recordedFlow = nearest(facts.o2FlowLPerMin, atMs, windowMinutes);
  if (recordedFlow !== undefined && recordedFlow.value === 0) {
    return {
      kind: 'ok',
      value: {
        estimate: ROOM_AIR_FIO2,
        low: ROOM_AIR_FIO2,
        high: ROOM_AIR_FIO2,
        basis: 'recorded-flow',
        at: recordedFlow.at,
        onAir: true,
      },
    };
  }
  if (recordedFlow !== undefined && order?.device !== undefined) {
    const estimate = estimateDelivery(order.device, {
      flowLPerMin: recordedFlow.value,
      ...(order.setFio2Fraction === undefined ? {} : { setFio2Fraction: order.setFio2Fraction }),
    });
    if (estimate.kind === 'ok') {
      return {
        kind: 'ok',
        value: { ...estimate.value.fio2, basis: 'recorded-flow', at: recordedFlow.at, onAir: false },
      };
    }
  }
  if (orderDelivery.kind === 'ok') {
    return {
      kind: 'ok',
      value: { ...orderDelivery.value.fio2, basis: 'order-estimate', at: undefined, onAir: false },
    };
  }
  return {
    kind: 'unknown',
    reason: 'no FiO2 or O2 flow recorded near that time and no estimate from the order',
    missing: ['FiO2'],
  };
}
