import { isWithin } from '../assessment/current-values.js';
import { formatDuration, formatFlow, formatNumber } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import { flowRangeFor } from '../devices/catalogue.js';
import type { Policy } from '../policy.js';
import { isTitration } from '../rules/support/order-purpose.js';
import { reasonNotToLowerOxygen } from '../rules/support/oxygen-lowering.js';
import { findRisingOxygenNeed, oxygenTrend } from '../rules/support/oxygen-trend.js';
import { patientSupportTier } from '../rules/support/support-tier.js';
import type { Facts, OrderChange, OxygenOrder } from '../types.js';
import { deviceStepAdvice, hypercapnicAcidosisAdvice } from './step-advice.js';
import { anyReadingBelow, latestReading, gapBreakingRecentRun, readingsInWindow, type TitrationReview } from './titration-review.js';

/**
 * The next weaning step for the active order, and whether it may be offered as a one-click change.
 *
 * BTS 2017 weaning advice (from memory of its section on weaning and stopping oxygen): lower the
 * oxygen in stable patients whose SpO2 is in or above the target range; most stable convalescent
 * patients come down to about 2 L/min by nasal cannula before stopping, patients at risk of
 * hypercapnic respiratory failure to about 1 L/min (or a 24 % Venturi); stop when the patient is
 * clinically stable on low-concentration oxygen with SpO2 in the range on two consecutive
 * observations, then check SpO2 on air.
 *
 * A step is offered only where it is clear and safe (`blockedBy` says why not): never for an order that
 * is not a titration (comfort, weaning, stop, room air), nor one whose target is not one clear range;
 * never while the gas shows hypercapnic acidosis or acute hypercapnia or SpO2 is below target
 * (`reasonNotToLowerOxygen`), while the current gas shows any acidosis, when any SpO2 of the look-back
 * window was below the range, while the oxygen need is rising or after the oxygen was raised within
 * the window, on high flow or CPAP/NIV (a change of
 * support is the team's), or without a current SpO2. Steps are by nasal-cannula flow (one
 * `nasalCannulaStepDownLPerMin` step, not below the stop-from flow) and stopping from the stop-from
 * flow or a 24 % Venturi; other devices get advice without a change. Pure.
 */
export type StepDown =
  | {
      readonly kind: 'lower-flow';
      readonly change: Extract<OrderChange, { kind: 'set-flow' }>;
      readonly fromFlowLPerMin: number;
    }
  | { readonly kind: 'stop'; readonly change: Extract<OrderChange, { kind: 'stop-oxygen' }>; readonly from: string }
  | {
      readonly kind: 'none';
      readonly blockedBy: string;
      /** Set when the only bar is too few readings: the record cannot tell whether the patient is stable. */
      readonly cannotTell?: { readonly gapMinutes: number };
      /** The next step in bedside words, where the bar is the device or a hypercapnic acidosis. */
      readonly bedside?: string;
      /** A lower flow inside a prescribed flow range: the nurse's titration, no change to the order. */
      readonly withinPrescription?: { readonly flowLPerMin: number; readonly fromFlowLPerMin: number };
    };

const ESCALATED_SUPPORT = 'the patient is on high flow or CPAP/NIV: stepping down is a change of support for the team';

/** Venturi settings at or below this are low-concentration oxygen for stopping (BTS 2017 Table 4: 24 %). */
const LOWEST_VENTURI_FIO2 = 0.24;

/** The reason no one-click step down may be offered, or undefined when one may. */
export function reasonNotToStepDown(input: {
  readonly review: TitrationReview;
  readonly assessment: Assessment;
  readonly facts: Facts;
  readonly policy: Policy;
  readonly now: Date;
}): string | undefined {
  const { review, assessment, facts, policy, now } = input;
  const order = review.order;
  if (!isTitration(order)) {
    return 'the order is not a titration to a target (comfort, weaning, stop or room-air order)';
  }
  if (order.targetNote !== undefined) {
    return "the order's target is not written as one clear range";
  }
  const interlock = reasonNotToLowerOxygen(assessment);
  if (interlock !== undefined) {
    return interlock;
  }
  const ph = assessment.current.gas?.ph;
  if (ph !== undefined && ph < policy.thresholds.acidosisPhBelow) {
    return `the current gas shows acidosis (pH ${formatNumber(ph, 2)})`;
  }
  if (anyReadingBelow(review)) {
    return 'an SpO2 in the look-back window was below the target range';
  }
  const tier = patientSupportTier(facts, order, policy, now);
  if (tier !== undefined && tier !== 'conventional-oxygen') {
    return ESCALATED_SUPPORT;
  }
  const { oxygenNeedTrendMinutes, spo2FallPoints } = policy.thresholds;
  const window = Math.max(oxygenNeedTrendMinutes, review.lookbackMinutes);
  if (findRisingOxygenNeed(facts, order, now, window, spo2FallPoints) !== undefined) {
    return 'the oxygen need has been rising';
  }
  // Raised within the window and now better: too soon to call stable (common practice).
  if ((oxygenTrend(facts, order, now, review.lookbackMinutes)?.direction ?? 0) > 0) {
    return 'the oxygen was raised within the look-back window';
  }
  const latest = latestReading(review);
  if (latest === undefined || !isWithin(latest, now, policy.freshness.vitalSignsMinutes)) {
    return 'there is no current SpO2 reading';
  }
  return undefined;
}

/** The flow running now: the newest recorded flow in the window, else the ordered flow. */
function runningFlow(review: TitrationReview, facts: Facts, now: Date): number | undefined {
  const recorded = readingsInWindow(facts.trendReadings.o2FlowLPerMin, now, review.lookbackMinutes);
  return recorded[recorded.length - 1]?.value ?? review.order.flowLPerMin;
}

