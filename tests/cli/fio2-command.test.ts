import { describe, expect, it } from 'vitest';
import { runCommandLine } from './cli-harness.js';

describe('oxygen-order-checker fio2', () => {
  it('gives a Venturi 28 % at 4 L/min its entrainment ratio and total flow as JSON', async () => {
    const run = await runCommandLine(['fio2', '--device', 'venturi-mask', '--setting', '28', '--flow', '4', '--json']);
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    // Air entrainment ratio (100 - 28)/(28 - 21) = 10.3:1 and total flow 4 x 11.3 = 45.1 L/min
    // (check-values 2b: mass balance, derived).
    expect(out.entrainmentRatio).toBeCloseTo(10.29, 2);
    expect(out.totalFlowLPerMin).toBeCloseTo(45.1, 1);
    // BTS 2017 Table 4: 4 L/min is the minimum flow for the 28 % setting.
    expect(out.minimumFlowLPerMin).toBe(4);
    expect(Object.keys(out.fio2).sort()).toStrictEqual(['estimate', 'high', 'low']);
    expect(out.fio2.low).toBeLessThanOrEqual(out.fio2.estimate);
    expect(out.fio2.high).toBeGreaterThanOrEqual(out.fio2.estimate);
  });

  it('estimates a 2 L/min nasal cannula near the rule-of-4 value of 0.28', async () => {
    const run = await runCommandLine(['fio2', '--device', 'nasal-cannula', '--flow', '2', '--resp-rate', '20', '--json']);
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    // FiO2 about 0.20 + 0.04 x 2 L/min = 0.28, +/- 0.05 (check-values 2a: common practice, FCCS table).
    expect(out.fio2.estimate).toBeGreaterThanOrEqual(0.23);
    expect(out.fio2.estimate).toBeLessThanOrEqual(0.33);
    expect(out.notes.length).toBeGreaterThan(0);
  });

  it('prints a readable summary by default', async () => {
    const run = await runCommandLine(['fio2', '--device', 'simple-face-mask', '--flow', '6']);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/^Simple face mask: estimated FiO2 0\.\d\d \(range 0\.\d\d-0\.\d\d\)/);
    expect(run.stdout).toContain('Advisory');
  });

  describe('the setting as a fraction or a percentage', () => {
    it.each([
      ['venturi-mask', '28', '0.28', ['--flow', '4']],
      ['venturi-mask', '60', '0.6', ['--flow', '15']],
      ['high-flow-nasal-cannula', '40', '0.4', ['--flow', '50']],
    ] as const)('reads %s --setting %s the same as %s: a number above 1 is a percentage', async (device, percent, fraction, extra) => {
      const asPercent = await runCommandLine(['fio2', '--device', device, '--setting', percent, ...extra, '--json']);
      const asFraction = await runCommandLine(['fio2', '--device', device, '--setting', fraction, ...extra, '--json']);
      expect(asPercent.code).toBe(0);
      expect(JSON.parse(asPercent.stdout)).toStrictEqual(JSON.parse(asFraction.stdout));
      expect(JSON.parse(asPercent.stdout).input.setFio2Fraction).toBe(Number(fraction));
    });

    it.each(['5', '0.1', '120'])('refuses --setting %s with exit 2, showing both forms', async (value) => {
      // Room air is 21 % (0.21) and no gas is above 100 % (common practice)
      const run = await runCommandLine(['fio2', '--device', 'venturi-mask', '--setting', value, '--flow', '4']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('--setting');
      expect(run.stderr).toContain('0.28');
      expect(run.stderr).toContain('(e.g. 28)');
    });
  });

  describe('edge cases', () => {
    it('refuses an unknown device kind with exit 2 and the list of kinds', async () => {
      const run = await runCommandLine(['fio2', '--device', 'nose-tube', '--flow', '2']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('--device');
      expect(run.stderr).toContain('nasal-cannula');
    });

    it('refuses a flow that is not a number with exit 2 naming the option', async () => {
      const run = await runCommandLine(['fio2', '--device', 'nasal-cannula', '--flow', 'two']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('--flow: must be a number');
    });

    it('refuses an unknown option with exit 2', async () => {
      const run = await runCommandLine(['fio2', '--device', 'nasal-cannula', '--litres', '2']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain("unknown option '--litres'; the options are --device, --flow, --setting, --resp-rate, --json, --help");
    });

    it('says what is missing, with exit 1, when a Venturi mask has no setting', async () => {
      const run = await runCommandLine(['fio2', '--device', 'venturi-mask', '--flow', '4', '--json']);
      expect(run.code).toBe(1);
      const out = JSON.parse(run.stdout);
      expect(out.fio2).toBeNull();
      expect(typeof out.reason).toBe('string');
    });
  });
});
