import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { shareOfPercent, timeInRange, type TimeInRangeInput } from '../../../src/core/titration/time-in-range.js';
import { minutesAgo, NOW, spo2 } from '../facts-builder.js';

// Hand-worked series. The window is the last 8 h (480 min; titrationReview.lookbackHours, a local
// choice: one nursing shift, common practice); a reading holds at most 120 min (maxReadingHoldMinutes,
// local choice). Ranges: 94-98 % (BTS 2017, Tables 1-3) and 88-92 % (BTS 2017, Table 4). Reading ages
// are minutes before NOW. Every series is worked by hand in its comment; the sums are the check.
const STANDARD = { lowPercent: 94, highPercent: 98 }; // BTS 2017, Tables 1-3
const AT_RISK = { lowPercent: 88, highPercent: 92 }; // BTS 2017, Table 4

function input(overrides: Partial<TimeInRangeInput>): TimeInRangeInput {
  return {
    readings: [],
    range: STANDARD,
    now: NOW,
    lookbackMinutes: 480,
    maxHoldMinutes: 120,
    oxygenSteps: [],
    onOxygenAtStart: true,
    ...overrides,
  };
}

describe('timeInRange: hand-worked series', () => {
  it('hourly readings, all in range, cover the window from the first reading on', () => {
    // Readings at 420, 360, ..., 60 and 0 min ago (8 readings, one an hour; BTS 2017 94-98 %).
    // 420 → 360 … 60 → 0: seven gaps of 60 min, each under the 120-min cap = 420 min in range.
    // The reading at 0 min ago holds to now: 0 min. Before 420 min ago (480 − 420) = 60 min unobserved.
    // 420 + 60 = 480 = the window.
    const readings = [420, 360, 300, 240, 180, 120, 60, 0].map((age) => spo2(96, age));
    expect(timeInRange(input({ readings }))).toStrictEqual({
      windowMinutes: 480,
      inRangeMinutes: 420,
      aboveOnOxygenMinutes: 0,
      aboveOnAirMinutes: 0,
      belowMinutes: 0,
      unobservedMinutes: 60,
      observedMinutes: 420,
      readingsUsed: 8,
    });
  });

  it('caps a long gap at 120 min and leaves the rest unobserved', () => {
    // 95 % at 480 min ago: next reading 240 min later, so it holds 120 min (cap); 120 min unobserved.
    // 99 % at 240 min ago on oxygen: above 98 %; next at 180 → holds 60 min above on oxygen.
    // 92 % at 180 min ago: below 94 %; the next reading is 150 min later, so it holds the 120-min cap,
    // to 60 min ago.
    // 96 % at 30 min ago: holds to now, 30 min. Unobserved: 120 (480→240 gap) + 30 (60→30) = 150.
    // In range 120 + 30 = 150; above on O2 60; below 120; unobserved 150; total 480.
    const readings = [spo2(95, 480), spo2(99, 240), spo2(92, 180), spo2(96, 30)];
    const result = timeInRange(input({ readings }));
    expect(result.inRangeMinutes).toBe(150);
    expect(result.aboveOnOxygenMinutes).toBe(60);
    expect(result.belowMinutes).toBe(120);
    expect(result.unobservedMinutes).toBe(150);
    expect(result.observedMinutes).toBe(330);
  });

  it('holds a single reading to now, up to the cap', () => {
    // One reading of 97 % 90 min ago: holds 90 min to now (under the 120-min cap); 390 min unobserved.
    expect(timeInRange(input({ readings: [spo2(97, 90)] }))).toMatchObject({
      inRangeMinutes: 90,
      unobservedMinutes: 390,
      readingsUsed: 1,
    });
    // One reading 300 min ago: holds 120 min (cap), then 180 min to now unobserved; 480 − 120 = 360.
    expect(timeInRange(input({ readings: [spo2(97, 300)] }))).toMatchObject({
      inRangeMinutes: 120,
      unobservedMinutes: 360,
    });
  });

  it('counts all of the observed time above target on oxygen when every reading is above', () => {
    // At-risk range 88-92 % (BTS 2017 Table 4): 95, 96, 94 % at 240, 120 and 0 min ago, on oxygen.
    // 240 → 120: 120 min; 120 → 0: 120 min; the last holds 0 min. Above on oxygen 240; unobserved 240.
    const readings = [spo2(95, 240), spo2(96, 120), spo2(94, 0)];
    const result = timeInRange(input({ readings, range: AT_RISK }));
    expect(result.aboveOnOxygenMinutes).toBe(240);
    expect(result.inRangeMinutes + result.belowMinutes + result.aboveOnAirMinutes).toBe(0);
    expect(result.unobservedMinutes).toBe(240);
  });

  it('ignores readings before the window and after now', () => {
    // 600 min ago (before the 480-min window) and 10 min in the future: not used.
    // 97 % at 100 min ago holds to now: 100 min in range; 380 unobserved.
    const readings = [spo2(85, 600), spo2(97, 100), spo2(80, -10)];
    expect(timeInRange(input({ readings }))).toMatchObject({
      inRangeMinutes: 100,
      belowMinutes: 0,
      unobservedMinutes: 380,
      readingsUsed: 1,
    });
  });

  it('splits time above target into on oxygen and on air, and ends a reading at a switch', () => {
    // On oxygen at the start; 99 % at 240 min ago holds 120 min (cap) above on oxygen.
    // Oxygen stopped 90 min ago (a recorded flow of 0, LOINC 3151-8): 99 % at 80 min ago is on air,
    // so above on air, and holds to now: 80 min. Unobserved: 240 (start) + 30 (120 → 90 min ago) +
    // 10 (90 → 80) = 280. Total 120 + 80 + 280 = 480.
    const readings = [spo2(99, 240), spo2(99, 80)];
    const result = timeInRange(input({ readings, oxygenSteps: [{ at: minutesAgo(90), onOxygen: false }] }));
    expect(result.aboveOnOxygenMinutes).toBe(120);
    expect(result.aboveOnAirMinutes).toBe(80);
    expect(result.unobservedMinutes).toBe(280);
  });

  it('ends a reading taken on oxygen when the oxygen stops, before the cap', () => {
    // 99 % at 100 min ago on oxygen; oxygen stopped 40 min ago; no reading since.
    // The reading holds 60 min (100 → 40 min ago) above on oxygen; the 40 min on air are unobserved.
    const result = timeInRange(
      input({ readings: [spo2(99, 100)], oxygenSteps: [{ at: minutesAgo(40), onOxygen: false }] }),
    );
    expect(result.aboveOnOxygenMinutes).toBe(60);
    expect(result.aboveOnAirMinutes).toBe(0);
    expect(result.unobservedMinutes).toBe(420);
  });

  it('gives the same answer for readings in any order', () => {
    // Same series as the capped-gap case, shuffled: the reading times decide, not the list order.
    const sorted = [spo2(95, 480), spo2(99, 240), spo2(92, 180), spo2(96, 30)];
    const shuffled = [sorted[2], sorted[0], sorted[3], sorted[1]].filter((m) => m !== undefined);
    expect(timeInRange(input({ readings: shuffled }))).toStrictEqual(timeInRange(input({ readings: sorted })));
  });

  it('lets the lower of two readings at the same instant stand', () => {
    // 97 % and 91 % both 60 min ago: the cautious reading (91 %, below 94 %) holds the 60 min to now.
    const result = timeInRange(input({ readings: [spo2(97, 60), spo2(91, 60)] }));
    expect(result.belowMinutes).toBe(60);
    expect(result.inRangeMinutes).toBe(0);
  });

  it('counts the range bounds as in range', () => {
    // BTS 2017 ranges are inclusive: 94 % and 98 % are in 94-98 %. 94 % at 120, 98 % at 60 min ago.
    const result = timeInRange(input({ readings: [spo2(94, 120), spo2(98, 60)] }));
    expect(result.inRangeMinutes).toBe(120);
    expect(result.aboveOnOxygenMinutes + result.belowMinutes).toBe(0);
  });

  it('has nothing observed without readings', () => {
    expect(timeInRange(input({ readings: [] }))).toMatchObject({ observedMinutes: 0, unobservedMinutes: 480 });
    expect(shareOfPercent(0, 0)).toBe(0);
  });
});

