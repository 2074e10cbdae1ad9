import { isWithin } from '../assessment/current-values.js';
import { formatDuration, formatNumber, formatRange } from '../assessment/format.js';
import { shareOfPercent } from '../titration/time-in-range.js';
import { describeTimeSplit, latestReading, reviewTitration, timeInRangeComputation } from '../titration/titration-review.js';
import type { Finding } from '../types.js';
import { describeMeasured, describeOrder } from './support/describe.js';
import { escalatedSupportFailingSpeaks } from './support/escalated-support.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * Time below the target range over the look-back window (`titrationReview.lookbackHours`), on an order
 * that titrates to a target:
 * - the latest SpO2 is current (`freshness.vitalSignsMinutes`) and below the range: a warning, critical
 *   below `thresholds.criticalSpo2BelowPercent` or more than `thresholds.criticalPointsBelowTarget`
 *   points below the range (as spo2-below-target);
 * - otherwise, with the latest reading back in or above the range, at least
 *   `titrationReview.belowTargetShareAtLeastPercent` of at least `titrationReview.minObservedMinutes`
 *   observed was below it: information, to review why.
 *
 * Rationale: BTS 2017: SpO2 below the target range calls for more oxygen within the prescription and for
 * clinical review, and a fall of 3 points or more or a rising need for fuller assessment; below 85 %
 * (Table 2) a reservoir mask and urgent review for those not at risk. Distinct from time above target:
 * below target is reviewed and escalated, never stepped down (no change is offered, and no step-down
 * card speaks after a reading below target, src/core/titration/step-down.ts).
 * Silent when escalated-support-failing speaks (below target on high flow at a high FiO2, or on CPAP/NIV).
 * Sources: BTS 2017; BTS 2017 summary (BMJ Open Resp Res 4:e000170); the share is a local choice.
 */
export const rule: Rule = {
  id: 'time-below-target',
  title: 'Time below the target range',
  version: 1,
  hooks: ['patient-view'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const review = reviewTitration({ facts, policy, assessment, now });
    const latest = review === undefined ? undefined : latestReading(review);
    // Failing high flow or NIV is escalated-support-failing's (critical): one card for one situation.
    if (review === undefined || latest === undefined || escalatedSupportFailingSpeaks(assessment, facts, policy, now)) {
      return [];
    }
    const t = review.time;
    const settings = policy.titrationReview;
    const share = shareOfPercent(t.belowMinutes, t.observedMinutes);
    const latestBelow = latest.value < review.range.lowPercent && isWithin(latest, now, policy.freshness.vitalSignsMinutes);
    const earlierBelow =
      !latestBelow &&
      latest.value >= review.range.lowPercent &&
      t.observedMinutes >= settings.minObservedMinutes &&
      share >= settings.belowTargetShareAtLeastPercent;
    if (!latestBelow && !earlierBelow) {
      return [];
    }
    // The same critical levels as spo2-below-target: below 85 % (BTS 2017 Table 2), or far below target.
    const { criticalSpo2BelowPercent, criticalPointsBelowTarget } = policy.thresholds;
    const critical =
      latestBelow &&
      (latest.value < criticalSpo2BelowPercent || review.range.lowPercent - latest.value > criticalPointsBelowTarget);
    return [
      makeFinding(rule, {
        indicator: critical ? 'critical' : latestBelow ? 'warning' : 'info',
        orderReference: review.order.reference,
        values: {
          headline: latestBelow
            ? `SpO2 ${describeMeasured(latest, now, '%')} is below target ${formatRange(review.range)}`
            : `SpO2 was below target ${formatRange(review.range)} for ${formatDuration(t.belowMinutes)} of the last ${formatDuration(review.lookbackMinutes)}`,
          belowTime: formatDuration(t.belowMinutes),
          belowShare: `${formatNumber(share, 0)} %`,
          observedTime: formatDuration(t.observedMinutes),
          window: formatDuration(review.lookbackMinutes),
          timeSplit: describeTimeSplit(review),
          latestSpo2: describeMeasured(latest, now, '%'),
          targetRange: formatRange(review.range),
          orderDescription: describeOrder(review.order),
          advice: latestBelow
            ? 'Consider reviewing the patient now: check the oximeter trace and the delivery, raise the oxygen within the prescription to reach the range, and escalate if more is needed'
            : 'The latest reading is back in range. Consider reviewing why the SpO2 fell and whether the oxygen prescription and the observation frequency still fit',
        },
        computations: [timeInRangeComputation(review, policy)],
        sourceKeys: ['bts-2017', 'local-policy'],
      }),
    ];
  },
};
