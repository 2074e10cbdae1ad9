import { formatDuration, formatRange } from '../assessment/format.js';
import { planStepDown } from '../titration/step-down.js';
import { describeStep } from '../titration/step-words.js';
import { oxygenTrend } from './support/oxygen-trend.js';
import { anyReadingBelow, describeTimeSplit, latestReading, reviewTitration, timeInRangeComputation } from '../titration/titration-review.js';
import { timeAboveTargetSpeaks } from '../titration/titration-speaks.js';
import type { Finding } from '../types.js';
import { describeMeasured, describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * Stable enough to step the oxygen down, or to stop it: over the look-back window
 * (`titrationReview.lookbackHours`) there are two readings or more and at least
 * `titrationReview.minObservedMinutes` observed, no SpO2 below the range, and the next weaning step is
 * clear and safe (src/core/titration/step-down.ts: a titration order on a nasal cannula or a 24 %
 * Venturi, no acidosis, no hypercapnic acidosis or acute hypercapnia, no rising need, conventional
 * oxygen, a current SpO2). It suggests that step: one `thresholds.nasalCannulaStepDownLPerMin` less,
 * or, from `titrationReview.stopFromFlowLPerMin` (2 L/min; 1 L/min with hypercapnic risk) or a 24 %
 * Venturi with the last `titrationReview.stopAfterReadingsInRange` readings in or above the range,
 * stopping the oxygen. Quiet when time-above-target-on-oxygen speaks (that card offers the step).
 * When the only bar to the step is newest readings further apart than `titrationReview.maxReadingHoldMinutes`,
 * it says the record cannot tell whether the patient is stable and offers no change. On an order that
 * prescribes a flow range, a lower flow inside it is advised without a change to the prescription.
 *
 * Rationale: BTS 2017 (from memory of its weaning section): oxygen is a treatment to be reduced in
 * stable patients with satisfactory saturations; most stable convalescent patients are stepped down
 * to about 2 L/min by nasal cannula before stopping, at-risk patients to about 1 L/min or a 24 %
 * Venturi; stop when clinically stable on low-concentration oxygen with SpO2 in range on two
 * consecutive observations, then check SpO2 on air. Information: a stable patient gets at most this.
 * Sources: BTS 2017 (weaning, from memory); the thresholds are local choices.
 */
export const rule: Rule = {
  id: 'ready-to-step-down',
  title: 'Stable on oxygen: consider stepping down or stopping',
  version: 1,
  hooks: ['patient-view'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const review = reviewTitration({ facts, policy, assessment, now });
    if (review === undefined || timeAboveTargetSpeaks(review, policy)) {
      return [];
    }
    const t = review.time;
    const latest = latestReading(review);
    if (
      latest === undefined ||
      t.readingsUsed < 2 ||
      t.observedMinutes < policy.titrationReview.minObservedMinutes ||
      anyReadingBelow(review)
    ) {
      return [];
    }
    const step = planStepDown({ review, assessment, facts, policy, now });
    if (step.kind === 'none' && step.cannotTell === undefined && step.withinPrescription === undefined) {
      return [];
    }
    const words = describeStep(step);
    // Readings hours apart: say the record cannot tell, and offer no step (a "can't tell" value).
    const gap = step.kind === 'none' ? step.cannotTell?.gapMinutes : undefined;
    const status =
      gap === undefined
        ? `Stable in or above target ${formatRange(review.range)} for ${formatDuration(t.observedMinutes)} observed`
        : `Too few SpO2 readings to tell if stable in target ${formatRange(review.range)} (readings ${formatDuration(gap)} apart)`;
    const trend = oxygenTrend(facts, review.order, now, review.lookbackMinutes);
    const course =
      trend === undefined
        ? 'no change of oxygen recorded in the window'
        : trend.direction < 0
          ? `oxygen already coming down (${trend.measure} ${trend.words(trend.first)} → ${trend.words(trend.last)})`
          : `${trend.measure} unchanged at ${trend.words(trend.last)}`;
    return [
      makeFinding(rule, {
        orderReference: review.order.reference,
        values: {
          status,
          headline: gap === undefined ? words.headline : 'record SpO2 before a step down',
          observedTime: formatDuration(t.observedMinutes),
          window: formatDuration(review.lookbackMinutes),
          timeSplit: describeTimeSplit(review),
          latestSpo2: describeMeasured(latest, now, '%'),
          targetRange: formatRange(review.range),
          orderDescription: describeOrder(review.order),
          course,
          stepAdvice:
            gap === undefined
              ? `${words.advice}, if the patient is clinically stable`
              : `Consider recording SpO2 again before any step down: a reading is taken to stand for at most ${formatDuration(policy.titrationReview.maxReadingHoldMinutes)}, so the readings are not consecutive observations and the time between them is not observed`,
          ...(words.label === undefined ? {} : { suggestionLabel: words.label }),
        },
        computations: [timeInRangeComputation(review, policy)],
        sourceKeys: ['bts-2017', 'local-policy'],
        ...(step.kind === 'none' ? {} : { change: step.change }),
      }),
    ];
  },
};
