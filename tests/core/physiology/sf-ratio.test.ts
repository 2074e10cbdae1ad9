import { describe, expect, it } from 'vitest';
import {
  classifySfRice,
  pfFromSfRice,
  RICE_SF_CUTOFFS,
  sfFromPfRice,
  sfRatio,
} from '../../../src/core/physiology/sf-ratio.js';

describe('sfRatio', () => {
  it('divides SpO2 in percent by FiO2', () => {
    // Rice 2007 (Chest 132:410) uses SpO2 % / FiO2: 94 / 0.40 = 235
    expect(sfRatio(94, 0.4)).toStrictEqual({ kind: 'ok', value: 94 / 0.4 });
    const onAir = sfRatio(92, 0.21);
    expect(onAir.kind === 'ok' && onAir.value).toBeCloseTo(438.1, 1);
  });

  it('accepts SpO2 of exactly 97 %', () => {
    // Rice 2007 excluded SpO2 > 97 % (check-values 3e, 7 pitfall 1)
    expect(sfRatio(97, 0.21).kind).toBe('ok');
  });

  it('is unknown above 97 %, where S/F stops tracking P/F', () => {
    // Rice 2007: SpO2 > 97 % excluded (check-values 7, pitfall 1)
    const result = sfRatio(98, 0.21);
    expect(result.kind).toBe('unknown');
    expect(result.kind === 'unknown' && result.reason).toMatch(/above 97 %/);
  });
});

describe('sfFromPfRice and pfFromSfRice', () => {
  // Rice 2007 regression S/F = 64 + 0.84 × P/F (check-values 3e, V equation / D values), ± 0.01
  it.each([
    [100, 148],
    [200, 232],
    [300, 316],
    [400, 400],
  ])('maps P/F %d to S/F %d and back', (pf, sf) => {
    expect(Math.abs(sfFromPfRice(pf) - sf)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(pfFromSfRice(sf) - pf)).toBeLessThanOrEqual(0.01);
  });

  it('gives the regression values 232 and 316, not the published cut-offs 235 and 315', () => {
    // check-values 7, pitfall 1: the regression and the published thresholds differ
    expect(Math.round(sfFromPfRice(200))).not.toBe(RICE_SF_CUTOFFS.pf200);
    expect(Math.round(sfFromPfRice(300))).not.toBe(RICE_SF_CUTOFFS.pf300);
  });
});

describe('classifySfRice', () => {
  it('uses the published cut-offs 235 and 315', () => {
    // Rice 2007: S/F 235 ≈ P/F 200, S/F 315 ≈ P/F 300 (check-values 3e, V), exact
    expect(RICE_SF_CUTOFFS).toStrictEqual({ pf200: 235, pf300: 315 });
  });

  // Rice 2007 published cut-offs; a value on a cut-off falls in the lower band (our documented choice)
  it.each([
    [440, 'none'],
    [316, 'none'],
    [315, 'below-315'],
    [300, 'below-315'],
    [236, 'below-315'],
    [235, 'below-235'],
    [232, 'below-235'],
    [150, 'below-235'],
  ] as const)('puts S/F %s in %s', (sf, band) => {
    expect(classifySfRice(sf)).toBe(band);
  });

  it('classifies S/F 232 (the regression value for P/F 200) below 235 and 316 as none', () => {
    // check-values 7, pitfall 1: classify with the published cut-offs, not the regression's
    expect(classifySfRice(sfFromPfRice(200))).toBe('below-235');
    expect(classifySfRice(sfFromPfRice(300))).toBe('none');
  });

  describe('edge cases', () => {
    it.each([
      [0, 0.21],
      [-94, 0.21],
      [101, 0.21],
      [94, 0],
      [94, 1.1],
      [Number.NaN, 0.21],
    ])('returns unknown for SpO2 %d with FiO2 %d', (spo2, fio2) => {
      expect(sfRatio(spo2, fio2).kind).toBe('unknown');
    });

    it.each([0, -1, 64, 10000, Number.NaN])('refuses to invert S/F %d', (sf) => {
      expect(() => pfFromSfRice(sf)).toThrow(RangeError);
    });

    it.each([0, -5, 501, Number.NaN])('refuses to classify S/F %d', (sf) => {
      expect(() => classifySfRice(sf)).toThrow(RangeError);
    });

    it.each([0, -200, Number.NaN])('refuses to impute from P/F %d', (pf) => {
      expect(() => sfFromPfRice(pf)).toThrow(RangeError);
    });
  });
});
