import { describe, expect, it } from 'vitest';
import {
  barometricPressureIsaMmHg,
  barometricPressureWestMmHg,
  ISA_TO_WEST_ALTITUDE_M,
  siteBarometricPressureMmHg,
} from '../../../src/core/physiology/barometric-pressure.js';

describe('barometricPressureIsaMmHg', () => {
  // ICAO Doc 7488 (1993) standard atmosphere; values derived from the ISA formula (check-values 3b, D)
  it.each([
    [0, 760.0],
    [1000, 674.1],
    [1500, 634.2],
    [2000, 596.3],
    [3000, 525.9],
    [4000, 462.3],
    [5000, 405.2],
    [8848, 235.9],
  ])('gives the ISA pressure at %d m as %d mmHg (± 0.1)', (altitudeM, expected) => {
    // toBeCloseTo(x, 1) allows ± 0.05; the table rounds to 0.1, so compare the rounded value
    expect(Math.abs(barometricPressureIsaMmHg(altitudeM) - expected)).toBeLessThanOrEqual(0.1);
  });

  it('is not the crude 760 × e^(−h/7000) formula, which is about 21 mmHg low at 1500 m', () => {
    // check-values 3b pitfall 5: the crude formula gives 613 mmHg at 1500 m against ISA 634.2
    const crude1500 = 760 * Math.exp(-1500 / 7000);
    const crude3000 = 760 * Math.exp(-3000 / 7000);
    expect(barometricPressureIsaMmHg(1500) - crude1500).toBeGreaterThan(20);
    // about 31 mmHg low at 3000 m (check-values 3b)
    expect(barometricPressureIsaMmHg(3000) - crude3000).toBeGreaterThan(30);
  });
});

describe('barometricPressureWestMmHg', () => {
  // West 1996, J Appl Physiol 81:1850; model values from check-values 3b (D from the published form)
  it.each([
    [0, 759.5],
    [1000, 678.6],
    [1500, 640.7],
    [2000, 604.5],
    [3000, 536.8],
    [4000, 475.3],
    [5000, 419.7],
  ])('gives the West model pressure at %d m as %d mmHg (± 0.1)', (altitudeM, expected) => {
    expect(Math.abs(barometricPressureWestMmHg(altitudeM) - expected)).toBeLessThanOrEqual(0.1);
  });

  it('predicts 252.7 mmHg at the Everest summit (8848 m, ± 0.5)', () => {
    // West 1996 (check-values 3b, V)
    expect(Math.abs(barometricPressureWestMmHg(8848) - 252.7)).toBeLessThanOrEqual(0.5);
  });

  // Measured on Everest in 1981: West et al., J Appl Physiol 54:1188 (1983), check-values 3b (V)
  it.each([
    [5400, 400.4],
    [6300, 351.0],
    [8050, 283.6],
    [8848, 253.0],
  ])('comes within 5 mmHg of the pressure measured at %d m (%d Torr)', (altitudeM, measured) => {
    expect(Math.abs(barometricPressureWestMmHg(altitudeM) - measured)).toBeLessThanOrEqual(5);
  });
});

describe('siteBarometricPressureMmHg', () => {
  it('uses ISA up to 5000 m', () => {
    // ICAO Doc 7488: 634.2 mmHg at 1500 m (check-values 3b)
    const site = siteBarometricPressureMmHg(1500);
    expect(site.model).toBe('isa-1993');
    expect(site.mmHg).toBe(barometricPressureIsaMmHg(1500));
    expect(siteBarometricPressureMmHg(ISA_TO_WEST_ALTITUDE_M).model).toBe('isa-1993');
  });

  it('uses West above 5000 m, where ISA underestimates measured pressure', () => {
    // West et al. 1983: 253.0 Torr measured at the summit; ISA gives 235.9, West 252.7 (check-values 3b)
    const summit = siteBarometricPressureMmHg(8848);
    expect(summit.model).toBe('west-1996');
    expect(Math.abs(summit.mmHg - 253.0)).toBeLessThanOrEqual(5);
    expect(253.0 - barometricPressureIsaMmHg(8848)).toBeGreaterThan(15);
    expect(siteBarometricPressureMmHg(5001).model).toBe('west-1996');
  });

  it('uses ISA below sea level', () => {
    // ICAO Doc 7488: pressure rises below mean sea level
    const shore = siteBarometricPressureMmHg(-400);
    expect(shore.model).toBe('isa-1993');
    expect(shore.mmHg).toBeGreaterThan(760);
  });

  describe('edge cases', () => {
    it.each([Number.NaN, Number.POSITIVE_INFINITY, -501, 9001])('refuses altitude %d m', (altitudeM) => {
      expect(() => siteBarometricPressureMmHg(altitudeM)).toThrow(RangeError);
    });

    it('refuses altitudes outside each model', () => {
      // ISA troposphere ends at 11 km (ICAO Doc 7488); West's fit starts at sea level
      expect(() => barometricPressureIsaMmHg(11001)).toThrow(RangeError);
      expect(() => barometricPressureWestMmHg(-1)).toThrow(RangeError);
      expect(() => barometricPressureWestMmHg(9001)).toThrow(RangeError);
    });

    it('gives a finite pressure at zero altitude', () => {
      // ICAO Doc 7488: 760 mmHg at sea level
      expect(barometricPressureIsaMmHg(0)).toBeCloseTo(760, 6);
    });
  });
});
