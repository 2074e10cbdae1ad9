import type { Assessment } from '../core/assessment/types.js';
import { DEVICE_MODELS } from '../core/devices/index.js';
import { readingMs } from '../core/time/reading-time.js';
import type { Facts, Measured, OxygenOrder, SaturationRange } from '../core/types.js';
import type { AdvisorySeries, OxygenStep, Spo2Point } from '../store/store.js';

/**
 * What an advisory page's chart plots, taken from the facts one card was judged on: the SpO2
 * readings, the oxygen settings recorded and the one the order asks for, and the target band. Only
 * numbers, times and device labels from the service's own registry: no order text, no references.
 */

/** Room air is 21 % oxygen (the dry-air fraction, 0.2095; common practice rounds it to 0.21). */
const ROOM_AIR_FIO2 = 0.21;
/** Said for a recorded flow or FiO2 when the record does not say which device gave it. */
export const DEVICE_NOT_RECORDED = 'device not recorded';
export const ROOM_AIR = 'room air';
const UNRECOGNISED_DEVICE = 'unrecognised device';

interface Timed<T> {
  readonly ms: number;
  readonly value: T;
}

/**
 * Readings from both windows once each (the current window is inside the trend one), oldest first: two
 * readings are one when they agree in time and value. Grouped by time, then by value (`includes` holds
 * 0 and -0 as one, and NaN as itself, as the text of a number does), with no text made per reading.
 */
function mergedReadings(...lists: readonly (readonly Measured[])[]): Timed<number>[] {
  const valuesByMs = new Map<number, number[]>();
  for (const list of lists) {
    for (const reading of list) {
      const ms = readingMs(reading);
      if (!Number.isFinite(ms)) {
        continue;
      }
      const values = valuesByMs.get(ms);
      if (values === undefined) {
        valuesByMs.set(ms, [reading.value]);
      } else if (!values.includes(reading.value)) {
        values.push(reading.value);
      }
    }
  }
  const merged: Timed<number>[] = [];
  for (const [ms, values] of valuesByMs) {
    for (const value of values) {
      merged.push({ ms, value });
    }
  }
  return merged.sort((a, b) => a.ms - b.ms || a.value - b.value);
}

const iso = (ms: number): string => new Date(ms).toISOString();

/** The one device the record's active orders name, when they agree on one; else not recorded. */
function recordedDevice(facts: Facts): string {
  const kinds = new Set(facts.activeOrders.map((order) => order.device));
  const [only] = [...kinds];
  return kinds.size === 1 && only !== undefined ? DEVICE_MODELS[only].label : DEVICE_NOT_RECORDED;
}

/** The setting the order asks for, shown from the time it was checked. */
function orderedStep(order: OxygenOrder, now: Date): OxygenStep {
  const at = now.toISOString();
  if (order.purpose === 'room-air' || order.purpose === 'stop') {
    return { at, device: ROOM_AIR };
  }
  return {
    at,
    device: order.device === undefined ? UNRECOGNISED_DEVICE : DEVICE_MODELS[order.device].label,
    ...(order.flowLPerMin === undefined ? {} : { flowLPerMin: order.flowLPerMin }),
    ...(order.setFio2Fraction === undefined ? {} : { fio2Fraction: order.setFio2Fraction }),
  };
}

/** Recorded flows and FiO2 readings, one step per time, oldest first. */
function recordedSteps(facts: Facts): OxygenStep[] {
  const flows = mergedReadings(facts.trendReadings.o2FlowLPerMin, facts.o2FlowLPerMin);
  const fio2s = mergedReadings(facts.trendReadings.fio2Fraction, facts.fio2Fraction);
  // Filled in place rather than by `{ ...step, key }` copies, which cost microseconds each on Node 20.
  const byTime = new Map<number, { flowLPerMin?: number; fio2Fraction?: number }>();
  for (const flow of flows) {
    byTime.set(flow.ms, { flowLPerMin: flow.value });
  }
  for (const fio2 of fio2s) {
    const step = byTime.get(fio2.ms);
    if (step === undefined) {
      byTime.set(fio2.ms, { fio2Fraction: fio2.value });
    } else {
      step.fio2Fraction = fio2.value;
    }
  }
  const device = recordedDevice(facts);
  return [...byTime.entries()]
    .sort(([a], [b]) => a - b)
    .map(([ms, setting]) => {
      // No oxygen flowing and no FiO2 above air: the patient was on room air at that reading.
      const onAir =
        (setting.flowLPerMin === undefined || setting.flowLPerMin === 0) &&
        (setting.fio2Fraction === undefined || setting.fio2Fraction <= ROOM_AIR_FIO2);
      return { at: iso(ms), device: onAir ? ROOM_AIR : device, ...setting };
    });
}

/** The band the card judged SpO2 against: the titration target, else the applicable range. */
export function judgedTarget(assessment: Assessment): SaturationRange | undefined {
  if (assessment.titrationTarget !== undefined) {
    return assessment.titrationTarget.range;
  }
  return assessment.target.kind === 'range' ? assessment.target.range : undefined;
}

export function advisorySeries(facts: Facts, assessment: Assessment, now: Date): AdvisorySeries {
  const spo2: Spo2Point[] = mergedReadings(facts.trendReadings.spo2Percent, facts.spo2Percent).map((r) => ({
    at: iso(r.ms),
    spo2Percent: r.value,
  }));
  const oxygen = recordedSteps(facts);
  if (assessment.order !== undefined) {
    oxygen.push(orderedStep(assessment.order, now));
  }
  const target = judgedTarget(assessment);
  return {
    spo2,
    oxygen,
    ...(target === undefined ? {} : { target: { lowPercent: target.lowPercent, highPercent: target.highPercent } }),
  };
}