describe('timeInRange: invariants', () => {
  const arbitraryReading = fc.record({ percent: fc.integer({ min: 70, max: 100 }), age: fc.integer({ min: -60, max: 700 }) });
  const arbitraryStep = fc.record({ age: fc.integer({ min: 0, max: 600 }), onOxygen: fc.boolean() });

  it('the parts always add up to the window, and none is negative', () => {
    fc.assert(
      fc.property(
        fc.array(arbitraryReading, { maxLength: 25 }),
        fc.array(arbitraryStep, { maxLength: 6 }),
        fc.integer({ min: 15, max: 480 }),
        fc.boolean(),
        (readings, steps, cap, atStart) => {
          const result = timeInRange(
            input({
              readings: readings.map((r) => spo2(r.percent, r.age)),
              oxygenSteps: steps.map((s) => ({ at: minutesAgo(s.age), onOxygen: s.onOxygen })),
              maxHoldMinutes: cap,
              onOxygenAtStart: atStart,
            }),
          );
          const parts = [
            result.inRangeMinutes,
            result.aboveOnOxygenMinutes,
            result.aboveOnAirMinutes,
            result.belowMinutes,
            result.unobservedMinutes,
          ];
          expect(parts.every((p) => p >= 0)).toBe(true);
          expect(parts.reduce((a, b) => a + b, 0)).toBeCloseTo(480, 9);
          const shares = parts.slice(0, 4).map((p) => shareOfPercent(p, result.windowMinutes));
          expect(shares.reduce((a, b) => a + b, 0)).toBeLessThanOrEqual(100 + 1e-9);
          // No reading stands for longer than the cap.
          expect(result.observedMinutes).toBeLessThanOrEqual(cap * result.readingsUsed + 1e-9);
        },
      ),
      { seed: 20261204, numRuns: 300 },
    );
  });
});
