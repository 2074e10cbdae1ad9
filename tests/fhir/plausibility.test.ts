import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { PLAUSIBLE, describeRange, isPlausible } from '../../src/fhir/plausibility.js';

const doc = readFileSync(new URL('../../docs/fhir-input.md', import.meta.url), 'utf8');

/** Rows of the plausibility table in docs/fhir-input.md: | `key` | quantity | min | max | unit |. */
function documentedLimits(): Record<string, { min: number; max: number }> {
  const rows = [...doc.matchAll(/^\| `(\w+)` \| [^|]+ \| (-?[\d.]+) \| (-?[\d.]+) \|/gm)];
  return Object.fromEntries(rows.map((m) => [m[1], { min: Number(m[2]), max: Number(m[3]) }]));
}

describe('PLAUSIBLE', () => {
  it('matches the table in docs/fhir-input.md, limit for limit', () => {
    const inCode = Object.fromEntries(Object.entries(PLAUSIBLE).map(([k, r]) => [k, { min: r.min, max: r.max }]));
    expect(documentedLimits()).toStrictEqual(inCode);
  });

  it.each([
    // The brief's plausibility limits (common practice)
    [PLAUSIBLE.spo2Percent, 50, 100],
    [PLAUSIBLE.ph, 6.8, 7.8],
    [PLAUSIBLE.o2FlowLPerMin, 0, 80],
    [PLAUSIBLE.fio2Fraction, 0.21, 1],
    [PLAUSIBLE.respRatePerMin, 0, 80],
    [PLAUSIBLE.po2MmHg, 10, 700],
    [PLAUSIBLE.pco2MmHg, 5, 200],
  ])('keeps the ends of %j and refuses just outside them', (range, min, max) => {
    expect([isPlausible(min, range), isPlausible(max, range)]).toStrictEqual([true, true]);
    expect([isPlausible(min - 0.001, range), isPlausible(max + 0.001, range)]).toStrictEqual([false, false]);
  });

  describe('edge cases', () => {
    it('refuses NaN and infinities', () => {
      expect([Number.NaN, Number.POSITIVE_INFINITY].map((v) => isPlausible(v, PLAUSIBLE.spo2Percent))).toStrictEqual([false, false]);
    });

    it('describes a range for a note', () => {
      expect(describeRange(PLAUSIBLE.spo2Percent)).toBe('50–100 %');
      expect(describeRange(PLAUSIBLE.ph)).toBe('6.8–7.8');
    });
  });
});
