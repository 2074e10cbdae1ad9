import { createHash } from 'node:crypto';
import { cpSync, mkdtempSync, readFileSync, rmSync, unlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ENV_DEFAULTS } from '../../src/config/env-config.js';
import { formatLoadProblems, loadPolicyAndCards } from '../../src/config/load-files.js';
import { RULES } from '../../src/core/rules/index.js';

const scratch = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-load-'));

afterAll(() => {
  rmSync(scratch, { recursive: true, force: true });
});

/** A copy of the bundled cards folder that a test may break. */
function copyOfCards(name: string): string {
  const dir = join(scratch, name);
  cpSync(ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR, dir, { recursive: true });
  return dir;
}

describe('loadPolicyAndCards', () => {
  it('loads the bundled policy and a template for every registered rule', async () => {
    const files = await loadPolicyAndCards({
      policyPath: ENV_DEFAULTS.OXYGEN_CHECKER_POLICY,
      cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR,
    });
    expect(files.kind).toBe('ok');
    if (files.kind !== 'ok') return;
    expect([files.policy.id, files.policy.version]).toStrictEqual(['based-on-bts-2017', '1.0.0']);
    // BTS 2017 Table 4: the bundled default's hypercapnic-risk target
    expect(files.policy.targets.hypercapnicRisk).toStrictEqual({ lowPercent: 88, highPercent: 92 });
    expect([...files.templates.keys()].sort()).toStrictEqual(RULES.map((rule) => rule.id).sort());
  });

  it('carries the sha256 of the policy file bytes, so a one-byte change gives another hash', async () => {
    const policyPath = join(scratch, 'local-policy.yaml');
    const bytes = readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY);
    writeFileSync(policyPath, bytes);
    const same = await loadPolicyAndCards({ policyPath, cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR });
    // FIPS 180-4 SHA-256 as node:crypto computes it, over the file as read
    expect(same.kind === 'ok' && same.policyContentHash).toBe(createHash('sha256').update(bytes).digest('hex'));
    writeFileSync(policyPath, Buffer.concat([bytes, Buffer.from('\n')]));
    const edited = await loadPolicyAndCards({ policyPath, cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR });
    expect(edited.kind === 'ok' && edited.policyContentHash).toMatch(/^[0-9a-f]{64}$/);
    expect(edited.kind === 'ok' && same.kind === 'ok' && edited.policyContentHash !== same.policyContentHash).toBe(true);
  });

  it('lists every problem in every file: policy, broken template, misnamed file, missing template', async () => {
    const cardsDir = copyOfCards('broken');
    const [first, second] = RULES.map((rule) => rule.id);
    if (first === undefined || second === undefined) throw new Error('expected at least two rules');
    writeFileSync(join(cardsDir, `${first}.yaml`), 'summary: ""\ndetail: text\nsumary: typo\n');
    unlinkSync(join(cardsDir, `${second}.yaml`));
    writeFileSync(join(cardsDir, 'Not_Kebab.yaml'), readFileSync(join(ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR, `${first}.yaml`)));
    const policyPath = join(scratch, 'broken-policy.yaml');
    writeFileSync(
      policyPath,
      readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY, 'utf8').replace('basis: bts-2017', 'basis: nowhere'),
    );

    const files = await loadPolicyAndCards({ policyPath, cardsDir });
    expect(files.kind).toBe('invalid');
    if (files.kind !== 'invalid') return;
    const where = files.problems.map((p) => `${p.file.replace(scratch, '')} ${p.path}`);
    expect(where).toContain('/broken-policy.yaml basis');
    expect(where).toContain(`/broken/${first}.yaml summary`);
    expect(where).toContain(`/broken/${first}.yaml (root)`);
    expect(where).toContain(`/broken/${first}.yaml overrideReasons`);
    expect(where).toContain('/broken/Not_Kebab.yaml (file)');
    expect(where).toContain(`/broken/${second}.yaml (file)`);
    expect(files.problems.find((p) => p.file.endsWith(`${second}.yaml`))?.message).toBe(
      `is missing: rule '${second}' has no card template`,
    );
  });

  describe('edge cases', () => {
    it('names an unreadable policy file by its error code', async () => {
      const policyPath = join(scratch, 'absent.yaml');
      const files = await loadPolicyAndCards({ policyPath, cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR });
      expect(files).toStrictEqual({
        kind: 'invalid',
        problems: [{ file: policyPath, path: '(file)', message: 'cannot be read (ENOENT)' }],
      });
    });

    it('reports a missing cards folder once, not once per rule', async () => {
      const cardsDir = join(scratch, 'no-such-folder');
      const files = await loadPolicyAndCards({ policyPath: ENV_DEFAULTS.OXYGEN_CHECKER_POLICY, cardsDir });
      expect(files).toStrictEqual({
        kind: 'invalid',
        problems: [{ file: cardsDir, path: '(file)', message: 'cannot be read (ENOENT)' }],
      });
    });

    it('returns the policy warnings and acknowledgements, which do not stop the load', async () => {
      const policyPath = join(scratch, 'acknowledged-policy.yaml');
      writeFileSync(
        policyPath,
        readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY, 'utf8')
          .replace('    - copd\n', '    - copd\n    - pregnancy\n') // BTS 2017 Table 4 does not list pregnancy
          .replace('disabledRules: []', 'disabledRules: [acute-hypercapnic-acidosis]')
          .replace(
            /^acknowledgements: \[\].*$/m,
            'acknowledgements: [{ ruleId: acute-hypercapnic-acidosis, change: disabled, reason: "Every gas is reviewed by outreach at once" }]',
          ),
      );
      const files = await loadPolicyAndCards({ policyPath, cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR });
      expect(files.kind).toBe('ok');
      if (files.kind !== 'ok') return;
      expect(files.policyAcknowledgements).toStrictEqual([
        { ruleId: 'acute-hypercapnic-acidosis', change: 'disabled', reason: 'Every gas is reviewed by outreach at once' },
      ]);
      expect(files.policyWarnings.map((w) => [w.file, w.path])).toStrictEqual([[policyPath, 'hypercapnicRisk.conditions.1']]);
      expect(files.policy.disabledRules).toStrictEqual(['acute-hypercapnic-acidosis']);
    });

    it('refuses a policy that switches off a critical rule without an acknowledgement, at its line', async () => {
      const policyPath = join(scratch, 'unacknowledged-policy.yaml');
      const text = readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY, 'utf8').replace('disabledRules: []', 'disabledRules: [escalated-support-failing]');
      writeFileSync(policyPath, text);
      const files = await loadPolicyAndCards({ policyPath, cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR });
      expect(files.kind).toBe('invalid');
      if (files.kind !== 'invalid') return;
      // The line of `disabledRules:` in the bundled file, read from the text (the file is not ours to pin).
      const line = text.split('\n').findIndex((l) => l.startsWith('disabledRules:')) + 1;
      expect(files.problems.map((p) => [p.path, p.line, p.column])).toStrictEqual([['disabledRules.0', line, 17]]);
      expect(formatLoadProblems(files.problems)).toMatch(
        new RegExp(`^${policyPath}:${line}:17: disabledRules\\.0: 'escalated-support-failing' gives critical cards by default.*\\(fix: keep the rule`),
      );
    });

    it('formats problems one a line as file: path: message', () => {
      expect(
        formatLoadProblems([
          { file: '/etc/oxygen-order-checker/policy.yaml', path: 'basis', message: "'nowhere' is not a key of references" },
          { file: '/etc/oxygen-order-checker/cards/x.yaml', path: '(file)', message: 'cannot be read (EACCES)' },
        ]),
      ).toBe(
        "/etc/oxygen-order-checker/policy.yaml: basis: 'nowhere' is not a key of references\n" +
          '/etc/oxygen-order-checker/cards/x.yaml: (file): cannot be read (EACCES)',
      );
      expect(
        formatLoadProblems([
          { file: '/etc/oxygen-order-checker/policy.yaml', path: 'disabledRules.0', message: 'is wrong', fix: 'correct it', line: 80, column: 17 },
        ]),
      ).toBe('/etc/oxygen-order-checker/policy.yaml:80:17: disabledRules.0: is wrong (fix: correct it)');
    });
  });
});
