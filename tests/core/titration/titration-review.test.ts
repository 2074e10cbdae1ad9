import { describe, expect, it } from 'vitest';
import { buildAssessment } from '../../../src/core/assessment/build-assessment.js';
import { describeTimeSplit, reviewTitration } from '../../../src/core/titration/titration-review.js';
import type { Facts } from '../../../src/core/types.js';
import { BTS, minutesAgo, NOW } from '../facts-builder.js';
import { reviewFacts, steady } from './review-facts.js';

// The review the titration rules share: the order's range (BTS 2017, Tables 1-4), the 8 h window and
// 120-min cap (titrationReview.*, local choices), and where the oxygen-or-air state comes from.
function review(facts: Facts) {
  const assessment = buildAssessment(facts, BTS, { now: NOW });
  return reviewTitration({ facts, policy: BTS, assessment, now: NOW });
}

describe('reviewTitration', () => {
  it('uses the ordered range and the look-back window, and says the split in words', () => {
    // 96 % at 180, 120, 60 and 10 min ago on 3 L/min: 60 + 60 + 50 + 10 (the last to now) = 180 min in
    // range; 480 − 180 = 300 min not observed.
    const r = review(reviewFacts({ spo2: steady(96, [180, 120, 60, 10]), flows: steady(3, [180, 120, 60, 10]) }));
    expect(r?.range).toMatchObject({ lowPercent: 94, highPercent: 98 });
    expect(r?.lookbackMinutes).toBe(480);
    expect(describeTimeSplit(r ?? (undefined as never))).toBe(
      'in range 3 h, above on oxygen 0 min, below 0 min, not observed 5 h (of the last 8 h; 4 SpO2 readings; target 94–98 %)',
    );
  });

  it('counts the time before an order written inside the window as on air', () => {
    // Order written 120 min ago, nothing recorded about oxygen: 99 % at 180 min ago was on air
    // (above on air, held 60 min to the order's start, then the switch ends it); 99 % at 60 min ago is
    // on oxygen (held 60 min to now).
    const r = review(reviewFacts({ order: { authoredOn: minutesAgo(120) }, spo2: [[99, 180], [99, 60]] }));
    expect(r?.time.aboveOnAirMinutes).toBe(60);
    expect(r?.time.aboveOnOxygenMinutes).toBe(60);
    expect(r?.latestOnOxygen).toBe(true);
  });

  it('reads the latest reading as on air when a flow of 0 L/min was recorded with it', () => {
    const r = review(reviewFacts({ spo2: [[97, 120], [97, 10]], flows: [[2, 120], [0, 10]] }));
    expect(r?.latestOnOxygen).toBe(false);
  });

  it('gives no review for a comfort order or a stop order, which have no SpO2 target', () => {
    // BTS 2017: comfort oxygen in terminal care is not titrated to a saturation.
    expect(review(reviewFacts({ order: { purpose: 'comfort' }, spo2: [[90, 10]] }))).toBeUndefined();
    expect(review(reviewFacts({ order: { purpose: 'stop' }, spo2: [[90, 10]] }))).toBeUndefined();
  });

  it('is the same review for every rule of one run, and a fresh one when the clock or facts move on', () => {
    // 96 % at 180, 120, 60 and 10 min ago on 3 L/min, the first case above: 180 min in range of 8 h.
    const facts = reviewFacts({ spo2: steady(96, [180, 120, 60, 10]), flows: steady(3, [180, 120, 60, 10]) });
    const assessment = buildAssessment(facts, BTS, { now: NOW });
    const first = reviewTitration({ facts, policy: BTS, assessment, now: NOW });
    expect(reviewTitration({ facts, policy: BTS, assessment, now: new Date(NOW.getTime()) })).toBe(first);
    // Seven hours on, the readings of 180 and 120 min ago (10 h and 9 h old) are outside the 8 h window:
    // 60 min ago holds 50 min, 10 min ago holds the 120-min cap (titrationReview.maxReadingHoldMinutes).
    const later = reviewTitration({ facts, policy: BTS, assessment, now: new Date(NOW.getTime() + 7 * 3_600_000) });
    expect(later?.readings.length).toBe(2);
    expect(later?.time.inRangeMinutes).toBe(170);
    const fewer = reviewFacts({ spo2: steady(96, [60, 10]), flows: steady(3, [60, 10]) });
    expect(reviewTitration({ facts: fewer, policy: BTS, assessment, now: NOW })?.readings.length).toBe(2);
    expect(reviewTitration({ facts, policy: BTS, assessment, now: NOW })?.readings.length).toBe(4);
  });
});
