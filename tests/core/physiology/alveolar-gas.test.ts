import { describe, expect, it } from 'vitest';
import { alveolarPo2MmHg, alveolarPo2OrUnknown } from '../../../src/core/physiology/alveolar-gas.js';
import { RESPIRATORY_QUOTIENT_DEFAULT } from '../../../src/core/physiology/constants.js';
import { convertKnown } from '../../../src/units/convert.js';

// check-values 3a (D from the alveolar gas equation; constants V: PH2O 47 mmHg, R 0.8), ± 0.1 mmHg
const table: readonly (readonly [number, number, number, number, number])[] = [
  // FiO2, PB, PaCO2, simplified PAO2, full PAO2
  [0.21, 760, 40, 99.7, 101.8],
  [0.21, 760, 30, 112.2, 113.8],
  [0.21, 760, 60, 74.7, 77.9],
  [0.28, 760, 50, 137.1, 140.6],
  [0.4, 760, 40, 235.2, 239.2],
  [0.5, 760, 40, 306.5, 311.5],
  [1.0, 760, 40, 663.0, 673.0],
  [0.21, 634.2, 40, 73.3, 75.4], // ISA 1500 m
  [0.21, 596.3, 40, 65.3, 67.4], // ISA 2000 m
  [0.21, 253, 7.5, 33.9, 34.3], // Everest summit
];

describe('alveolarPo2MmHg', () => {
  it.each(table)(
    'gives FiO2 %d, PB %d, PaCO2 %d: simplified %d mmHg',
    (fio2Fraction, barometricPressureMmHg, paco2MmHg, simplified) => {
      const value = alveolarPo2MmHg({ fio2Fraction, barometricPressureMmHg, paco2MmHg });
      expect(Math.abs(value - simplified)).toBeLessThanOrEqual(0.1);
    },
  );

  it.each(table.map(([fio2, pb, paco2, , full]) => [fio2, pb, paco2, full] as const))(
    'gives FiO2 %d, PB %d, PaCO2 %d: full form %d mmHg',
    (fio2Fraction, barometricPressureMmHg, paco2MmHg, full) => {
      const value = alveolarPo2MmHg({ fio2Fraction, barometricPressureMmHg, paco2MmHg, form: 'full' });
      expect(Math.abs(value - full)).toBeLessThanOrEqual(0.1);
    },
  );

  it('uses R 0.8 by default', () => {
    // check-values 3a: R 0.8 (V)
    expect(RESPIRATORY_QUOTIENT_DEFAULT).toBe(0.8);
    const base = { fio2Fraction: 0.21, barometricPressureMmHg: 760, paco2MmHg: 40 };
    expect(alveolarPo2MmHg(base)).toBe(alveolarPo2MmHg({ ...base, respiratoryQuotient: 0.8 }));
    // R 1.0 removes the correction: 149.7 − 40 = 109.7 (derived from the alveolar gas equation)
    expect(alveolarPo2MmHg({ ...base, respiratoryQuotient: 1 })).toBeCloseTo(109.73, 2);
  });

  it('makes the full form higher by the correction term F ≈ 2 mmHg on air at PaCO2 40', () => {
    // check-values 3a: F = PaCO2 × FiO2 × (1 − R)/R ≈ 2 mmHg (V2), ± 0.1
    const base = { fio2Fraction: 0.21, barometricPressureMmHg: 760, paco2MmHg: 40 };
    const difference = alveolarPo2MmHg({ ...base, form: 'full' }) - alveolarPo2MmHg(base);
    expect(Math.abs(difference - 2.1)).toBeLessThanOrEqual(0.1);
    expect(difference).toBeCloseTo((40 * 0.21 * (1 - 0.8)) / 0.8, 9);
  });

  it('reproduces the kPa row: 13.34 kPa on air at 101.325 kPa, PaCO2 5.3 kPa, PH2O 6.27 kPa', () => {
    // check-values 3a kPa row (D), ± 0.02 kPa; converted at the edge with UCUM
    const value = alveolarPo2MmHg({
      fio2Fraction: 0.21,
      barometricPressureMmHg: convertKnown(101.325, 'kPa', 'mm[Hg]'),
      paco2MmHg: convertKnown(5.3, 'kPa', 'mm[Hg]'),
      waterVapourMmHg: convertKnown(6.27, 'kPa', 'mm[Hg]'),
    });
    expect(Math.abs(convertKnown(value, 'mm[Hg]', 'kPa') - 13.34)).toBeLessThanOrEqual(0.02);
  });

  describe('edge cases', () => {
    it.each([
      [{ fio2Fraction: 0, barometricPressureMmHg: 760, paco2MmHg: 40 }],
      [{ fio2Fraction: 1.2, barometricPressureMmHg: 760, paco2MmHg: 40 }],
      [{ fio2Fraction: 0.21, barometricPressureMmHg: -760, paco2MmHg: 40 }],
      [{ fio2Fraction: 0.21, barometricPressureMmHg: 760, paco2MmHg: 0 }],
      [{ fio2Fraction: 0.21, barometricPressureMmHg: 760, paco2MmHg: -40 }],
      [{ fio2Fraction: 0.21, barometricPressureMmHg: 760, paco2MmHg: 40, respiratoryQuotient: 0 }],
      [{ fio2Fraction: Number.NaN, barometricPressureMmHg: 760, paco2MmHg: 40 }],
    ])('throws a RangeError for %o', (input) => {
      expect(() => alveolarPo2MmHg(input)).toThrow(RangeError);
      expect(alveolarPo2OrUnknown(input).kind).toBe('unknown');
    });

    it('returns unknown when the inputs leave no alveolar oxygen', () => {
      // Everest summit air with a sea-level PaCO2: 43.3 − 50 < 0 (derived from the alveolar gas equation)
      const input = { fio2Fraction: 0.21, barometricPressureMmHg: 253, paco2MmHg: 40 };
      const result = alveolarPo2OrUnknown(input);
      expect(result.kind).toBe('unknown');
      expect(result.kind === 'unknown' && result.reason).toMatch(/cannot all be right/);
      expect(() => alveolarPo2MmHg(input)).toThrow(RangeError);
    });

    it('returns the value as ok when the inputs are valid', () => {
      // check-values 3a: 99.7 mmHg on air at sea level, PaCO2 40
      const result = alveolarPo2OrUnknown({ fio2Fraction: 0.21, barometricPressureMmHg: 760, paco2MmHg: 40 });
      expect(result.kind).toBe('ok');
      expect(result.kind === 'ok' && Math.abs(result.value - 99.7)).toBeLessThanOrEqual(0.1);
    });
  });
});
