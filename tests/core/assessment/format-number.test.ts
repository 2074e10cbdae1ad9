import { describe, expect, it } from 'vitest';
import { formatFraction, formatNumber } from '../../../src/core/assessment/format.js';

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
  // Halves, exact in binary or only in decimal, where rounding the scaled value could go either way.
  0.125, 0.375, -0.125, 2.5, 0.145, 0.285, 1.255, 2.675, 8.345, 1.0005, 0.0625, 999999.5, 99999.95, 1e6 - 0.005, 1e6 + 0.5,
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

  it('writes every value on a fine grid, and every half between its steps, as the former form did', () => {
    // Grid steps of 1/1000, 1/200 (halves at two places) and 1/2000 (halves at three), negative too.
    const values = [1000, 200, 2000].flatMap((steps) =>
      Array.from({ length: 4 * steps + 1 }, (_, k) => (k - 2 * steps) / steps),
    );
    const wrong = values.flatMap((value) =>
      [0, 1, 2, 3].flatMap((decimals) =>
        formatNumber(value, decimals) === formerFormat(value, decimals) ? [] : [`${value} at ${decimals}`],
      ),
    );
    expect(wrong).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('drops trailing zeros and a bare point, keeping other digits', () => {
      // The documented examples: 6.70 → "6.7", 3.0 → "3".
      expect([formatNumber(6.7, 2), formatNumber(3, 1), formatNumber(3.5, 1), formatNumber(-0, 1)]).toStrictEqual(['6.7', '3', '3.5', '0']);
    });
  });
});

describe('formatFraction', () => {
  it('writes every fraction as toFixed(2) does: a fine grid, its halves, spread values and out-of-range ones', () => {
    let seed = 7;
    const spread = Array.from({ length: 5000 }, () => {
      seed = (seed * 16807) % 2147483647;
      return seed / 2147483647;
    });
    const grid = [1000, 200, 20_000].flatMap((steps) => Array.from({ length: steps + 1 }, (_, k) => k / steps));
    const outside = [-0, -0.004, -0.005, -0.2, 1.004, 1.005, 1.2, 21, Number.NaN, Number.POSITIVE_INFINITY];
    const wrong = [...grid, ...spread, ...outside].filter((value) => formatFraction(value) !== value.toFixed(2));
    expect(wrong).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('writes room air and pure oxygen as the cards show them', () => {
      // FiO2 0.21 on room air and 1.00 at most (common practice).
      expect([formatFraction(0.21), formatFraction(1), formatFraction(0.205), formatFraction(0.995)]).toStrictEqual([
        '0.21',
        '1.00',
        (0.205).toFixed(2),
        (0.995).toFixed(2),
      ]);
    });
  });
});
