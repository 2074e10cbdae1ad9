import { describe, expect, it } from 'vitest';
import {
  BICARBONATE_RISE_PER_10_MMHG,
  expectedBicarbonateMmolPerL,
  expectedPaco2WintersMmHg,
} from '../../../src/core/physiology/expected-bicarbonate.js';

describe('expectedBicarbonateMmolPerL', () => {
  it('uses +1 (acute) and +3.5 (chronic) mmol/L per 10 mmHg', () => {
    // check-values 3g: metabolic compensation for a PaCO2 rise (V2), ± 0.5
    expect(BICARBONATE_RISE_PER_10_MMHG).toStrictEqual({ acute: 1, chronic: 3.5 });
  });

  // check-values 3g (V2): from PaCO2 40 mmHg and HCO3 24 mmol/L (common practice reference point)
  it.each([
    [50, 'acute', 25],
    [60, 'acute', 26],
    [80, 'acute', 28],
    [50, 'chronic', 27.5],
    [60, 'chronic', 31],
    [80, 'chronic', 38],
  ] as const)('expects PaCO2 %d mmHg (%s) to give %d mmol/L', (paco2, timing, expected) => {
    expect(expectedBicarbonateMmolPerL(paco2, timing)).toBeCloseTo(expected, 9);
  });

  it('expects the reference 24 mmol/L at or below PaCO2 40', () => {
    // the compensation rules describe hypercapnia only (common practice)
    expect(expectedBicarbonateMmolPerL(40, 'chronic')).toBe(24);
    expect(expectedBicarbonateMmolPerL(30, 'acute')).toBe(24);
  });
});

describe('expectedPaco2WintersMmHg', () => {
  // Winters' formula 1.5 × HCO3 + 8 (Albert, Dell & Winters, Ann Intern Med 1967; from memory)
  it.each([
    [12, 26],
    [15.5, 31.25],
    [24, 44],
  ])('expects HCO3 %d mmol/L to give PaCO2 %d mmHg', (hco3, expected) => {
    expect(expectedPaco2WintersMmHg(hco3)).toBeCloseTo(expected, 9);
  });

  describe('edge cases', () => {
    it.each([0, -5, 61, Number.NaN])('refuses HCO3 %d', (hco3) => {
      expect(() => expectedPaco2WintersMmHg(hco3)).toThrow(RangeError);
    });

    it.each([0, -40, 201, Number.NaN])('refuses PaCO2 %d', (paco2) => {
      expect(() => expectedBicarbonateMmolPerL(paco2, 'acute')).toThrow(RangeError);
    });
  });
});
