import { formatFlow, formatFraction } from '../../assessment/format.js';
import { DEVICE_MODELS } from '../../devices/index.js';
import type { DeviceKind, Facts, Measured, OxygenOrder } from '../../types.js';
import { deviceLabel } from './describe.js';
import { oldestFirst, readingMs, readWithin } from '../../time/reading-time.js';

/**
 * The oxygen given over a window, compared end to end, shared by rising-oxygen-need (order-sign and
 * patient-view) and the titration review's step-down advice: a rising need holds back any step down.
 */

/**
 * Devices on which a higher O2 flow always means more oxygen breathed (variable performance, no set
 * FiO2): only on these are two recorded flows compared, and only when one of them is named
 * (`flowDevice`). A Venturi's flow does not set its FiO2, high flow's FiO2 is its blender setting, and a
 * recorded flow (LOINC 3151-8) names no device, so across devices flows say nothing.
 */
const FLOW_SETS_OXYGEN: readonly DeviceKind[] = ['nasal-cannula', 'simple-face-mask', 'reservoir-mask', 'tracheostomy-mask'];

/** Oldest first, within the trend window and not in the future. */
export function inWindow(items: readonly Measured[], now: Date, windowMinutes: number): readonly Measured[] {
  const nowMs = now.getTime();
  return oldestFirst(items.filter((m) => readWithin(m, nowMs, windowMinutes) && readingMs(m) <= nowMs));
}

/** The oxygen given at the two ends of the window, in one comparable measure. */
export interface OxygenTrend {
  readonly first: Measured;
  readonly last: Measured;
  /** Positive when more oxygen at the end, negative when less, 0 when the same. */
  readonly direction: number;
  readonly words: (m: Measured) => string;
  readonly measure: string;
  /** Names the measure in the short headline: "FiO2 " for FiO2, nothing for a flow (its unit says it). */
  readonly label: string;
}

interface FlowDevice {
  readonly device: DeviceKind;
  /** True when orders on record name it; false when only this order does. */
  readonly fromRecord: boolean;
}

/**
 * The one flow-set device the recorded flows were given on: the device every order on record names,
 * or with no order on record the device this order names. Undefined when that is not one flow-set
 * device, or when a recorded flow is above the device's top flow (it was given on something else).
 */
function flowDevice(facts: Facts, order: OxygenOrder | undefined, flows: readonly Measured[]): FlowDevice | undefined {
  const fromRecord = facts.activeOrders.length > 0;
  const orders = fromRecord ? facts.activeOrders : order === undefined ? [] : [order];
  const device = orders[0]?.device;
  if (device === undefined || orders.some((o) => o.device !== device) || !FLOW_SETS_OXYGEN.includes(device)) {
    return undefined;
  }
  const top = DEVICE_MODELS[device].flowRangeLPerMin.max;
  return flows.every((f) => f.value <= top) ? { device, fromRecord } : undefined;
}

/**
 * Recorded FiO2 (LOINC 3150-0) compares across devices; recorded flows only on one flow-set device
 * (`flowDevice`). Two readings at least: a single reading shows no trend.
 */
export function oxygenTrend(
  facts: Facts,
  order: OxygenOrder | undefined,
  now: Date,
  windowMinutes: number,
): OxygenTrend | undefined {
  const fio2 = inWindow(facts.trendReadings.fio2Fraction, now, windowMinutes);
  const compare = (first: Measured, last: Measured): number => Math.round(last.value * 100) - Math.round(first.value * 100);
  const firstFio2 = fio2[0];
  const lastFio2 = fio2[fio2.length - 1];
  if (fio2.length >= 2 && firstFio2 !== undefined && lastFio2 !== undefined) {
    return {
      first: firstFio2,
      last: lastFio2,
      direction: compare(firstFio2, lastFio2),
      words: (m) => formatFraction(m.value),
      measure: 'recorded FiO2',
      label: 'FiO2 ',
    };
  }
  const flows = inWindow(facts.trendReadings.o2FlowLPerMin, now, windowMinutes);
  const firstFlow = flows[0];
  const lastFlow = flows[flows.length - 1];
  const named = flowDevice(facts, order, flows);
  if (named === undefined || flows.length < 2 || firstFlow === undefined || lastFlow === undefined) {
    return undefined;
  }
  const device = deviceLabel(named.device).toLowerCase();
  return {
    first: firstFlow,
    last: lastFlow,
    direction: compare(firstFlow, lastFlow),
    words: (m) => formatFlow(m.value),
    measure: named.fromRecord
      ? `recorded O2 flow (${device} throughout)`
      : `recorded O2 flow (${device}, as this order names; none on record)`,
    label: '',
  };
}

