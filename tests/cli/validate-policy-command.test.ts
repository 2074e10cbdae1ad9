import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runO2check } from './cli-harness.js';

const bundled = (name: string): string => new URL(`../../policies/${name}`, import.meta.url).pathname;

describe('o2check validate-policy', () => {
  it('accepts the TSANZ 2015 preset and shows its ranges', async () => {
    const run = await runO2check(['validate-policy', bundled('tsanz-2015.yaml')]);
    expect(run.code).toBe(0);
    // TSANZ 2015: 92-96 % for most patients, 88-92 % for CO2 retainers.
    expect(run.stdout).toContain('standard target 92-96 %');
    expect(run.stdout).toContain('at risk of hypercapnia 88-92 %');
  });

  it('lists every problem of an invalid file with its path and exits 1', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'o2check-policy-'));
    const file = join(dir, 'typo.yaml');
    const text = (await import('node:fs'))
      .readFileSync(bundled('bts-2017.yaml'), 'utf8')
      .replace('lowPercent: 94', 'lowPercent: 99')
      .replace('criticalSpo2BelowPercent', 'criticalSpo2Below');
    writeFileSync(file, text);
    const run = await runO2check(['validate-policy', file]);
    expect(run.code).toBe(1);
    expect(run.stdout).toContain(': not valid: 3 errors, 0 warnings');
    expect(run.stdout).toContain('targets.standard: the range 99–98 % is not ordered: lowPercent must be below highPercent');
    expect(run.stdout).toContain('thresholds.criticalSpo2BelowPercent: is missing');
    expect(run.stdout).toContain("thresholds.criticalSpo2Below: unknown key 'criticalSpo2Below'");
    expect(run.stdout).toContain("fix: did you mean 'criticalSpo2BelowPercent'?");
  });
});
