import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { runCommandLine } from './cli-harness.js';

const bundled = readFileSync(new URL('../../policies/based-on-bts-2017.yaml', import.meta.url), 'utf8');
const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-gas-'));
afterAll(() => {
  rmSync(dir, { recursive: true, force: true });
});

/** The bundled policy with its site moved: a copy written for one test. */
function policyWithSite(name: string, site: string): string {
  const path = join(dir, `${name}.yaml`);
  writeFileSync(path, bundled.replace(/ {2}altitudeM: 40 .*\n/, site));
  return path;
}

describe('oxygen-order-checker gas', () => {
  it('works out a room-air gas at sea level in mmHg', async () => {
    const run = await runCommandLine(
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
    const run = await runCommandLine(['gas', '--fio2', '0.21', '--pao2', '12', '--paco2', '5.3', '--units', 'kPa', '--json']);
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    expect(out.alveolarPO2KPa).toBeCloseTo(13.34, 1);
    expect(out.input.paco2MmHg).toBeCloseTo(39.8, 1);
  });

  it('uses the ISA pressure for the site altitude', async () => {
    const run = await runCommandLine(
      ['gas', '--fio2', '0.21', '--pao2', '60', '--paco2', '40', '--units', 'mmHg', '--altitude-m', '1500', '--json'],
    );
    const out = JSON.parse(run.stdout);
    // ISA 1500 m: 634.2 mmHg; PAO2 0.21 x (634.2 - 47) - 40/0.8 = 73.3 mmHg (check-values 3a/3b, derived).
    expect(out.barometricPressureMmHg).toBeCloseTo(634.2, 1);
    expect(out.alveolarPO2MmHg).toBeCloseTo(73.3, 1);
  });

  it('interprets the kyphoscoliosis gas as compensated hypercapnia', async () => {
    const run = await runCommandLine(
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
      const run = await runCommandLine(
        ['gas', '--fio2', '0.21', '--pao2', '60', '--paco2', '40', '--units', 'mmHg', '--altitude-m', '100', '--pb-mmhg', '750'],
      );
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('not both');
    });

    it('refuses units other than kPa and mmHg', async () => {
      const run = await runCommandLine(['gas', '--fio2', '0.21', '--pao2', '8', '--paco2', '6', '--units', 'torr']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('--units: must be kPa or mmHg');
    });
  });

  describe('FiO2 as a fraction or a percentage', () => {
    it.each([
      ['28', '0.28'],
      ['21', '0.21'],
      ['100', '1'],
      ['35.5', '0.355'],
    ])('reads --fio2 %s as the fraction %s: a number above 1 is a percentage', async (percent, fraction) => {
      const gas = ['--pao2', '8', '--paco2', '6', '--units', 'kPa', '--json'];
      const asPercent = await runCommandLine(['gas', '--fio2', percent, ...gas]);
      const asFraction = await runCommandLine(['gas', '--fio2', fraction, ...gas]);
      expect(asPercent.code).toBe(0);
      expect(JSON.parse(asPercent.stdout)).toStrictEqual(JSON.parse(asFraction.stdout));
      expect(JSON.parse(asPercent.stdout).input.fio2).toBe(Number(fraction));
    });

    it.each(['5', '0.1', '0', '101', '1.5'])('refuses --fio2 %s with exit 2, showing both forms', async (value) => {
      // Room air is 21 % (0.21) and no gas is above 100 % (common practice)
      const run = await runCommandLine(['gas', '--fio2', value, '--pao2', '8', '--paco2', '6', '--units', 'kPa']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('--fio2');
      expect(run.stderr).toContain('0.28');
      expect(run.stderr).toContain('28');
      expect(run.stderr).toContain('above 1 is read as a percentage');
    });
  });

  describe('values that cannot belong to one patient', () => {
    it('names --units mmHg when mmHg values are given with --units kPa', async () => {
      // PaCO2 40 "kPa" = 300 mmHg, above any PaCO2 the physiology accepts (5-200 mmHg, valid-ranges.ts)
      const run = await runCommandLine(['gas', '--fio2', '0.21', '--pao2', '95', '--paco2', '40', '--units', 'kPa']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('did you mean --units mmHg?');
      expect(run.stderr).not.toMatch(/^\s+at /m);
    });

    it('names --units kPa when kPa values are given with --units mmHg', async () => {
      // PaCO2 6.7 "mmHg" is below 10 mmHg, as a kPa value labelled mmHg reads (gas-consistency.ts, common practice)
      const run = await runCommandLine(['gas', '--fio2', '0.28', '--pao2', '8.1', '--paco2', '6.7', '--units', 'mmHg']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('did you mean --units kPa?');
    });

    it('names a PaO2 in mmHg given as kPa, above the alveolar PO2 on air', async () => {
      // PaO2 90 "kPa" = 675 mmHg; on air at 760 mmHg with PaCO2 5.3 kPa PAO2 is about 100 mmHg
      // (check-values 3a, derived), and PaO2 cannot exceed PAO2 (common practice)
      const run = await runCommandLine(['gas', '--fio2', '0.21', '--pao2', '90', '--paco2', '5.3', '--units', 'kPa']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('above the alveolar PO2');
    });

    it('refuses a negative alveolar PO2 with exit 2, naming the FiO2 and the unit as the likely slips', async () => {
      // 0.21 x (760 - 47) - 130/0.8 = -12.8 mmHg (alveolar gas equation, check-values 3a, derived)
      const run = await runCommandLine(['gas', '--fio2', '0.21', '--pao2', '60', '--paco2', '130', '--units', 'mmHg']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('alveolar PO2 would be -12.8 mmHg');
      expect(run.stderr).toContain('FiO2');
      expect(run.stderr).toContain('--units mmHg');
    });

    it('refuses a PaO2 above the alveolar PO2 at the stated FiO2, asking whether more oxygen is given', async () => {
      // PAO2 on air at 760 mmHg and PaCO2 40 mmHg is 99.7 mmHg (check-values 3a); PaO2 150 cannot be on air
      const run = await runCommandLine(['gas', '--fio2', '0.21', '--pao2', '150', '--paco2', '40', '--units', 'mmHg']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('PaO2 150.0 mmHg is above the alveolar PO2 99.7 mmHg');
      expect(run.stderr).toContain('more oxygen than 0.21');
    });

    it('never ends in a stack trace: any numbers give a result or a usage error', async () => {
      const pressure = fc.double({ min: 0.01, max: 1000, noNaN: true });
      await fc.assert(
        fc.asyncProperty(
          fc.double({ min: 0.21, max: 1, noNaN: true }),
          pressure,
          pressure,
          fc.constantFrom('kPa', 'mmHg'),
          async (fio2, pao2, paco2, units) => {
            const args = ['gas', '--fio2', String(fio2), '--pao2', String(pao2), '--paco2', String(paco2), '--units', units, '--age', '50', '--json'];
            const run = await runCommandLine(args);
            expect([0, 2]).toContain(run.code);
            if (run.code === 0) {
              const out = JSON.parse(run.stdout);
              // What passes is physiologically possible: PAO2 >= 1 mmHg and PaO2 at most 10 mmHg above it
              expect(out.alveolarPO2MmHg).toBeGreaterThanOrEqual(1);
              expect(out.aaGradientMmHg).toBeGreaterThanOrEqual(-10);
            } else {
              expect(run.stderr).toContain('oxygen-order-checker gas:');
            }
          },
        ),
        { numRuns: 80 },
      );
    });
  });

  describe('barometric pressure', () => {
    it('uses the site altitude of a policy given with --policy', async () => {
      const path = policyWithSite('altitude-1500', '  altitudeM: 1500\n');
      const run = await runCommandLine(['gas', '--fio2', '0.21', '--pao2', '60', '--paco2', '40', '--units', 'mmHg', '--policy', path, '--json']);
      expect(run.code).toBe(0);
      const out = JSON.parse(run.stdout);
      // ISA 1500 m: 634.2 mmHg (check-values 3b); PAO2 0.21 x (634.2 - 47) - 40/0.8 = 73.3 (3a, derived)
      expect(out.barometricPressureMmHg).toBeCloseTo(634.2, 1);
      expect(out.barometricPressureSource).toBe('policy');
      expect(out.alveolarPO2MmHg).toBeCloseTo(73.3, 1);
    });

    it('uses a measured site pressure from the policy over its altitude', async () => {
      const path = policyWithSite('measured', '  altitudeM: 1500\n  barometricPressure: { value: 700, unit: "mm[Hg]" }\n');
      const run = await runCommandLine(['gas', '--fio2', '0.21', '--pao2', '60', '--paco2', '40', '--units', 'mmHg', '--policy', path, '--json']);
      const out = JSON.parse(run.stdout);
      expect(out.barometricPressureMmHg).toBe(700);
      // PAO2 0.21 x (700 - 47) - 40/0.8 = 87.1 mmHg (alveolar gas equation, check-values 3a, derived)
      expect(out.alveolarPO2MmHg).toBeCloseTo(87.1, 1);
    });

    it('lets --altitude-m or --pb-mmhg on the command line win over the policy', async () => {
      const path = policyWithSite('altitude-1500b', '  altitudeM: 1500\n');
      const base = ['gas', '--fio2', '0.21', '--pao2', '60', '--paco2', '40', '--units', 'mmHg', '--policy', path, '--json'];
      const byAltitude = JSON.parse((await runCommandLine([...base, '--altitude-m', '0'])).stdout);
      const byPressure = JSON.parse((await runCommandLine([...base, '--pb-mmhg', '750'])).stdout);
      // ISA 0 m: 760.0 mmHg (check-values 3b)
      expect(byAltitude.barometricPressureMmHg).toBeCloseTo(760, 1);
      expect(byAltitude.barometricPressureSource).toBe('command line');
      expect(byPressure.barometricPressureMmHg).toBe(750);
    });

    it('stays at the ISA sea-level pressure without --policy', async () => {
      const run = await runCommandLine(['gas', '--fio2', '0.21', '--pao2', '90', '--paco2', '40', '--units', 'mmHg', '--json']);
      const out = JSON.parse(run.stdout);
      // ISA 0 m: 760.0 mmHg (check-values 3b)
      expect(out.barometricPressureMmHg).toBeCloseTo(760, 1);
      expect(out.barometricPressureSource).toBe('default sea level');
    });
  });
});
