import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { expectConformant } from '../helpers/card-conformance.js';
import { examplePath, runCommandLine } from './cli-harness.js';

interface Card {
  summary: string;
  indicator: string;
  detail?: string;
  source: { label: string; topic?: { code: string } };
  suggestions?: { actions?: { type: string; resource?: Record<string, unknown> }[] }[];
}

const ruleOf = (card: Card): string | undefined => card.source.topic?.code;

describe('oxygen-order-checker evaluate', () => {
  it('answers the kyphoscoliosis request as the service would, with a one-click target change', async () => {
    const run = await runCommandLine(['evaluate', examplePath('order-sign-kyphoscoliosis-standard-target')]);
    expect(run.code).toBe(0);
    const response = JSON.parse(run.stdout) as { cards: Card[] };
    expectConformant(response);
    const target = response.cards.find((card) => ruleOf(card) === 'target-above-hypercapnic-range');
    expect(target).toBeDefined();
    // BTS 2017, Table 4: chest wall deformity (kyphoscoliosis) puts the patient at risk: 88-92 %.
    expect(target?.summary).toContain('88–92 %');
    const update = target?.suggestions?.[0]?.actions?.[0];
    expect(update?.type).toBe('update');
    expect(update?.resource?.['id']).toBe('o2-order-0001');
    expect(update?.resource?.['patientInstruction']).toBe('Oxygen 3 L/min via nasal cannula, target SpO2 88-92%');
    // BTS 2017, Tables 2-4: repeat the blood gas 30-60 minutes after a change in an at-risk patient.
    const repeat = response.cards.find((card) => ruleOf(card) === 'repeat-blood-gas-due');
    expect(repeat?.summary).toContain('30–60 min');
    // Nasal cannula at 3 L/min: FiO2 about 0.32 (rule of 4, check-values 2a: common practice).
    expect(target?.detail).toMatch(/Delivered FiO2 \(estimate\): .* → \*\*0\.32 /);
    expect(run.stderr).toContain('evaluated as at 2026-11-30T09:40:00.000Z');
  });

  it('prints each card with its full workings with --workings, in the site time zone', async () => {
    const run = await runCommandLine(['evaluate', examplePath('order-sign-kyphoscoliosis-standard-target'), '--workings']);
    expect(run.code).toBe(0);
    const cards = run.stdout.split('\n---\n');
    expect(cards.length).toBeGreaterThan(1);
    for (const card of cards) {
      expect(card).toMatch(/^\n?## \d+\. \[(critical|warning|info)\] /);
      expect(card).toContain('### Full workings');
      expect(card).toContain('**Inputs used**');
      expect(card).toContain('**Cautions**');
    }
    // The example's SpO2 at 09:20 UTC on 30 Nov 2026 is 09:20 GMT in Europe/London (tzdata), 20 min
    // before the order was signed at 09:40.
    expect(run.stdout).toMatch(/- SpO2 \d+ % at 09:20 \(20 min ago\) \(Observation\//);
  });

  it('evaluates at --now when given, so stale data is treated as stale', async () => {
    const run = await runCommandLine([
      'evaluate',
      examplePath('order-sign-kyphoscoliosis-standard-target'),
      '--now',
      '2026-12-02T09:40:00Z',
    ]);
    expect(run.code).toBe(0);
    const response = JSON.parse(run.stdout) as { cards: Card[] };
    expectConformant(response);
    // Two days later the SpO2 is outside the bundled 240-minute window (policies/based-on-bts-2017.yaml).
    expect(response.cards.map(ruleOf)).toContain('no-recent-spo2');
  });

  it('applies another policy file given with --policy', async () => {
    const policy = new URL('../../policies/based-on-tsanz-2015.yaml', import.meta.url).pathname;
    const run = await runCommandLine(['evaluate', examplePath('order-sign-face-mask-no-target'), '--policy', policy]);
    expect(run.code).toBe(0);
    const response = JSON.parse(run.stdout) as { cards: Card[] };
    const missing = response.cards.find((card) => ruleOf(card) === 'target-range-missing');
    // TSANZ 2015 (Respirology 20:1182): 92-96 % for most acute medical patients.
    expect(missing?.summary).toContain('92–96 %');
  });

  describe('the policy content hash on the source label', () => {
    const bundled = new URL('../../policies/based-on-bts-2017.yaml', import.meta.url).pathname;
    // FIPS 180-4 SHA-256 of the exact bytes given, as node:crypto computes it; 12 hex characters shown.
    const shortHash = (bytes: Buffer): string => createHash('sha256').update(bytes).digest('hex').slice(0, 12);
    const labels = async (policy: string): Promise<string[]> => {
      const run = await runCommandLine(['evaluate', examplePath('order-sign-kyphoscoliosis-standard-target'), '--policy', policy]);
      expect(run.code).toBe(0);
      const cards = (JSON.parse(run.stdout) as { cards: Card[] }).cards;
      expect(cards.length).toBeGreaterThan(0);
      return [...new Set(cards.map((card) => card.source.label))];
    };

    it('names the file it read by the first 12 hex characters of its sha256 on every card', async () => {
      expect(await labels(bundled)).toStrictEqual([
        `Adult acute oxygen targets based on BTS 2017 (based-on-bts-2017 v1.0.0 #${shortHash(readFileSync(bundled))}) · BTS 2017`,
      ]);
    });

    it('tells apart two files with the same id and version that differ by one byte', async () => {
      const bytes = readFileSync(bundled);
      const edited = Buffer.concat([bytes, Buffer.from('\n')]);
      const copy = join(mkdtempSync(join(tmpdir(), 'oxygen-order-checker-hash-')), 'bts-2017-edited.yaml');
      writeFileSync(copy, edited);
      const [original, changed] = [await labels(bundled), await labels(copy)];
      expect(changed).toHaveLength(1);
      expect(changed[0]).toContain(`(based-on-bts-2017 v1.0.0 #${shortHash(edited)})`);
      expect(changed).not.toStrictEqual(original);
    });
  });

  describe('edge cases', () => {
    const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-evaluate-'));

    it('prints the 412 OperationOutcome and exits 1 when required prefetch is missing', async () => {
      const body = JSON.parse(
        (await import('node:fs')).readFileSync(examplePath('order-sign-face-mask-no-target'), 'utf8'),
      ) as { prefetch: Record<string, unknown> };
      delete body.prefetch['observations'];
      const file = join(dir, 'no-observations.json');
      writeFileSync(file, JSON.stringify(body));
      const run = await runCommandLine(['evaluate', file]);
      expect(run.code).toBe(1);
      const outcome = JSON.parse(run.stdout);
      expect(outcome.resourceType).toBe('OperationOutcome');
      expect(outcome.issue[0].diagnostics).toContain("'observations'");
    });

    it('names the invalid field and exits 1 for a request without hookInstance', async () => {
      const file = join(dir, 'no-hook-instance.json');
      writeFileSync(file, JSON.stringify({ hook: 'order-sign', context: {} }));
      const run = await runCommandLine(['evaluate', file]);
      expect(run.code).toBe(1);
      expect(run.stderr).toContain('hookInstance');
    });

    it('exits 1 for a file that is not JSON', async () => {
      const file = join(dir, 'not-json.json');
      writeFileSync(file, '{ "hook": ');
      const run = await runCommandLine(['evaluate', file]);
      expect(run.code).toBe(1);
      // '{ "hook": ' is 10 characters: the value is missing at column 11.
      expect(run.stderr).toContain(`${file}:1:11: not valid JSON: expected a value, but the file ends`);
    });

    it('exits 2 for an invalid policy file, listing its problems', async () => {
      const file = join(dir, 'bad-policy.yaml');
      writeFileSync(file, 'format: 1\nid: Bad Id\n');
      const run = await runCommandLine(['evaluate', examplePath('order-sign-face-mask-no-target'), '--policy', file]);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('id');
      expect(run.stderr).toContain('targets');
    });

    it('exits 2 without a request file', async () => {
      const run = await runCommandLine(['evaluate']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('REQUEST.json');
    });
  });
});