/**
 * With no setting recorded in the window, the oxygen counts as unchanged when one order on record,
 * written before the window's first SpO2, was running throughout.
 */
function unchangedByOrder(facts: Facts, since: Measured): boolean {
  const written = facts.activeOrders.map((o) => (o.authoredOn === undefined ? Number.NaN : Date.parse(o.authoredOn)));
  return written.length === 1 && written.every((t) => !Number.isNaN(t) && t <= readingMs(since));
}

/**
 * The oxygen was not lowered over the window: by the trend when there is one; with no setting
 * recorded in the window, when one order on record was running throughout.
 */
function notLowered(
  facts: Facts,
  trend: OxygenTrend | undefined,
  firstSpo2: Measured,
  now: Date,
  windowMinutes: number,
): boolean {
  if (trend !== undefined) {
    return trend.direction >= 0;
  }
  const settingsRecorded =
    inWindow(facts.trendReadings.fio2Fraction, now, windowMinutes).length +
      inWindow(facts.trendReadings.o2FlowLPerMin, now, windowMinutes).length >
    0;
  return !settingsRecorded && unchangedByOrder(facts, firstSpo2);
}

/** A rising oxygen need found over a window, with what the card says about it. */
export interface RisingNeed {
  readonly firstSpo2: Measured;
  readonly lastSpo2: Measured;
  /** Two SpO2 readings or more in the window. */
  readonly twoSpo2: boolean;
  /** Points SpO2 fell from the first to the last reading (negative for a rise). */
  readonly fall: number;
  readonly trend: OxygenTrend | undefined;
  /** SpO2 fell by `spo2FallPoints` or more while the oxygen was not lowered. */
  readonly fellDespite: boolean;
}

/**
 * More oxygen given (by `oxygenTrend`) while SpO2 did not rise by `spo2FallPoints` or more, or SpO2
 * fell by `spo2FallPoints` or more while the oxygen was not lowered (by the same measures, or one
 * order running throughout with no setting recorded). Undefined when neither. Pure.
 */
export function findRisingOxygenNeed(
  facts: Facts,
  order: OxygenOrder | undefined,
  now: Date,
  windowMinutes: number,
  spo2FallPoints: number,
): RisingNeed | undefined {
  const readings = inWindow(facts.trendReadings.spo2Percent, now, windowMinutes);
  const firstSpo2 = readings[0];
  const lastSpo2 = readings[readings.length - 1];
  if (firstSpo2 === undefined || lastSpo2 === undefined) {
    return undefined;
  }
  const twoSpo2 = readings.length >= 2;
  const fall = twoSpo2 ? firstSpo2.value - lastSpo2.value : 0;
  const rise = -fall;
  const trend = oxygenTrend(facts, order, now, windowMinutes);
  const moreOxygen = trend !== undefined && trend.direction > 0 && rise < spo2FallPoints;
  // Whether the oxygen was lowered is asked only once SpO2 has fallen far enough to matter.
  const fellDespite = twoSpo2 && fall >= spo2FallPoints && notLowered(facts, trend, firstSpo2, now, windowMinutes);
  if (!moreOxygen && !fellDespite) {
    return undefined;
  }
  return { firstSpo2, lastSpo2, twoSpo2, fall, trend, fellDespite };
}
