import { describe, expect, it } from 'vitest';
import {
  assertInRange,
  checkPhysiologyInputs,
  describeOutOfRange,
  PHYSIOLOGY_VALID_RANGES,
  roundForThreshold,
} from '../../../src/core/physiology/valid-ranges.js';

describe('checkPhysiologyInputs', () => {
  it('returns the values when all are present and in range', () => {
    expect(checkPhysiologyInputs({ fio2Fraction: 0.28, paco2MmHg: 52 })).toStrictEqual({
      kind: 'ok',
      value: { fio2Fraction: 0.28, paco2MmHg: 52 },
    });
  });

  it('lists missing values, treating NaN as missing', () => {
    expect(checkPhysiologyInputs({ fio2Fraction: undefined, paco2MmHg: Number.NaN, ph: 7.4 })).toStrictEqual({
      kind: 'unknown',
      reason: 'missing fio2Fraction, paco2MmHg',
      missing: ['fio2Fraction', 'paco2MmHg'],
    });
  });

  it('names every value out of range', () => {
    expect(checkPhysiologyInputs({ fio2Fraction: 1.5, spo2Percent: 0 })).toStrictEqual({
      kind: 'unknown',
      reason:
        'fio2Fraction must be from 0.2 to 1 fraction; got 1.5; spo2Percent must be from 20 to 100 %; got 0',
    });
  });

  it('accepts room air and the Everest-summit PaCO2', () => {
    // 0.21 FiO2; PaCO2 7.5 mmHg at the summit (check-values 3a, D)
    expect(checkPhysiologyInputs({ fio2Fraction: 0.21, paco2MmHg: 7.5 }).kind).toBe('ok');
  });

  describe('edge cases', () => {
    it('refuses infinities', () => {
      expect(checkPhysiologyInputs({ pao2MmHg: Number.POSITIVE_INFINITY }).kind).toBe('unknown');
    });

    it('excludes both ends of an exclusive range', () => {
      const open = { min: 0, max: 1, unit: 'fraction', exclusive: true };
      expect(describeOutOfRange('s', 0, open)).toBe('s must be between 0 and 1 fraction; got 0');
      expect(describeOutOfRange('s', 1, open)).toBeDefined();
      expect(describeOutOfRange('s', 0.5, open)).toBeUndefined();
    });

    it('throws a RangeError from assertInRange and passes a valid value', () => {
      expect(() => assertInRange('ph', 9)).toThrow(RangeError);
      expect(() => assertInRange('ph', 7.4)).not.toThrow();
    });

    it('keeps every range ordered', () => {
      for (const range of Object.values(PHYSIOLOGY_VALID_RANGES)) {
        expect(range.min).toBeLessThan(range.max);
      }
    });
  });
});

describe('roundForThreshold', () => {
  it('puts a ratio that binary floating point moves off a boundary back on it', () => {
    // 114 / 0.57 is 200.00000000000003 in IEEE 754 doubles
    expect(114 / 0.57).not.toBe(200);
    expect(roundForThreshold(114 / 0.57)).toBe(200);
    expect(roundForThreshold(4.8812)).toBe(4.8812);
  });
});
