import { describe, expect, it } from 'vitest';
import {
  expectedAaGradientMellemgaardMmHg,
  expectedAaGradientMmHg,
} from '../../../src/core/physiology/expected-aa-gradient.js';

describe('expectedAaGradientMmHg', () => {
  // age / 4 + 4 on room air: common practice (check-values 3c, C), exact
  it.each([
    [20, 9],
    [40, 14],
    [60, 19],
    [80, 24],
  ])('gives %d years as %d mmHg', (age, expected) => {
    expect(expectedAaGradientMmHg(age)).toBe(expected);
  });

  it('is not the alternative (age + 10) / 4 rule', () => {
    // check-values 3c: (age + 10)/4 gives 12.5 at 40 (C); we use age/4 + 4 = 14
    expect(expectedAaGradientMmHg(40)).not.toBe((40 + 10) / 4);
  });
});

describe('expectedAaGradientMellemgaardMmHg', () => {
  // Mellemgaard, Acta Physiol Scand (1966): 2.5 + 0.21 × age (check-values 3c, V2), ± 0.05
  it.each([
    [20, 6.7],
    [40, 10.9],
    [60, 15.1],
    [80, 19.3],
  ])('gives %d years as %d mmHg', (age, expected) => {
    expect(Math.abs(expectedAaGradientMellemgaardMmHg(age) - expected)).toBeLessThanOrEqual(0.05);
  });

  describe('edge cases', () => {
    it.each([0, -1, 17, 121, Number.NaN])('refuses age %d in both rules', (age) => {
      expect(() => expectedAaGradientMmHg(age)).toThrow(RangeError);
      expect(() => expectedAaGradientMellemgaardMmHg(age)).toThrow(RangeError);
    });

    it('accepts the adult limits 18 and 120 years', () => {
      // age / 4 + 4 (common practice): 8.5 and 34
      expect(expectedAaGradientMmHg(18)).toBe(8.5);
      expect(expectedAaGradientMmHg(120)).toBe(34);
    });
  });
});
