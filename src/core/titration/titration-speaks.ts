import type { Policy } from '../policy.js';
import { shareOfPercent } from './time-in-range.js';
import { latestReading, type TitrationReview } from './titration-review.js';

/**
 * Whether the time-above-target-on-oxygen card speaks for this review: enough observed time (two
 * readings, `minObservedMinutes`), at least `aboveTargetShareAtLeastPercent` of it above the range on
 * oxygen, and the latest reading still above the range on oxygen. ready-to-step-down stays quiet
 * when it speaks, so one card, not two, offers the step. Pure.
 */
export function timeAboveTargetSpeaks(review: TitrationReview, policy: Policy): boolean {
  const settings = policy.titrationReview;
  const t = review.time;
  const latest = latestReading(review);
  return (
    t.readingsUsed >= 2 &&
    t.observedMinutes >= settings.minObservedMinutes &&
    shareOfPercent(t.aboveOnOxygenMinutes, t.observedMinutes) >= settings.aboveTargetShareAtLeastPercent &&
    latest !== undefined &&
    latest.value > review.range.highPercent &&
    review.latestOnOxygen &&
    review.order.purpose !== 'comfort'
  );
}
