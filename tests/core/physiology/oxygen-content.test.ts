import { describe, expect, it } from 'vitest';
import {
  HUFNER_CLINICAL_ML_PER_G,
  OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG,
} from '../../../src/core/physiology/constants.js';
import { oxygenContentMlPerDl } from '../../../src/core/physiology/oxygen-content.js';

describe('oxygenContentMlPerDl', () => {
  it('uses k = 1.34 mL/g and 0.003 mL/dL/mmHg', () => {
    // check-values 3f: clinical 1.34 and 0.003 (V2)
    expect(HUFNER_CLINICAL_ML_PER_G).toBe(1.34);
    expect(OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG).toBe(0.003);
  });

  // CaO2 = 1.34 × Hb × SaO2 + 0.003 × PaO2 (check-values 3f, D), ± 0.01 mL/dL
  it.each([
    [15, 0.98, 100, 20.0],
    [14, 0.95, 120, 18.18], // published worked example gives 18.19 with 0.0031 (V2)
    [10, 0.9, 60, 12.24],
    [15, 0.75, 40, 15.2], // mixed venous
  ])('gives Hb %d, saturation %d, PO2 %d as %d mL/dL', (hb, saturation, po2, expected) => {
    expect(Math.abs(oxygenContentMlPerDl(hb, saturation, po2) - expected)).toBeLessThanOrEqual(0.01);
  });

  it('is not the theoretical 1.39 mL/g value', () => {
    // check-values 3f: k = 1.39 gives 20.73 for Hb 15, SaO2 0.98, PaO2 100
    expect(Math.abs(oxygenContentMlPerDl(15, 0.98, 100) - 20.73)).toBeGreaterThan(0.5);
  });

  describe('edge cases', () => {
    it('gives only the dissolved oxygen at zero saturation', () => {
      // 0.003 × 40 = 0.12 mL/dL (check-values 3f formula)
      expect(oxygenContentMlPerDl(15, 0, 40)).toBeCloseTo(0.12, 9);
    });

    it.each([
      [0, 0.98, 100],
      [-15, 0.98, 100],
      [15, -0.1, 100],
      [15, 1.1, 100],
      [15, 0.98, -1],
      [15, Number.NaN, 100],
    ])('refuses Hb %d, saturation %d, PO2 %d', (hb, saturation, po2) => {
      expect(() => oxygenContentMlPerDl(hb, saturation, po2)).toThrow(RangeError);
    });
  });
});
