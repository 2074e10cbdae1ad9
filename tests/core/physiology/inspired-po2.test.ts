import { describe, expect, it } from 'vitest';
import { WATER_VAPOUR_PRESSURE_37C_MMHG } from '../../../src/core/physiology/constants.js';
import { inspiredPo2MmHg } from '../../../src/core/physiology/inspired-po2.js';
import { convertKnown } from '../../../src/units/convert.js';

describe('inspiredPo2MmHg', () => {
  // PIO2 = FiO2 (PB − 47): check-values 3a (D; constants V: PH2O 47 mmHg)
  it.each([
    [0.21, 760, 149.7],
    [0.28, 760, 199.6],
    [0.4, 760, 285.2],
    [0.5, 760, 356.5],
    [1.0, 760, 713.0],
    [0.21, 634.2, 123.3], // ISA 1500 m
    [0.21, 596.3, 115.3], // ISA 2000 m
    [0.21, 253, 43.3], // Everest summit
  ])('gives %d FiO2 at %d mmHg as %d mmHg (± 0.1)', (fio2, pb, expected) => {
    expect(Math.abs(inspiredPo2MmHg(fio2, pb) - expected)).toBeLessThanOrEqual(0.1);
  });

  it('uses 47 mmHg water vapour at 37 °C by default', () => {
    // check-values 3a: 47 mmHg (V2; Buck equation 47.1)
    expect(WATER_VAPOUR_PRESSURE_37C_MMHG).toBe(47);
    expect(inspiredPo2MmHg(0.21, 760)).toBe(inspiredPo2MmHg(0.21, 760, 47));
  });

  it('reproduces the kPa row: 19.96 kPa on air at 101.325 kPa with PH2O 6.27 kPa', () => {
    // check-values 3a kPa row (D), ± 0.02 kPa; converted at the edge with UCUM
    const pbMmHg = convertKnown(101.325, 'kPa', 'mm[Hg]');
    const ph2oMmHg = convertKnown(6.27, 'kPa', 'mm[Hg]');
    const pio2Kpa = convertKnown(inspiredPo2MmHg(0.21, pbMmHg, ph2oMmHg), 'mm[Hg]', 'kPa');
    expect(Math.abs(pio2Kpa - 19.96)).toBeLessThanOrEqual(0.02);
  });

  describe('edge cases', () => {
    it.each([
      [0, 760, 47],
      [-0.21, 760, 47],
      [1.01, 760, 47],
      [0.21, 0, 47],
      [0.21, -760, 47],
      [0.21, 760, -1],
      [Number.NaN, 760, 47],
    ])('refuses FiO2 %d, PB %d, PH2O %d', (fio2, pb, ph2o) => {
      expect(() => inspiredPo2MmHg(fio2, pb, ph2o)).toThrow(RangeError);
    });
  });
});
