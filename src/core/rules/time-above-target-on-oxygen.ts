import { formatDuration, formatNumber, formatRange } from '../assessment/format.js';
import { planStepDown } from '../titration/step-down.js';
import { describeStep } from '../titration/step-words.js';
import { shareOfPercent } from '../titration/time-in-range.js';
import { describeTimeSplit, latestReading, reviewTitration, timeInRangeComputation } from '../titration/titration-review.js';
import { timeAboveTargetSpeaks } from '../titration/titration-speaks.js';
import type { Finding } from '../types.js';
import { describeMeasured, describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * Over the look-back window (`titrationReview.lookbackHours`), SpO2 was above the target range while
 * on oxygen for at least `titrationReview.aboveTargetShareAtLeastPercent` of the observed time, with
 * at least `titrationReview.minObservedMinutes` observed and two readings, and the latest reading is
 * still above the range on oxygen (time-weighting: src/core/titration/time-in-range.ts).
 *
 * Rationale: BTS 2017 advises giving oxygen to a target range and lowering it when SpO2 is above the
 * range (avoid hyperoxaemia); BMJ 2018 recommends keeping SpO2 at or below 96 % in acutely ill medical
 * patients; in COPD exacerbations SpO2 above 92 % has been linked with higher mortality (Echevarria
 * 2021). A warning where the range exists to limit oxygen (hypercapnic risk, BTS 2017 Table 4; oxygen
 * toxicity, Table 3), information otherwise. Offers the next weaning step (src/core/titration/step-down.ts)
 * only where it is clear and safe. Not for orders with no SpO2 target (comfort, stop, room air).
 * Sources: BTS 2017; BMJ 2018; Echevarria et al., EMJ 2021; the shares and window are local choices.
 */
export const rule: Rule = {
  id: 'time-above-target-on-oxygen',
  title: 'Time above the target range on oxygen',
  version: 1,
  hooks: ['patient-view'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const review = reviewTitration({ facts, policy, assessment, now });
    if (review === undefined || !timeAboveTargetSpeaks(review, policy)) {
      return [];
    }
    const latest = latestReading(review);
    if (latest === undefined) {
      return [];
    }
    const step = planStepDown({ review, assessment, facts, policy, now });
    const words = describeStep(step);
    const atRiskRange =
      assessment.target.kind === 'range' &&
      (assessment.target.basis === 'hypercapnic-risk' || assessment.target.basis === 'oxygen-toxicity-risk');
    const t = review.time;
    return [
      makeFinding(rule, {
        indicator: atRiskRange ? 'warning' : rule.defaultIndicator,
        orderReference: review.order.reference,
        values: {
          aboveTime: formatDuration(t.aboveOnOxygenMinutes),
          observedTime: formatDuration(t.observedMinutes),
          aboveShare: `${formatNumber(shareOfPercent(t.aboveOnOxygenMinutes, t.observedMinutes), 0)} %`,
          window: formatDuration(review.lookbackMinutes),
          timeSplit: describeTimeSplit(review),
          latestSpo2: describeMeasured(latest, now, '%'),
          targetRange: formatRange(review.range),
          orderDescription: describeOrder(review.order),
          stepAdvice: words.advice,
          ...(words.label === undefined ? {} : { suggestionLabel: words.label }),
        },
        computations: [timeInRangeComputation(review, policy)],
        sourceKeys: atRiskRange ? ['bts-2017', 'local-policy'] : ['bts-2017', 'bmj-2018', 'local-policy'],
        ...(step.kind === 'none' ? {} : { change: step.change }),
      }),
    ];
  },
};
