import { describe, expect, it } from 'vitest';
import { formatNumber } from '../../../src/core/assessment/format.js';

/**
 * formatNumber skips rounding for whole numbers and trims zeros without a regex; it must write every
 * number as the toFixed-and-trim form it replaces. Sample numbers, not clinical check values.
 */
function formerFormat(value: number, decimals: number): string {
  const fixed = value.toFixed(decimals);
  return fixed.includes('.') ? fixed.replace(/\.?0+$/, '') : fixed;
}

const SAMPLES = [
  0, -0, 1, 2, 28, 88, 94.5, 6.7, 6.70001, 3.0, 0.21, 0.28, 0.035, 7.35, 7.349999, 133.322, 760, 1e-7, -1e-7, -2.5,
  -0.004, 0.005, 0.015, 1.005, 99.95, 1e20, 1e21, 1.5e21, 123456789.125, Number.NaN, Number.POSITIVE_INFINITY,
  Number.NEGATIVE_INFINITY, Number.MAX_SAFE_INTEGER, Number.EPSILON,
];

describe('formatNumber', () => {
  it('writes every sample at every precision as the former toFixed-and-trim did', () => {
    const wrong = SAMPLES.flatMap((value) =>
      [0, 1, 2, 3, 5].flatMap((decimals) =>
        formatNumber(value, decimals) === formerFormat(value, decimals) ? [] : [`${value} at ${decimals}`],
      ),
    );
    expect(wrong).toStrictEqual([]);
  });

  it('writes a spread of values as the former form did', () => {
    let seed = 11;
    const values = Array.from({ length: 5000 }, () => {
      seed = (seed * 16807) % 2147483647;
      return ((seed % 200_000) - 100_000) / [1, 10, 100, 1000, 7][seed % 5]!;
    });
    const wrong = values.filter((value) => formatNumber(value, 2) !== formerFormat(value, 2));
    expect(wrong).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('drops trailing zeros and a bare point, keeping other digits', () => {
      // The documented examples: 6.70 → "6.7", 3.0 → "3".
      expect([formatNumber(6.7, 2), formatNumber(3, 1), formatNumber(3.5, 1), formatNumber(-0, 1)]).toStrictEqual(['6.7', '3', '3.5', '0']);
    });
  });
});
