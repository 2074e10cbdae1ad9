import { formatDuration, formatRange } from '../assessment/format.js';
import { oncePerAssessment, type AssessmentInputs } from '../assessment/once-per-assessment.js';
import type { Policy } from '../policy.js';
import { expectsTarget } from '../rules/support/order-purpose.js';
import type { Computation, Facts, Measured, OxygenOrder, SaturationRange } from '../types.js';
import { timeInRange, type OxygenStep, type TimeInRange } from './time-in-range.js';
import { oldestFirst, readingMs } from '../time/reading-time.js';
import { sortByTime } from '../time/sort-by-time.js';

/**
 * What the titration review on `patient-view` looks at, built once per assessment from the facts: the SpO2
 * readings of the look-back window (`titrationReview.lookbackHours`), the oxygen or air they were taken
 * on, the range titrated to (the assessment's titration target: the ordered range, or the one the
 * policy selects for this patient) and the time in, above and below it. Pure.
 */
export interface TitrationReview {
  readonly order: OxygenOrder;
  readonly range: SaturationRange;
  readonly lookbackMinutes: number;
  /** SpO2 readings in the window, oldest first. */
  readonly readings: readonly Measured[];
  readonly time: TimeInRange;
  /** Whether the newest reading in the window was taken on oxygen. */
  readonly latestOnOxygen: boolean;
}

/** Recorded FiO2 at or below this is air (0.21, with room for rounding). */
const AIR_FIO2_AT_MOST = 0.215;

/** Oldest first, inside [now − minutes, now]. */
export function readingsInWindow(items: readonly Measured[], now: Date, minutes: number): Measured[] {
  const end = now.getTime();
  const start = end - minutes * 60_000;
  return oldestFirst(
    items.filter((m) => {
      const at = readingMs(m);
      return !Number.isNaN(at) && at >= start && at <= end;
    }),
  );
}

/** Switches between oxygen and air seen in recorded FiO2 (above 0.21: oxygen) and flow (above 0: oxygen). */
export function observedOxygenSteps(readings: {
  readonly fio2Fraction: readonly Measured[];
  readonly o2FlowLPerMin: readonly Measured[];
}): OxygenStep[] {
  return [
    ...readings.fio2Fraction.map((m) => ({ at: m.at, onOxygen: m.value > AIR_FIO2_AT_MOST })),
    ...readings.o2FlowLPerMin.map((m) => ({ at: m.at, onOxygen: m.value > 0 })),
  ];
}

/**
 * Switches between oxygen and air: a recorded FiO2 above 0.21 or a recorded flow above 0 means oxygen,
 * FiO2 0.21 or flow 0 means air; an order written inside the window starts oxygen at its time.
 */
export function oxygenSteps(facts: Facts, order: OxygenOrder, now: Date, minutes: number): {
  readonly steps: readonly OxygenStep[];
  readonly onOxygenAtStart: boolean;
} {
  const startMs = now.getTime() - minutes * 60_000;
  const authored = order.authoredOn === undefined ? Number.NaN : Date.parse(order.authoredOn);
  // An active order with no time, or written before the window, was running when the window opened.
  const startedInWindow = !Number.isNaN(authored) && authored > startMs;
  const steps: OxygenStep[] = [
    ...observedOxygenSteps(facts.trendReadings),
    ...(startedInWindow && order.authoredOn !== undefined ? [{ at: order.authoredOn, onOxygen: true }] : []),
  ];
  return { steps, onOxygenAtStart: !startedInWindow };
}

/**
 * The review for the assessment's order, or undefined without an order that titrates to a target or
 * without a range to titrate to (no SpO2 target applies: CO poisoning, pneumothorax, cluster headache).
 * Three rules read it on every patient-view call (time below target, time above target on oxygen, ready
 * to step down); it depends only on its inputs and is read-only, so the one built for an assessment is
 * served again while the facts, policy and clock are the same.
 */
export const reviewTitration: (input: AssessmentInputs) => TitrationReview | undefined = oncePerAssessment(buildReview);

