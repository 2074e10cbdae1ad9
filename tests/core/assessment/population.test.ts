import { describe, expect, it } from 'vitest';
import { assessPopulation } from '../../../src/core/assessment/population.js';
import { BTS, TSANZ, buildFacts, withPolicy } from '../facts-builder.js';

const at = (ageYears: number | undefined) => buildFacts({ patient: { ageYears, bmiKgPerM2: undefined } });

describe('assessPopulation', () => {
  it.each([
    // population.minimumAgeYears 16 in both bundled policies (common practice; docs/safety.md)
    [0, 'below-minimum-age'],
    [9, 'below-minimum-age'],
    [15, 'below-minimum-age'],
    [16, 'adult'],
    [80, 'adult'],
  ])('reads age %s as %s', (age, kind) => {
    expect(assessPopulation(at(age), BTS).kind).toBe(kind);
    expect(assessPopulation(at(age), TSANZ).kind).toBe(kind);
  });

  it('says the age is unknown when the record gives none, with the minimum age', () => {
    expect(assessPopulation(at(undefined), BTS)).toStrictEqual({ kind: 'age-unknown', minimumAgeYears: 16 });
  });

  describe('edge cases', () => {
    it('follows a local minimum age', () => {
      const policy = withPolicy(BTS, { population: { minimumAgeYears: 18 } });
      expect(assessPopulation(at(17), policy)).toStrictEqual({ kind: 'below-minimum-age', ageYears: 17, minimumAgeYears: 18 });
      expect(assessPopulation(at(18), policy)).toStrictEqual({ kind: 'adult', ageYears: 18 });
    });
  });
});
