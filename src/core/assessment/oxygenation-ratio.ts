import { roundForThreshold } from '../physiology/valid-ranges.js';
import type { Fio2InForce, OxygenationRatio } from './types.js';

/**
 * A ratio with FiO2 in its denominator (P/F, S/F) over the FiO2 range in force, and its class only
 * when the whole range lies in one band. `classify` is the published classification (Berlin 2012,
 * Rice 2007); `cutoffsLowerInclusive` are its cut-offs, each belonging to the band below it, as
 * those classifications place them. A ratio is never given a class on a margin smaller than the
 * FiO2's uncertainty: P/F 195–215 is "around 200", not "moderate".
 */
export function ratioOverFio2Range<C>(input: {
  readonly numerator: number;
  readonly fio2: Fio2InForce;
  readonly compute: (numerator: number, fio2Fraction: number) => number;
  readonly classify: (ratio: number) => C;
  readonly cutoffsLowerInclusive: readonly number[];
}): OxygenationRatio & { readonly band: C | undefined } {
  const { numerator, fio2 } = input;
  const ratio = input.compute(numerator, fio2.estimate);
  const low = input.compute(numerator, fio2.high);
  const high = input.compute(numerator, fio2.low);
  const above = (value: number, cutoff: number): boolean => roundForThreshold(value) > cutoff;
  const spannedCutoffs = input.cutoffsLowerInclusive.filter((c) => above(high, c) && !above(low, c));
  const lowClass = input.classify(low);
  const band = spannedCutoffs.length === 0 && lowClass === input.classify(high) ? lowClass : undefined;
  return { ratio, low, high, spannedCutoffs, fio2, band };
}