function buildReview(input: AssessmentInputs): TitrationReview | undefined {
  const { facts, policy, assessment, now } = input;
  const { order, titrationTarget } = assessment;
  // Comfort, stop and room-air orders, and orders saying they have no SpO2 target, are not titrated.
  if (order === undefined || titrationTarget === undefined || assessment.target.kind !== 'range' || !expectsTarget(order)) {
    return undefined;
  }
  const lookbackMinutes = policy.titrationReview.lookbackHours * 60;
  const readings = readingsInWindow(facts.trendReadings.spo2Percent, now, lookbackMinutes);
  const { steps, onOxygenAtStart } = oxygenSteps(facts, order, now, lookbackMinutes);
  const time = timeInRange({
    readings,
    range: titrationTarget.range,
    now,
    lookbackMinutes,
    maxHoldMinutes: policy.titrationReview.maxReadingHoldMinutes,
    oxygenSteps: steps,
    onOxygenAtStart,
  });
  const latest = readings[readings.length - 1];
  const latestMs = latest === undefined ? Number.NaN : readingMs(latest);
  // The newest switch at or before the latest reading (oxygen wins a tie, as in timeInRange).
  const before = sortByTime(
    steps.filter((s) => Date.parse(s.at) <= latestMs),
    (s) => s.at,
    'oldest-first',
    (a, b) => Number(a.onOxygen) - Number(b.onOxygen),
  );
  const latestOnOxygen = before[before.length - 1]?.onOxygen ?? onOxygenAtStart;
  return { order, range: titrationTarget.range, lookbackMinutes, readings, time, latestOnOxygen };
}

/** The newest reading in the window, if any. */
export function latestReading(review: TitrationReview): Measured | undefined {
  return review.readings[review.readings.length - 1];
}

/**
 * The gap, in minutes, that breaks the recent run of readings, or undefined when there is none. Walking
 * back from the newest reading, the run is the readings each at most `maxGapMinutes` after the one
 * before; it is long enough once it holds `minReadings` readings spanning at least `minSpanMinutes`.
 * A gap longer than `maxGapMinutes` met before that means the newest readings are not consecutive
 * observations of one course: nothing was seen in between. An early gap behind a long enough recent
 * run does not count, and running out of readings without such a gap is not a break.
 */
export function gapBreakingRecentRun(
  review: TitrationReview,
  limits: { readonly maxGapMinutes: number; readonly minSpanMinutes: number; readonly minReadings: number },
): number | undefined {
  const times = review.readings.map((m) => readingMs(m)).filter((ms) => !Number.isNaN(ms));
  const newest = times[times.length - 1];
  if (newest === undefined) {
    return undefined;
  }
  for (let i = times.length - 1; i >= 1; i -= 1) {
    const count = times.length - i;
    const spanMinutes = (newest - (times[i] ?? newest)) / 60_000;
    if (count >= limits.minReadings && spanMinutes >= limits.minSpanMinutes) {
      return undefined;
    }
    const gapMinutes = ((times[i] ?? 0) - (times[i - 1] ?? 0)) / 60_000;
    if (gapMinutes > limits.maxGapMinutes) {
      return gapMinutes;
    }
  }
  return undefined;
}

/** Whether any reading in the window is below the range. */
export function anyReadingBelow(review: TitrationReview): boolean {
  return review.readings.some((m) => m.value < review.range.lowPercent);
}

/**
 * The time split in words for cards: "in range 5 h 10 min, above on oxygen 2 h, below 0 min, above on
 * air 0 min, not observed 50 min (of the last 8 h; 7 readings; target 94–98 %)".
 */
export function describeTimeSplit(review: TitrationReview): string {
  const t = review.time;
  const parts = [
    `in range ${formatDuration(t.inRangeMinutes)}`,
    `above on oxygen ${formatDuration(t.aboveOnOxygenMinutes)}`,
    `below ${formatDuration(t.belowMinutes)}`,
    ...(t.aboveOnAirMinutes > 0 ? [`above on air ${formatDuration(t.aboveOnAirMinutes)}`] : []),
    `not observed ${formatDuration(t.unobservedMinutes)}`,
  ];
  const readings = `${t.readingsUsed} SpO2 reading${t.readingsUsed === 1 ? '' : 's'}`;
  return `${parts.join(', ')} (of the last ${formatDuration(t.windowMinutes)}; ${readings}; target ${formatRange(review.range)})`;
}

/** The time-weighting as a card computation, so the workings show how the split was reached. */
export function timeInRangeComputation(review: TitrationReview, policy: Policy): Computation {
  const readings = review.readings.length;
  return {
    name: 'Time in, above and below the target range',
    formula:
      `each SpO2 reading stands until the next one, for at most ${formatDuration(policy.titrationReview.maxReadingHoldMinutes)}, ` +
      'never across a switch between oxygen and air; the rest of the window is not observed',
    substituted: `${String(readings)} SpO2 readings over the last ${formatDuration(review.lookbackMinutes)}, target ${formatRange(review.range)}`,
    result: describeTimeSplit(review),
    sourceKey: 'local-policy',
  };
}
