import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCommandLine } from './cli-harness.js';

const bundled = (name: string): string => new URL(`../../policies/${name}`, import.meta.url).pathname;
const BTS = bundled('based-on-bts-2017.yaml');
const TSANZ = bundled('based-on-tsanz-2015.yaml');
const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-diff-'));

function write(name: string, text: string): string {
  const file = join(dir, name);
  writeFileSync(file, text);
  return file;
}

const sha = (file: string): string => createHash('sha256').update(readFileSync(file)).digest('hex');

describe('oxygen-order-checker policy diff', () => {
  it('compares the two presets in clinical terms, grouped by heading, and exits 0', async () => {
    const run = await runCommandLine(['policy', 'diff', BTS, TSANZ]);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain(`Policy changes from based-on-bts-2017 v1.0.0 #${sha(BTS).slice(0, 12)} to based-on-tsanz-2015 v1.0.0 #${sha(TSANZ).slice(0, 12)}`);
    // BTS 2017 Tables 1-3: 94-98 %; TSANZ 2015: 92-96 %.
    expect(run.stdout).toContain('Target ranges\n  standard target (patients not at risk of hypercapnia): 94–98 % → 92–96 % (both bounds 2 points lower)\n');
    expect(run.stdout).toContain('Rules and indicators\n  switched off: news2-scale-2 (its cards: info by default)\n');
    // policies/based-on-tsanz-2015.yaml clinicalBasis: TSANZ 2015 primary; the rules it lists keep citing BTS 2017.
    expect(run.stdout).toContain("What the cards cite\n  guideline no longer followed: 'rcp-news2-2017' (NEWS2 (RCP 2017))\n");
    expect(run.stdout).toMatch(/\n {2}the cards of \d+ rules now cite TSANZ 2015 instead of BTS 2017: .*spo2-above-target/);
    expect(run.stdout).not.toMatch(/now cite TSANZ 2015 instead of BTS 2017: .*pneumothorax-oxygen/); // BTS 2017, Table 2: cited in both
    expect(run.stdout).not.toContain('Other changes');
    expect(run.stdout).toContain('6 changes besides the identity.');
  });

  it('gives the same changes as JSON with --json', async () => {
    const run = await runCommandLine(['policy', 'diff', BTS, TSANZ, '--json']);
    expect(run.code).toBe(0);
    const diff = JSON.parse(run.stdout) as { clinicalChange: boolean; old: { contentHash: string }; changes: { path: string; old: unknown; new: unknown }[] };
    expect(diff.clinicalChange).toBe(true);
    expect(diff.old.contentHash).toBe(sha(BTS));
    // BTS 2017 Tables 1-3 against TSANZ 2015.
    expect(diff.changes.find((c) => c.path === 'targets.standard')).toMatchObject({
      old: { lowPercent: 94, highPercent: 98 },
      new: { lowPercent: 92, highPercent: 96 },
    });
  });

  it('reports no clinical change for a copy with other comments, yet tells the two files apart by their hash', async () => {
    const copy = write('recommented.yaml', `# Reviewed by the Larkspur Bay oxygen committee\n${readFileSync(BTS, 'utf8')}`);
    const run = await runCommandLine(['policy', 'diff', BTS, copy]);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain(`content hash: ${sha(BTS).slice(0, 12)} → ${sha(copy).slice(0, 12)}`);
    expect(run.stdout).toContain('\nNo clinical change.\n');
    const json = JSON.parse((await runCommandLine(['policy', 'diff', BTS, copy, '--json'])).stdout) as { clinicalChange: boolean };
    expect(json.clinicalChange).toBe(false);
  });

  it('exits 2 when either file is not valid, listing its problems, and compares nothing', async () => {
    const broken = write('broken.yaml', readFileSync(BTS, 'utf8').replace('lowPercent: 94', 'lowPercent: 99'));
    for (const argv of [[BTS, broken], [broken, BTS]]) {
      const run = await runCommandLine(['policy', 'diff', ...argv]);
      expect(run.code).toBe(2);
      expect(run.stdout).toBe('');
      expect(run.stderr).toContain(`${broken}: not valid: 1 error, 0 warnings`);
      expect(run.stderr).toMatch(new RegExp(`${broken}:\\d+:\\d+: error: targets.standard: the range 99–98 % is not ordered`));
    }
  });

  it('exits 1 when a file cannot be read, and 2 without two files', async () => {
    const missing = await runCommandLine(['policy', 'diff', BTS, join(dir, 'missing.yaml')]);
    expect(missing.code).toBe(1);
    expect(missing.stderr).toContain(`cannot read ${join(dir, 'missing.yaml')}`);
    const one = await runCommandLine(['policy', 'diff', BTS]);
    expect(one.code).toBe(2);
    expect(one.stderr).toContain('give two policy files: OLD then NEW');
  });
});
