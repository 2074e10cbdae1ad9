import {
  formatDeliveredFio2,
  formatDuration,
  formatFlow,
  formatFraction,
  formatNumber,
  formatPercent,
  minutesBetween,
  type TimeOrReading,
} from '../../assessment/format.js';
import type { Assessment } from '../../assessment/types.js';
import { DEVICE_MODELS } from '../../devices/index.js';
import type { Computation, ConditionFact, ConditionKind, DeviceKind, Facts, Measured, OxygenOrder } from '../../types.js';
import { readingMs } from '../../time/reading-time.js';

/** "Nasal cannula" for a known kind, the order's own words otherwise. */
export function deviceLabel(kind: DeviceKind | undefined, text?: string): string {
  if (kind === undefined) {
    return text === undefined ? 'unrecognised device' : `'${text}'`;
  }
  return DEVICE_MODELS[kind].label;
}

/** "Nasal cannula at 3 L/min", "Venturi mask 28 % at 4 L/min". */
export function describeOrder(order: OxygenOrder): string {
  const label = deviceLabel(order.device, order.deviceText);
  const setting =
    order.setFio2Fraction === undefined
      ? ''
      : order.device === 'venturi-mask'
        ? ` ${formatPercent(order.setFio2Fraction * 100)}`
        : ` FiO2 ${formatFraction(order.setFio2Fraction)}`;
  const flow = order.flowLPerMin === undefined ? '' : ` at ${formatFlow(order.flowLPerMin)}`;
  return `${label}${setting}${flow}`;
}

/** The delivered-FiO2 estimate for display, or why there is none. */
export function describeDelivery(assessment: Assessment): string {
  return assessment.delivery.kind === 'ok'
    ? formatDeliveredFio2(assessment.delivery.value)
    : `not estimated (${assessment.delivery.reason})`;
}

/** The working behind the delivered-FiO2 estimate, for the card's computations. */
export function deliveryComputation(assessment: Assessment): Computation | undefined {
  const { order, delivery } = assessment;
  if (order === undefined || delivery.kind !== 'ok') {
    return undefined;
  }
  const rr = assessment.current.respRate;
  // The inputs the model read, joined as they are written: no list built and filtered on every call.
  const flow = order.flowLPerMin === undefined ? '' : `O2 flow ${formatFlow(order.flowLPerMin)}, `;
  const setting = order.setFio2Fraction === undefined ? '' : `set FiO2 ${formatFraction(order.setFio2Fraction)}, `;
  const breathing =
    rr === undefined
      ? 'respiratory rate not recorded (resting pattern assumed)'
      : `respiratory rate ${formatNumber(rr.value, 0)}/min`;
  const { model, envelope, fio2Source } = delivery.value;
  return {
    name: fio2Source === 'set' ? 'Delivered FiO2 (device setting)' : 'Delivered FiO2 (estimate)',
    formula: `${deviceLabel(order.device)}: ${model.name}; published range used: ${envelope.basis}`,
    substituted: `${flow}${setting}${breathing}`,
    result: formatDeliveredFio2(delivery.value),
    sourceKey: model.sourceKey,
  };
}

/** "25 min ago" for a measurement, relative to the call's clock. */
export function describeAge(at: TimeOrReading, now: Date): string {
  const minutes = minutesBetween(at, now);
  if (minutes === undefined) {
    return 'at an unreadable time';
  }
  return minutes < 0 ? `${formatDuration(minutes)} from now` : `${formatDuration(minutes)} ago`;
}

/** "93 % (25 min ago)". */
export function describeMeasured(measured: Measured, now: Date, unit: '%' | '/min'): string {
  const value = unit === '%' ? formatPercent(measured.value) : `${formatNumber(measured.value, 0)}/min`;
  return `${value} (${describeAge(measured, now)})`;
}

/** The first documented condition of one of `kinds`, if any. */
export function findCondition(facts: Facts, kinds: readonly ConditionKind[]): ConditionFact | undefined {
  return facts.conditions.find((c) => kinds.includes(c.kind));
}

/** The risk reasons as one line of evidence: "Kyphoscoliosis (SNOMED CT 405773007); PaCO2 6.7 kPa 3 h ago". */
export function describeRiskReasons(assessment: Assessment): string {
  const reasons = assessment.hypercapnicRisk.reasons;
  return reasons.length === 0 ? 'none documented' : reasons.map((r) => r.evidence).join('; ');
}

/**
 * Whether the current SpO2 was read on oxygen: from a recorded FiO2 or flow when there is one;
 * otherwise assumed when an oxygen order is already active on record or the subject order predates
 * the reading; undefined when it cannot be told (a new order with nothing recorded).
 */
export function readOnOxygen(assessment: Assessment, facts: Facts): boolean | undefined {
  const fio2 = assessment.physiology.fio2AtSpo2;
  const spo2 = assessment.current.spo2;
  if (fio2.kind === 'ok' && fio2.value.basis !== 'order-estimate') {
    return !fio2.value.onAir;
  }
  if (facts.activeOrders.length > 0) {
    return true;
  }
  const authored = assessment.order?.authoredOn;
  if (spo2 !== undefined && authored !== undefined && Date.parse(authored) <= readingMs(spo2)) {
    return true;
  }
  return undefined;
}
