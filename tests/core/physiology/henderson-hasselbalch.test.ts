import { describe, expect, it } from 'vitest';
import { bicarbonateFromPhAndPaco2MmolPerL } from '../../../src/core/physiology/henderson-hasselbalch.js';

describe('bicarbonateFromPhAndPaco2MmolPerL', () => {
  // Henderson–Hasselbalch, pK 6.1 and solubility 0.0307 mmol/L/mmHg (from memory), ± 0.1 mmol/L
  it.each([
    [7.4, 40, 24.5],
    [7.24, 62, 26.3],
    [7.28, 70, 32.5],
    [7.25, 27, 11.7],
  ])('gives pH %s with PaCO2 %d mmHg as %s mmol/L', (ph, paco2, expected) => {
    expect(Math.abs(bicarbonateFromPhAndPaco2MmolPerL(ph, paco2) - expected)).toBeLessThanOrEqual(0.1);
  });

  it('falls within the RCEM normal bicarbonate range for a normal gas', () => {
    // RCEM Learning: pH 7.40 and PaCO2 40 mmHg are normal; HCO3 22–26 (check-values 3g, V)
    const value = bicarbonateFromPhAndPaco2MmolPerL(7.4, 40);
    expect(value).toBeGreaterThanOrEqual(22);
    expect(value).toBeLessThanOrEqual(26);
  });

  describe('edge cases', () => {
    it.each([
      [0, 40],
      [-7.4, 40],
      [9, 40],
      [7.4, 0],
      [7.4, -40],
      [Number.NaN, 40],
    ])('refuses pH %d with PaCO2 %d', (ph, paco2) => {
      expect(() => bicarbonateFromPhAndPaco2MmolPerL(ph, paco2)).toThrow(RangeError);
    });
  });
});
