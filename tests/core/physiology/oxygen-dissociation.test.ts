import { describe, expect, it } from 'vitest';
import {
  po2FromSaturationMmHg,
  saturationFromPo2,
} from '../../../src/core/physiology/oxygen-dissociation.js';

// Severinghaus, J Appl Physiol 46:599 (1979). The equation is our reference (check-values 7, pitfall 2);
// equation values are D (check-values 3d), Table 1 values V2 (transcribed in published code).
const curve: readonly (readonly [number, number, number | undefined, number])[] = [
  // PO2 mmHg, equation SO2 %, Table 1 SO2 %, tolerance for Table 1
  [20, 31.98, 32.12, 0.5],
  [26, 47.86, 48.27, 0.5],
  [30, 57.38, 57.54, 0.5],
  [40, 74.95, 74.69, 0.5],
  [50, 84.99, 85.08, 0.5],
  [55, 88.18, undefined, 0.5],
  [60, 90.58, 90.85, 0.5],
  [70, 93.79, 94.06, 0.5],
  [80, 95.73, 95.84, 0.5],
  [90, 96.94, 96.88, 0.5],
  [100, 97.75, 97.49, 0.5],
  [150, 99.32, 98.77, 0.6],
  [200, 99.71, 99.2, 0.6],
];

describe('saturationFromPo2', () => {
  it.each(curve)('gives the equation value at PO2 %d mmHg: %d % (± 0.05)', (po2, equation) => {
    expect(Math.abs(saturationFromPo2(po2) * 100 - equation)).toBeLessThanOrEqual(0.05);
  });

  it.each(curve.filter((row) => row[2] !== undefined))(
    'stays near Severinghaus Table 1 at PO2 %d mmHg',
    (po2, _equation, table, tolerance) => {
      expect(Math.abs(saturationFromPo2(po2) * 100 - (table ?? Number.NaN))).toBeLessThanOrEqual(tolerance);
    },
  );

  it('follows the equation, not Table 1, where the two differ most', () => {
    // check-values 7, pitfall 2: at 150 mmHg the equation gives 99.32 %, Table 1 98.77 %
    expect(Math.abs(saturationFromPo2(150) * 100 - 99.32)).toBeLessThan(0.01);
    expect(Math.abs(saturationFromPo2(150) * 100 - 98.77)).toBeGreaterThan(0.5);
  });

  it('has P50 = 26.86 mmHg', () => {
    // check-values 3d: root of the equation at S = 0.5 is 26.86 mmHg to 2 dp (D)
    expect(Math.abs(po2FromSaturationMmHg(0.5) - 26.86)).toBeLessThanOrEqual(0.005);
    expect(saturationFromPo2(26.86)).toBeCloseTo(0.5, 3);
  });
});

describe('po2FromSaturationMmHg', () => {
  // Ellis, J Appl Physiol 67:902 (1989) inversion pairs (check-values 3d, D), ± 0.05 mmHg
  it.each([
    [0.5, 26.86],
    [0.75, 40.04],
    [0.85, 50.01],
    [0.88, 54.67],
    [0.9, 58.66],
    [0.92, 63.79],
    [0.94, 70.87],
    [0.96, 81.9],
    [0.97, 90.57],
    [0.98, 104.19],
  ])('gives saturation %d as %d mmHg', (saturation, po2) => {
    expect(Math.abs(po2FromSaturationMmHg(saturation) - po2)).toBeLessThanOrEqual(0.05);
  });

  it.each([0.01, 0.3, 0.5, 0.75, 0.9, 0.97, 0.99, 0.9999])(
    'round-trips saturation %d through the forward equation within 1e-9',
    (saturation) => {
      // check-values 3d: round trip within 1e-9 (D)
      expect(Math.abs(saturationFromPo2(po2FromSaturationMmHg(saturation)) - saturation)).toBeLessThan(1e-9);
    },
  );

  describe('edge cases', () => {
    it('gives zero saturation at zero PO2', () => {
      // Severinghaus 1979: S → 0 as PO2 → 0
      expect(saturationFromPo2(0)).toBe(0);
    });

    it.each([-1, 801, Number.NaN, Number.POSITIVE_INFINITY])('refuses PO2 %d', (po2) => {
      expect(() => saturationFromPo2(po2)).toThrow(RangeError);
    });

    it.each([0, 1, -0.5, 1.2, Number.NaN])('refuses to invert saturation %d', (saturation) => {
      expect(() => po2FromSaturationMmHg(saturation)).toThrow(RangeError);
    });
  });
});
