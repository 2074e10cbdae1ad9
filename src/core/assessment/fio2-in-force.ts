import type { DeliveryEstimate } from '../devices/types.js';
import { stockedVenturiSettings } from '../devices/catalogue.js';
import { deliveryInput, estimateDelivery } from '../devices/index.js';
import type { VenturiSetting } from '../devices/venturi-mask.js';
import { ROOM_AIR_FIO2 } from '../physiology/constants.js';
import type { Policy } from '../policy.js';
import type { Facts, Measured, Outcome, OxygenOrder } from '../types.js';
import type { Fio2InForce } from './types.js';
import { readingMs } from '../time/reading-time.js';

function nearest(items: readonly Measured[], atMs: number, windowMinutes: number): Measured | undefined {
  let best: Measured | undefined;
  let bestGap = Number.POSITIVE_INFINITY;
  for (const item of items) {
    const gap = Math.abs(readingMs(item) - atMs) / 60_000;
    // Ties go to the earlier observation: what was running before the sample, not a change after it.
    const earlierTie = gap === bestGap && best !== undefined && readingMs(item) < readingMs(best);
    if (gap <= windowMinutes && (gap < bestGap || earlierTie)) {
      best = item;
      bestGap = gap;
    }
  }
  return best;
}

function fromDelivery(
  delivery: DeliveryEstimate,
  basis: 'recorded-flow' | 'order-estimate',
  at: string | undefined,
): Fio2InForce {
  // Field by field rather than by spreading `delivery.fio2`: a spread followed by more fields costs
  // microseconds a call in V8, and this runs for every measurement the assessment matches an FiO2 to.
  const { estimate, low, high } = delivery.fio2;
  return { estimate, low, high, basis, at, onAir: false, source: delivery.fio2Source, delivery };
}

/** The ordered device's delivered-FiO2 estimate at a recorded O2 flow. */
export type DeliveryAtFlow = (flowLPerMin: number) => Outcome<DeliveryEstimate>;

/**
 * The estimates for the ordered device at recorded flows, each worked out once: the assessment
 * matches an FiO2 to the gas, the SpO2 and an earlier gas, and these are often read at one recorded
 * flow. One device at one setting shows one FiO2 in one response: at the order's own flow this is the
 * order's estimate itself, and at another flow it is worked out at the same respiratory rate the
 * order's estimate used, so a figure never differs only because one path knew the breathing rate and
 * another did not.
 */
export function deliveryAtRecordedFlows(
  order: OxygenOrder | undefined,
  orderDelivery: Outcome<DeliveryEstimate>,
  venturiSettings: readonly VenturiSetting[],
): DeliveryAtFlow {
  const byFlow = new Map<number, Outcome<DeliveryEstimate>>();
  const respRate = orderDelivery.kind === 'ok' ? orderDelivery.value.respRatePerMin : undefined;
  return (flowLPerMin) => {
    if (orderDelivery.kind === 'ok' && order?.flowLPerMin === flowLPerMin) {
      return orderDelivery;
    }
    if (order?.device === undefined) {
      return { kind: 'unknown', reason: 'device not recognised' };
    }
    let estimate = byFlow.get(flowLPerMin);
    if (estimate === undefined) {
      estimate = estimateDelivery(order.device, deliveryInput(flowLPerMin, order.setFio2Fraction, respRate, venturiSettings));
      byFlow.set(flowLPerMin, estimate);
    }
    return estimate;
  };
}

/**
 * The FiO2 being breathed at `at` (a gas or an SpO2, or its time): the recorded FiO2 observation
 * nearest that time (within the vital-signs window), else the recorded O2 flow nearest it on the
 * ordered device, else the order's own estimate. The basis and source travel with the value so a card
 * can say which was used. Given the reading itself, its time is read from the epoch ms it carries.
 * `atFlow`: the estimates at recorded flows; an assessment passes one for all its readings.
 */
export function fio2InForceAt(
  at: string | { readonly at: string; readonly atMs?: number } | undefined,
  facts: Facts,
  order: OxygenOrder | undefined,
  orderDelivery: Outcome<DeliveryEstimate>,
  policy: Policy,
  atFlow: DeliveryAtFlow = deliveryAtRecordedFlows(order, orderDelivery, stockedVenturiSettings(policy.devices)),
): Outcome<Fio2InForce> {
  const atMs = at === undefined ? Number.NaN : typeof at === 'string' ? Date.parse(at) : readingMs(at);
  if (Number.isNaN(atMs)) {
    return { kind: 'unknown', reason: 'no measurement time to match an FiO2 to' };
  }
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
        source: 'recorded',
        delivery: undefined,
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
        source: 'recorded',
        delivery: undefined,
      },
    };
  }
  if (recordedFlow !== undefined && order?.device !== undefined) {
    const estimate = atFlow(recordedFlow.value);
    if (estimate.kind === 'ok') {
      return { kind: 'ok', value: fromDelivery(estimate.value, 'recorded-flow', recordedFlow.at) };
    }
  }
  if (orderDelivery.kind === 'ok') {
    return { kind: 'ok', value: fromDelivery(orderDelivery.value, 'order-estimate', undefined) };
  }
  return {
    kind: 'unknown',
    reason: 'no FiO2 or O2 flow recorded near that time and no estimate from the order',
    missing: ['FiO2'],
  };
}
