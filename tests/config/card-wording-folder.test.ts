import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ENV_DEFAULTS } from '../../src/config/env-config.js';
import { formatLoadProblems, loadPolicyAndCards } from '../../src/config/load-files.js';

/**
 * The policy's card-wording folder and override reasons, resolved at load time by the shell: a local
 * `<rule-id>.yaml` replaces the bundled card of that rule, relative to the policy file's own folder, and
 * every problem names the file and line.
 */

const scratch = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-wording-'));
afterAll(() => {
  rmSync(scratch, { recursive: true, force: true });
});

const bundledPolicy = readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY, 'utf8');
const bundledCard = (ruleId: string): string => readFileSync(join(ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR, `${ruleId}.yaml`), 'utf8');

/** A Larkspur Bay policy in its own folder, with local card files beside it in `larkspur-cards/`. */
function site(name: string, cards: Record<string, string>, policyEdit: (text: string) => string = (t) => t): string {
  const dir = join(scratch, name);
  mkdirSync(join(dir, 'larkspur-cards'), { recursive: true });
  for (const [file, text] of Object.entries(cards)) {
    writeFileSync(join(dir, 'larkspur-cards', file), text);
  }
  const policyPath = join(dir, 'larkspur-bay-oxygen.yaml');
  writeFileSync(policyPath, policyEdit(bundledPolicy.replace('cardWording: {}', 'cardWording: { folder: ./larkspur-cards }')));
  return policyPath;
}

const load = (policyPath: string) => loadPolicyAndCards({ policyPath, cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR });

describe('the card-wording folder', () => {
  it('replaces the bundled card of each rule it holds, and leaves the others', async () => {
    const reworded = bundledCard('spo2-above-target').replace('weaning it as the patient improves', 'stepping down with the Larkspur Bay weaning chart');
    const files = await load(site('good', { 'spo2-above-target.yaml': reworded }));
    expect(files.kind === 'invalid' ? formatLoadProblems(files.problems) : '').toBe('');
    if (files.kind !== 'ok') return;
    expect(files.templates.get('spo2-above-target')?.detail).toContain('Larkspur Bay weaning chart');
    const bundled = await load(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY);
    expect(bundled.kind === 'ok' && bundled.templates.get('spo2-below-target')).toStrictEqual(files.templates.get('spo2-below-target'));
    expect(bundled.kind === 'ok' && bundled.templates.get('spo2-above-target')?.detail).not.toContain('Larkspur Bay');
  });

  it('refuses every bad local file at once, each with its file, line and path', async () => {
    const unknownPlaceholder = bundledCard('target-range-missing').replace('{{advisedRange}}**', '{{advisedRnage}}**');
    const droppedSafety = bundledCard('oxygen-without-hypoxaemia')
      .replace(/This\s+is\s+never\s+a\s+reason\s+to\s+withhold\s+oxygen\s+from\s+a\s+patient/, 'Oxygen is still given to a patient')
      .replace(/^safetyStatements:.*\n/m, '');
    const policyPath = site('bad', {
      'spo2-above-targte.yaml': bundledCard('spo2-above-target'),
      'target-range-missing.yaml': unknownPlaceholder,
      'oxygen-without-hypoxaemia.yaml': droppedSafety,
    });
    const files = await load(policyPath);
    expect(files.kind).toBe('invalid');
    if (files.kind !== 'invalid') return;
    const dir = join(policyPath, '..', 'larkspur-cards');
    const text = formatLoadProblems(files.problems);
    expect(text).toContain(`${join(dir, 'spo2-above-targte.yaml')}:1:1: (file): 'spo2-above-targte' is not a rule id`);
    const placeholderLine = unknownPlaceholder.split('\n').findIndex((l) => l.includes('{{advisedRnage}}')) + 1;
    expect(text).toMatch(
      new RegExp(`${join(dir, 'target-range-missing.yaml').replace(/[.]/g, '\\.')}:${placeholderLine}:\\d+: detail: placeholder '\\{\\{advisedRnage\\}\\}' is not one`),
    );
    expect(files.problems).toHaveLength(3);
    const detailLine = droppedSafety.split('\n').findIndex((l) => l.startsWith('detail:')) + 1;
    expect(text).toContain(`${join(dir, 'oxygen-without-hypoxaemia.yaml')}:${detailLine}:1: detail: drops the safety statement "This is never a reason to withhold oxygen"`);
  });

  it('refuses a folder that cannot be read, at the policy key', async () => {
    const policyPath = site('missing-folder', {}, (t) => t.replace('./larkspur-cards', './no-such-folder'));
    const files = await load(policyPath);
    expect(files.kind === 'invalid' ? files.problems.map((p) => [p.file, p.path]) : []).toStrictEqual([[policyPath, 'cardWording.folder']]);
  });

  it('loads a policy written before these sections existed, with the bundled wording and reasons', async () => {
    const dir = join(scratch, 'older');
    mkdirSync(dir, { recursive: true });
    const policyPath = join(dir, 'older.yaml');
    const older = bundledPolicy
      .replace(/^clinicalBasis:[\s\S]*?(?=^site:)/m, '')
      .replace(/^cardWording:[\s\S]*$/m, '');
    writeFileSync(policyPath, older);
    const files = await load(policyPath);
    expect(files.kind === 'invalid' ? formatLoadProblems(files.problems) : '').toBe('');
    if (files.kind !== 'ok') return;
    expect(files.policy.clinicalBasis).toStrictEqual({ guidelineKeys: ['bts-2017'], ruleCitations: {}, topicCitations: {} });
    expect(files.policy.overrideReasons).toStrictEqual({ merge: 'add', allCards: [], byRule: {} });
    expect(files.policy.cardWording).toStrictEqual({ folder: undefined });
  });
});

describe("the policy's override reasons at load", () => {
  it('refuses a merge that leaves a card with more than six reasons, at the policy key', async () => {
    const many = Array.from({ length: 4 }, (_, i) => `    - { code: local-reason-${i + 1}, display: "Local reason ${i + 1}" }`).join('\n');
    const policyPath = site('many-reasons', {}, (t) =>
      t.replace('cardWording: { folder: ./larkspur-cards }', 'cardWording: {}').replace('  allCards: []', `  allCards:\n${many}`),
    );
    const files = await load(policyPath);
    expect(files.kind).toBe('invalid');
    const problems = files.kind === 'invalid' ? files.problems : [];
    // cards/acute-hypercapnic-acidosis.yaml offers 3 reasons: 3 + 4 = 7, more than the 6 a card may offer
    expect(problems.map((p) => p.message)).toContainEqual(expect.stringContaining("gives the card of 'acute-hypercapnic-acidosis' 7 override reasons"));
    expect(problems.every((p) => p.file === policyPath && p.path === 'overrideReasons' && (p.line ?? 0) > 1)).toBe(true);
  });
});
