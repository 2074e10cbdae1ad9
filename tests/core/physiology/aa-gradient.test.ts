import { describe, expect, it } from 'vitest';
import { aaGradientMmHg } from '../../../src/core/physiology/aa-gradient.js';
import { alveolarPo2MmHg } from '../../../src/core/physiology/alveolar-gas.js';

describe('aaGradientMmHg', () => {
  // check-values 3a A-a table, sea level (760 mmHg), simplified alveolar gas equation, ± 0.1 mmHg
  it.each([
    [0.21, 40, 95, 4.7], // D (worked example in secondary sources)
    [0.21, 40, 60, 39.7], // D
    [0.21, 30, 65, 47.2], // V2 / D
    [0.4, 40, 80, 155.2], // D; age norms do not apply on oxygen
  ])('gives FiO2 %d, PaCO2 %d, PaO2 %d as %d mmHg', (fio2Fraction, paco2MmHg, pao2, expected) => {
    const alveolar = alveolarPo2MmHg({ fio2Fraction, barometricPressureMmHg: 760, paco2MmHg });
    expect(Math.abs(aaGradientMmHg(alveolar, pao2) - expected)).toBeLessThanOrEqual(0.1);
  });

  it('does not clamp a small negative gradient from measurement error', () => {
    // A-a = PAO2 − PaO2 (check-values 3a): 99.7 − 102 = −2.3
    expect(aaGradientMmHg(99.7, 102)).toBeCloseTo(-2.3, 9);
  });

  describe('edge cases', () => {
    it.each([
      [0, 60],
      [-5, 60],
      [99.7, 0],
      [99.7, -1],
      [99.7, 900],
      [Number.NaN, 60],
    ])('refuses PAO2 %d with PaO2 %d', (alveolar, pao2) => {
      expect(() => aaGradientMmHg(alveolar, pao2)).toThrow(RangeError);
    });
  });
});
