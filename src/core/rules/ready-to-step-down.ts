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
    if (step.kind === 'none') {
      return [];
    }
    const words = describeStep(step);
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
          headline: words.headline,
          observedTime: formatDuration(t.observedMinutes),
          window: formatDuration(review.lookbackMinutes),
          timeSplit: describeTimeSplit(review),
          latestSpo2: describeMeasured(latest, now, '%'),
          targetRange: formatRange(review.range),
          orderDescription: describeOrder(review.order),
          course,
          stepAdvice: words.advice,
          suggestionLabel: words.label ?? '',
        },
        computations: [timeInRangeComputation(review, policy)],
        sourceKeys: ['bts-2017', 'local-policy'],
        change: step.change,
      }),
    ];
  },
};
