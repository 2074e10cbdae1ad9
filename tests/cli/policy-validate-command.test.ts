import { createHash } from 'node:crypto';
import { mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { policyWith } from '../policy/support/policy-sections.js';
import { runCommandLine } from './cli-harness.js';

const bundled = (name: string): string => new URL(`../../policies/${name}`, import.meta.url).pathname;

describe('oxygen-order-checker policy validate', () => {
  it('accepts the TSANZ 2015 preset and shows its ranges', async () => {
    const run = await runCommandLine(['policy', 'validate', bundled('based-on-tsanz-2015.yaml')]);
    expect(run.code).toBe(0);
    // TSANZ 2015: 92-96 % for most patients, 88-92 % for CO2 retainers.
    expect(run.stdout).toContain('standard target 92-96 %');
    expect(run.stdout).toContain('at risk of hypercapnia 88-92 %');
    // The hash cards carry: the first 12 hex characters of the sha256 of the file's bytes.
    const hash = createHash('sha256').update(readFileSync(bundled('based-on-tsanz-2015.yaml'))).digest('hex');
    expect(run.stdout).toContain(`content hash ${hash.slice(0, 12)}`);
  });

  it('still answers to its old name, validate-policy, with a note naming the new one', async () => {
    const file = bundled('based-on-tsanz-2015.yaml');
    const [old, current] = [await runCommandLine(['validate-policy', file]), await runCommandLine(['policy', 'validate', file])];
    expect(old.code).toBe(0);
    expect(old.stdout).toBe(current.stdout);
    expect(old.stderr).toBe("oxygen-order-checker: note: 'validate-policy' is now 'policy validate'; the old name still works for now.\n");
    expect(current.stderr).toBe('');
  });

  it('checks the card-wording folder as the service does: a local card for no rule exits 2 naming that file', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'larkspur-wording-'));
    mkdirSync(join(dir, 'larkspur-cards'));
    // An invented local card named after a rule id that does not exist (a typing slip).
    writeFileSync(join(dir, 'larkspur-cards', 'spo2-abvoe-target.yaml'), 'summary: "x"\ndetail: "y"\noverrideReasons:\n  - { code: other, display: Other }\n');
    const policy = join(dir, 'policy.yaml');
    writeFileSync(policy, readFileSync(bundled('based-on-bts-2017.yaml'), 'utf8').replace('cardWording: {}', 'cardWording: { folder: ./larkspur-cards }'));
    const run = await runCommandLine(['policy', 'validate', policy]);
    expect(run.code).toBe(2);
    expect(run.stdout).toContain(`${policy}: not valid with its cards: 1 error`);
    expect(run.stdout).toContain('spo2-abvoe-target.yaml');
  });

  it('notes a policy not yet in effect, as the service warns at start, and still accepts it', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'larkspur-early-'));
    const policy = join(dir, 'policy.yaml');
    // An invented next version the committee means to apply from 4 January 2027.
    writeFileSync(policy, readFileSync(bundled('based-on-bts-2017.yaml'), 'utf8').replace(/^effectiveFrom: .*$/m, 'effectiveFrom: 2027-01-04'));
    const early = await runCommandLine(['policy', 'validate', policy], new Date('2026-12-20T09:00:00Z'));
    expect(early.code).toBe(0);
    expect(early.stdout).toMatch(/\n {2}note: .*2027-01-04/);
    const inForce = await runCommandLine(['policy', 'validate', policy], new Date('2027-01-05T09:00:00Z'));
    expect(inForce.stdout).not.toContain('note:');
  });

  it('exits 1 when the file cannot be read, and 2 without exactly one FILE', async () => {
    const missing = await runCommandLine(['policy', 'validate', join(tmpdir(), 'no-such-policy-file.yaml')]);
    expect(missing.code).toBe(1);
    expect(missing.stderr).toContain('cannot read');
    expect((await runCommandLine(['policy', 'validate'])).code).toBe(2);
    const two = await runCommandLine(['policy', 'validate', 'a.yaml', 'b.yaml']);
    expect(two.code).toBe(2);
    expect(two.stderr).toContain('oxygen-order-checker policy validate: give exactly one policy FILE');
  });

  it('lists every problem of an invalid file with its path and exits 2', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-policy-'));
    const file = join(dir, 'typo.yaml');
    const text = readFileSync(bundled('based-on-bts-2017.yaml'), 'utf8')
      .replace('lowPercent: 94', 'lowPercent: 99')
      .replace('criticalSpo2BelowPercent', 'criticalSpo2Below');
    writeFileSync(file, text);
    const run = await runCommandLine(['policy', 'validate', file]);
    expect(run.code).toBe(2);
    expect(run.stdout).toContain(': not valid: 3 errors, 0 warnings');
    expect(run.stdout).toContain('targets.standard: the range 99–98 % is not ordered: lowPercent must be below highPercent');
    expect(run.stdout).toContain('thresholds.criticalSpo2BelowPercent: is missing');
    expect(run.stdout).toContain("thresholds.criticalSpo2Below: unknown key 'criticalSpo2Below'");
    expect(run.stdout).toContain("fix: did you mean 'criticalSpo2BelowPercent'?");
  });

  it('refuses the dangerous file a new user tried, every problem with its line and column, and exits 2', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-policy-'));
    const file = join(dir, 'larkspur-bay.yaml');
    writeFileSync(
      file,
      policyWith(
        [
          'targets:',
          '  standard: { lowPercent: 80, highPercent: 100 }',
          '  hypercapnicRisk: { lowPercent: 96, highPercent: 99 }',
          '  oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }', // BTS 2017, Table 3 (V2)
          'severity: { acute-hypercapnic-acidosis: info }',
          'disabledRules: [news2-scale2]',
        ],
        'targets',
        'severity',
        'disabledRules',
      ),
    );
    const run = await runCommandLine(['policy', 'validate', file]);
    expect(run.code).toBe(2);
    // Lines counted by hand from the six lines written; the critical threshold is on line 30 (header
    // 7-11, site 12-14, hypercapnicRisk 15-19, freshness 20-24, thresholds from 25, its 6th line).
    expect(run.stdout).toContain(`${file}: not valid: 4 errors, 0 warnings`);
    expect(run.stdout).toContain(`${file}:3:3: error: targets.hypercapnicRisk: the at-risk range 96–99 %`);
    expect(run.stdout).toContain(`${file}:5:13: error: severity.acute-hypercapnic-acidosis:`);
    expect(run.stdout).toContain(`${file}:6:17: error: disabledRules.0: 'news2-scale2' is not a rule id`);
    expect(run.stdout).toContain("    fix: did you mean 'news2-scale-2'?");
    expect(run.stdout).toContain(`${file}:30:3: error: thresholds.criticalSpo2BelowPercent:`);
  });

  it('accepts a file with warnings and an acknowledgement, shows both, and exits 0', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-policy-'));
    const file = join(dir, 'larkspur-bay.yaml');
    writeFileSync(
      file,
      policyWith(
        [
          'hypercapnicRisk:',
          '  conditions: [copd, pregnancy]', // BTS 2017 Table 4 lists COPD, not pregnancy
          '  hypercapniaPaco2AtLeast: { value: 6.0, unit: kPa }', // BTS 2017 clarification
          '  chronicBicarbonateAboveMmolPerL: 28', // BTS 2017 (V2)
          '  morbidObesityBmiAbove: 40', // BTS 2017 Table 4 (V2)
          'disabledRules: [escalated-support-failing]',
          'acknowledgements:',
          '  - { ruleId: escalated-support-failing, change: disabled, reason: "Critical care outreach reviews every patient on high flow hourly", by: Oxygen committee }',
        ],
        'hypercapnicRisk',
        'disabledRules',
      ),
    );
    const run = await runCommandLine(['policy', 'validate', file]);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain(`${file}: valid: larkspur-bay-test v1.0.0 (Larkspur Bay General Hospital test policy), 1 warning`);
    expect(run.stdout).toContain(
      '  acknowledged: escalated-support-failing disabled: Critical care outreach reviews every patient on high flow hourly; by Oxygen committee',
    );
    // '  conditions: [copd, ' is 21 characters: pregnancy at column 22
    expect(run.stdout).toContain(`${file}:2:22: warning: hypercapnicRisk.conditions.1: 'pregnancy' is not known`);
  });
});
