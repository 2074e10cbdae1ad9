import { describe, expect, it } from 'vitest';
import {
  interpretRox,
  interpretRoxAt,
  ROX_HIGH_RISK_BELOW,
  ROX_LOW_RISK_AT_LEAST,
  roxFailureBelow,
  roxIndex,
  roxTimePoint,
} from '../../../src/core/physiology/rox-index.js';

describe('roxIndex', () => {
  // Roca, J Crit Care 35:200 (2016) and AJRCCM 199:1368 (2019) definition (check-values 3e, V/D), ± 0.01
  it.each([
    [92, 0.5, 30, 6.13],
    [88, 0.6, 32, 4.58],
    [90, 0.6, 35, 4.29],
  ])('gives SpO2 %d %, FiO2 %s, RR %d as %s', (spo2, fio2, rr, expected) => {
    expect(Math.abs(roxIndex(spo2, fio2, rr) - expected)).toBeLessThanOrEqual(0.01);
  });
});

describe('interpretRox', () => {
  it('uses the Roca 2019 thresholds', () => {
    // Roca 2019: ≥ 4.88 low risk; < 2.85 / 3.47 / 3.85 at 2 / 6 / 12 h high risk (check-values 3e, V)
    expect(ROX_LOW_RISK_AT_LEAST).toBe(4.88);
    expect(ROX_HIGH_RISK_BELOW).toStrictEqual({ at2h: 2.85, at6h: 3.47, at12h: 3.85 });
  });

  // Roca 2019 thresholds, boundaries exact (check-values 3e, V)
  it.each([
    [4.88, 2, 'low-risk'],
    [4.87, 2, 'indeterminate'],
    [4.88, 12, 'low-risk'],
    [2.85, 2, 'indeterminate'],
    [2.84, 2, 'high-risk'],
    [3.47, 6, 'indeterminate'],
    [3.46, 6, 'high-risk'],
    [3.0, 6, 'high-risk'],
    [3.85, 12, 'indeterminate'],
    [3.84, 12, 'high-risk'],
    [3.5, 12, 'high-risk'],
    [3.0, 4, 'indeterminate'], // between 2 and 6 h the 2-h threshold applies
    [3.6, 8, 'indeterminate'], // between 6 and 12 h the 6-h threshold applies
    [3.8, 24, 'high-risk'], // beyond 12 h the 12-h threshold is carried forward (our choice)
  ] as const)('reads ROX %s at %s h as %s', (rox, hours, expected) => {
    expect(interpretRox(rox, hours)).toBe(expected);
  });

  it('is indeterminate before 2 h, where nothing was validated', () => {
    // Roca 2019 validated 2, 6 and 12 h only
    expect(interpretRox(2.0, 1)).toBe('indeterminate');
    expect(interpretRox(6.0, 0)).toBe('indeterminate');
  });

  it('reads a computed index exactly on 4.88 as low risk', () => {
    // Roca 2019: ≥ 4.88; 97.6 / 0.5 / 40 = 4.88
    expect(interpretRox(roxIndex(97.6, 0.5, 40), 6)).toBe('low-risk');
  });

  describe('edge cases', () => {
    it.each([
      [0, 0.5, 30],
      [92, 0, 30],
      [92, 0.5, 0],
      [92, 0.5, -30],
      [-92, 0.5, 30],
      [101, 0.5, 30],
      [Number.NaN, 0.5, 30],
    ])('refuses SpO2 %d, FiO2 %d, RR %d', (spo2, fio2, rr) => {
      expect(() => roxIndex(spo2, fio2, rr)).toThrow(RangeError);
    });

    it.each([
      [0, 6],
      [-1, 6],
      [4, -1],
      [4, Number.NaN],
    ])('refuses ROX %d at %d h', (rox, hours) => {
      expect(() => interpretRox(rox, hours)).toThrow(RangeError);
    });
  });
});

describe('roxTimePoint and interpretRoxAt', () => {
  it.each([
    // Roca 2019 (check-values 3e, V): thresholds validated at 2, 6 and 12 h
    [1.99, undefined],
    [2, 2],
    [5.99, 2],
    [6, 6],
    [11.99, 6],
    [12, 12],
    [48, 12], // carried forward beyond 12 h (our cautious choice)
  ])('places %s h at the %s-h time point', (hours, timePoint) => {
    expect(roxTimePoint(hours)).toBe(timePoint);
  });

  it.each([
    // Roca 2019 (check-values 3e, V): failure below 2.85 / 3.47 / 3.85; >= 4.88 lower risk
    [2, 2.84, 'high-risk'],
    [2, 2.85, 'indeterminate'],
    [6, 3.46, 'high-risk'],
    [6, 3.47, 'indeterminate'],
    [12, 3.84, 'high-risk'],
    [12, 3.85, 'indeterminate'],
    [12, 4.88, 'low-risk'],
  ] as const)('at the %s-h time point reads ROX %s as %s', (timePoint, rox, reading) => {
    expect(interpretRoxAt(rox, timePoint)).toBe(reading);
    expect(roxFailureBelow(timePoint)).toBe({ 2: 2.85, 6: 3.47, 12: 3.85 }[timePoint]);
  });
});
