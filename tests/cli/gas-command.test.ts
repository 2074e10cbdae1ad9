import { describe, expect, it } from 'vitest';
import { runO2check } from './cli-harness.js';

describe('o2check gas', () => {
  it('works out a room-air gas at sea level in mmHg', async () => {
    const run = await runO2check(
      ['gas', '--fio2', '0.21', '--pao2', '95', '--paco2', '40', '--units', 'mmHg', '--age', '40', '--json'],
    );
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    // ISA at 0 m: 760.0 mmHg (ICAO Doc 7488; check-values 3b).
    expect(out.barometricPressureMmHg).toBeCloseTo(760, 0);
    // PIO2 = 0.21 x (760 - 47) = 149.7; PAO2 = 149.7 - 40/0.8 = 99.7 (check-values 3a, derived).
    expect(out.inspiredPO2MmHg).toBeCloseTo(149.7, 1);
    expect(out.alveolarPO2MmHg).toBeCloseTo(99.7, 1);
    // A-a = 99.7 - 95 = 4.7 mmHg (check-values 3a worked example); age/4 + 4 = 14 at 40 (common practice).
    expect(out.aaGradientMmHg).toBeCloseTo(4.7, 1);
    expect(out.expectedAaGradientMmHg).toBe(14);
    // P/F = 95 / 0.21 = 452.4 (derived)
    expect(out.pfRatio).toBeCloseTo(452.4, 1);
    expect(out.pfBerlinCategory).toBe('none');
  });

  it('accepts kPa and converts with UCUM before the alveolar gas equation', async () => {
    // 5.3 kPa PaCO2 on air at 101.325 kPa gives PAO2 13.34 kPa (check-values 3a kPa row, derived).
    const run = await runO2check(['gas', '--fio2', '0.21', '--pao2', '12', '--paco2', '5.3', '--units', 'kPa', '--json']);
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    expect(out.alveolarPO2KPa).toBeCloseTo(13.34, 1);
    expect(out.input.paco2MmHg).toBeCloseTo(39.8, 1);
  });

  it('uses the ISA pressure for the site altitude', async () => {
    const run = await runO2check(
      ['gas', '--fio2', '0.21', '--pao2', '60', '--paco2', '40', '--units', 'mmHg', '--altitude-m', '1500', '--json'],
    );
    const out = JSON.parse(run.stdout);
    // ISA 1500 m: 634.2 mmHg; PAO2 0.21 x (634.2 - 47) - 40/0.8 = 73.3 mmHg (check-values 3a/3b, derived).
    expect(out.barometricPressureMmHg).toBeCloseTo(634.2, 1);
    expect(out.alveolarPO2MmHg).toBeCloseTo(73.3, 1);
  });

  it('interprets the kyphoscoliosis gas as compensated hypercapnia', async () => {
    const run = await runO2check(
      ['gas', '--fio2', '0.28', '--pao2', '8.1', '--paco2', '6.7', '--units', 'kPa', '--age', '64', '--ph', '7.37', '--hco3', '30', '--json'],
    );
    const out = JSON.parse(run.stdout);
    // pH >= 7.35 with PaCO2 >= 6.0 kPa is compensated hypercapnia (BTS 2017 pathway as taught, V2);
    // HCO3 > 28 mmol/L suggests long-standing hypercapnia (BTS 2017 in secondary material, V2).
    expect(out.interpretation.hypercapnic).toBe(true);
    expect(out.interpretation.acidBase).toBe('compensated-respiratory-acidosis');
    // On oxygen the age norm of the A-a gradient does not apply (check-values 3a note).
    expect(out.ageNormApplies).toBe(false);
  });

  describe('edge cases', () => {
    it('refuses both an altitude and a pressure with exit 2', async () => {
      const run = await runO2check(
        ['gas', '--fio2', '0.21', '--pao2', '60', '--paco2', '40', '--units', 'mmHg', '--altitude-m', '100', '--pb-mmhg', '750'],
      );
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('not both');
    });

    it('refuses an FiO2 given as a percentage with exit 2 naming --fio2', async () => {
      const run = await runO2check(['gas', '--fio2', '28', '--pao2', '8', '--paco2', '6', '--units', 'kPa']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('--fio2');
    });

    it('refuses units other than kPa and mmHg', async () => {
      const run = await runO2check(['gas', '--fio2', '0.21', '--pao2', '8', '--paco2', '6', '--units', 'torr']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('--units: must be kPa or mmHg');
    });
  });
});