/** Whether the order gives its flow as a range (read-order sets no flow and notes the range). */
function prescribesFlowRange(order: OxygenOrder, facts: Facts): boolean {
  return (
    order.flowLPerMin === undefined &&
    facts.setAside.some((note) => note.reference === order.reference && note.what === 'Ordered oxygen flow' && note.reason === 'unrecognised')
  );
}

/** Whether the last `count` readings are all at or above the range's lower bound. */
function lastReadingsNotBelow(review: TitrationReview, count: number): boolean {
  const last = review.readings.slice(-count);
  return last.length >= count && last.every((m) => m.value >= review.range.lowPercent);
}

/**
 * The next step, held back when the newest readings are too far apart to show a stable course: a gap
 * longer than the time a reading stands for (`titrationReview.maxReadingHoldMinutes`) before the recent
 * run holds `stopAfterReadingsInRange` readings over `minObservedMinutes` means two readings hours apart
 * are not "two consecutive observations in range" (BTS 2017 weaning, from memory), and what happened
 * between them is not known. That is a "can't tell", said on the card, not a step.
 */
export function planStepDown(input: {
  readonly review: TitrationReview;
  readonly assessment: Assessment;
  readonly facts: Facts;
  readonly policy: Policy;
  readonly now: Date;
}): StepDown {
  const step = nextStep(input);
  if (step.kind === 'none') {
    return step;
  }
  const settings = input.policy.titrationReview;
  const gap = gapBreakingRecentRun(input.review, {
    maxGapMinutes: settings.maxReadingHoldMinutes,
    minSpanMinutes: settings.minObservedMinutes,
    minReadings: settings.stopAfterReadingsInRange,
  });
  if (gap !== undefined) {
    return {
      kind: 'none',
      blockedBy: `the SpO2 readings are too far apart to tell whether the patient is stable (a gap of ${formatDuration(gap)})`,
      cannotTell: { gapMinutes: gap },
    };
  }
  return step;
}

function nextStep(input: {
  readonly review: TitrationReview;
  readonly assessment: Assessment;
  readonly facts: Facts;
  readonly policy: Policy;
  readonly now: Date;
}): StepDown {
  const blockedBy = reasonNotToStepDown(input);
  if (blockedBy !== undefined) {
    const bedside = hypercapnicAcidosisAdvice(input.assessment) ?? (blockedBy === ESCALATED_SUPPORT ? deviceStepAdvice(input.review.order, input.policy.devices) : undefined);
    return { kind: 'none', blockedBy, ...(bedside === undefined ? {} : { bedside }) };
  }
  const { review, assessment, facts, policy, now } = input;
  const deviceAdvice = deviceStepAdvice(review.order, policy.devices);
  const onDevice = (why: string): StepDown => ({ kind: 'none', blockedBy: why, ...(deviceAdvice === undefined ? {} : { bedside: deviceAdvice }) });
  const order = review.order;
  const settings = policy.titrationReview;
  const atRisk = assessment.target.kind === 'range' && assessment.target.basis === 'hypercapnic-risk';
  const stopFrom = atRisk ? settings.stopFromFlowLPerMin.hypercapnicRisk : settings.stopFromFlowLPerMin.standard;
  const enoughToStop = lastReadingsNotBelow(review, settings.stopAfterReadingsInRange);
  if (order.device === 'venturi-mask') {
    const fio2 = order.setFio2Fraction;
    if (fio2 !== undefined && fio2 <= LOWEST_VENTURI_FIO2 && enoughToStop) {
      return { kind: 'stop', change: { kind: 'stop-oxygen' }, from: 'a 24 % Venturi mask' };
    }
    return onDevice('a Venturi mask is stepped down by changing its setting, which is left to the team');
  }
  if (order.device !== 'nasal-cannula') {
    return onDevice('a change of device is left to the team');
  }
  const flow = runningFlow(review, facts, now);
  if (flow === undefined) {
    return { kind: 'none', blockedBy: 'the flow running is not known' };
  }
  // The hospital's cannula limits (policy `devices`; BTS 2017 Tables 2 and 4: 1-6 L/min by default):
  // above them a step of one would still be out of range.
  const cannulaRange = flowRangeFor(policy.devices, 'nasal-cannula');
  if (flow > cannulaRange.max) {
    return onDevice(`the cannula runs above its ${formatNumber(cannulaRange.min, 0)}–${formatNumber(cannulaRange.max, 0)} L/min range`);
  }
  if (flow <= stopFrom) {
    return enoughToStop
      ? { kind: 'stop', change: { kind: 'stop-oxygen' }, from: `nasal cannula at ${formatFlow(flow)}` }
      : {
          kind: 'none',
          blockedBy: `fewer than ${String(settings.stopAfterReadingsInRange)} consecutive readings in the range before stopping`,
        };
  }
  const next = Math.max(stopFrom, cannulaRange.min, flow - policy.thresholds.nasalCannulaStepDownLPerMin);
  if (prescribesFlowRange(review.order, facts)) {
    // "2-6 L/min to keep SpO2 94-98 %": the step is the nurse's titration within the prescription. A
    // one-click fixed flow would rewrite a valid range prescription and take away the room to go back
    // up (common practice: titrate within the prescribed range; change the prescription to leave it).
    return {
      kind: 'none',
      blockedBy: 'the order prescribes a flow range: a step inside it is a titration, not a new prescription',
      withinPrescription: { flowLPerMin: next, fromFlowLPerMin: flow },
    };
  }
  return { kind: 'lower-flow', change: { kind: 'set-flow', flowLPerMin: next }, fromFlowLPerMin: flow };
}
