import type { Measured, SaturationRange } from '../types.js';
import { readingMs } from '../time/reading-time.js';

/**
 * Time in, above and below an SpO2 target range over a look-back window, from spot readings.
 *
 * Time-weighting (docs/clinical-basis.md, "Titration review"): each SpO2 reading inside the window
 * stands for the patient from its own time until the first of
 * - the next reading,
 * - `maxHoldMinutes` after it (a reading says little about the patient hours later),
 * - the first switch between oxygen and air after it (a reading taken on oxygen does not describe the
 *   patient on air, nor the other way round),
 * - the end of the window (`now`).
 * Whatever no reading stands for is "unobserved": the start of the window before the first reading,
 * and any gap beyond the cap. Readings before the window or after `now` are not used. Two readings at
 * the same instant: the lower one stands (the cautious reading of a disagreement).
 *
 * A reading is in the range when low ≤ SpO2 ≤ high, above when SpO2 > high, below when SpO2 < low.
 * Time above the range is split by the oxygen in use at the reading: above on air is no excess oxygen
 * (BTS 2017: oxygen is given to a target; a patient above the range on air needs none, from memory).
 *
 * The five parts always add up to the window: in + above on oxygen + above on air + below +
 * unobserved = window. Pure; times in minutes (fractions of a minute kept).
 */

/** A switch between oxygen and air at a moment: a recorded FiO2 or flow, or an order starting. */
export interface OxygenStep {
  readonly at: string;
  readonly onOxygen: boolean;
}

export interface TimeInRangeInput {
  readonly readings: readonly Measured[];
  readonly range: SaturationRange;
  readonly now: Date;
  readonly lookbackMinutes: number;
  readonly maxHoldMinutes: number;
  /** Oxygen or air from the step's time on; any order. */
  readonly oxygenSteps: readonly OxygenStep[];
  /** Oxygen or air before the first step (e.g. an order running since before the window). */
  readonly onOxygenAtStart: boolean;
}

export interface TimeInRange {
  readonly windowMinutes: number;
  readonly inRangeMinutes: number;
  readonly aboveOnOxygenMinutes: number;
  readonly aboveOnAirMinutes: number;
  readonly belowMinutes: number;
  readonly unobservedMinutes: number;
  /** The window less the unobserved time. */
  readonly observedMinutes: number;
  /** Readings inside the window that were used (each holds for zero or more minutes). */
  readonly readingsUsed: number;
}

const MS_PER_MIN = 60_000;

interface Timed {
  readonly ms: number;
  readonly value: number;
}

function timed(items: readonly { readonly at: string; readonly value: number }[]): Timed[] {
  return items
    .map((item) => ({ ms: readingMs(item), value: item.value }))
    .filter((item) => !Number.isNaN(item.ms) && Number.isFinite(item.value));
}

/** Oxygen or air at `ms`: the newest step at or before it (oxygen wins a tie), else the start state. */
function onOxygenAt(ms: number, steps: readonly { ms: number; onOxygen: boolean }[], atStart: boolean): boolean {
  let state = atStart;
  for (const step of steps) {
    if (step.ms > ms) {
      break;
    }
    state = step.onOxygen;
  }
  return state;
}

export function timeInRange(input: TimeInRangeInput): TimeInRange {
  const endMs = input.now.getTime();
  const windowMs = Math.max(0, input.lookbackMinutes) * MS_PER_MIN;
  const startMs = endMs - windowMs;
  const capMs = Math.max(0, input.maxHoldMinutes) * MS_PER_MIN;
  const steps = input.oxygenSteps
    .map((step) => ({ ms: Date.parse(step.at), onOxygen: step.onOxygen }))
    .filter((step) => !Number.isNaN(step.ms))
    // Air before oxygen at one instant, so oxygen is the state left standing.
    .sort((a, b) => a.ms - b.ms || Number(a.onOxygen) - Number(b.onOxygen));
  // Oldest first; at one instant the higher first, so the lower is the one that stands.
  const readings = timed(input.readings)
    .filter((r) => r.ms >= startMs && r.ms <= endMs)
    .sort((a, b) => a.ms - b.ms || b.value - a.value);

  let inMs = 0;
  let aboveOnOxygenMs = 0;
  let aboveOnAirMs = 0;
  let belowMs = 0;
  for (const [index, reading] of readings.entries()) {
    const onOxygen = onOxygenAt(reading.ms, steps, input.onOxygenAtStart);
    const nextMs = readings[index + 1]?.ms ?? endMs;
    const switchMs = steps.find((s) => s.ms > reading.ms && s.onOxygen !== onOxygen)?.ms ?? endMs;
    const holdMs = Math.max(0, Math.min(nextMs, reading.ms + capMs, switchMs, endMs) - reading.ms);
    if (reading.value < input.range.lowPercent) {
      belowMs += holdMs;
    } else if (reading.value > input.range.highPercent) {
      if (onOxygen) {
        aboveOnOxygenMs += holdMs;
      } else {
        aboveOnAirMs += holdMs;
      }
    } else {
      inMs += holdMs;
    }
  }
  const observedMs = inMs + aboveOnOxygenMs + aboveOnAirMs + belowMs;
  return {
    windowMinutes: windowMs / MS_PER_MIN,
    inRangeMinutes: inMs / MS_PER_MIN,
    aboveOnOxygenMinutes: aboveOnOxygenMs / MS_PER_MIN,
    aboveOnAirMinutes: aboveOnAirMs / MS_PER_MIN,
    belowMinutes: belowMs / MS_PER_MIN,
    unobservedMinutes: (windowMs - observedMs) / MS_PER_MIN,
    observedMinutes: observedMs / MS_PER_MIN,
    readingsUsed: readings.length,
  };
}

/** `part` as a whole-number-free percentage of `whole` minutes; 0 when `whole` is 0. */
export function shareOfPercent(partMinutes: number, wholeMinutes: number): number {
  return wholeMinutes <= 0 ? 0 : (100 * partMinutes) / wholeMinutes;
}
