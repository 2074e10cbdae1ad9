import { describe, expect, it } from 'vitest';
import { classifyPfBerlin, pfRatioMmHg } from '../../../src/core/physiology/pf-ratio.js';

describe('pfRatioMmHg', () => {
  it('gives PaO2 60 mmHg on air as 285.7', () => {
    // check-values 3e P/F example (D), ± 0.1
    expect(Math.abs(pfRatioMmHg(60, 0.21) - 285.7)).toBeLessThanOrEqual(0.1);
  });

  it('gives PaO2 80 mmHg on FiO2 0.40 as 200', () => {
    // P/F = PaO2 / FiO2 (Berlin 2012 definition of the ratio), derived
    expect(pfRatioMmHg(80, 0.4)).toBeCloseTo(200, 9);
  });
});

describe('classifyPfBerlin', () => {
  // Berlin Definition, JAMA 307:2526 (2012): mild 200 < P/F ≤ 300, moderate 100 < P/F ≤ 200,
  // severe P/F ≤ 100 (check-values 3e, V), boundaries exact
  it.each([
    [450, 'none'],
    [300.01, 'none'],
    [300, 'mild'],
    [250, 'mild'],
    [200.01, 'mild'],
    [200, 'moderate'],
    [150, 'moderate'],
    [100.01, 'moderate'],
    [100, 'severe'],
    [60, 'severe'],
  ] as const)('puts P/F %s in band %s', (pf, band) => {
    expect(classifyPfBerlin(pf)).toBe(band);
  });

  it('keeps ratios that are exactly on a boundary in the right band despite floating point', () => {
    // Berlin 2012: P/F ≤ 200 is moderate and ≤ 100 severe; in binary floating point 114 / 0.57 is
    // 200.00000000000003 and 57 / 0.57 is 100.00000000000001
    expect(classifyPfBerlin(pfRatioMmHg(114, 0.57))).toBe('moderate');
    expect(classifyPfBerlin(pfRatioMmHg(57, 0.57))).toBe('severe');
    expect(classifyPfBerlin(pfRatioMmHg(120, 0.4))).toBe('mild');
  });

  describe('edge cases', () => {
    it.each([0, -100, 5, 4001, Number.NaN, Number.POSITIVE_INFINITY])('refuses P/F %d', (pf) => {
      expect(() => classifyPfBerlin(pf)).toThrow(RangeError);
    });

    it.each([
      [60, 0],
      [60, -0.21],
      [60, 1.5],
      [0, 0.21],
      [-60, 0.21],
    ])('refuses PaO2 %d with FiO2 %d', (pao2, fio2) => {
      expect(() => pfRatioMmHg(pao2, fio2)).toThrow(RangeError);
    });
  });
});
