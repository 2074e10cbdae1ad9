import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { checkLocalWording } from '../../src/cds/local-card-wording.js';
import { RULES } from '../../src/core/rules/index.js';
import { loadRepositoryCards } from './support/load-cards.js';

/** Local card wording is held to the card-file schema and to the rule's bundled card (docs/policy.md). */

const templates = loadRepositoryCards();
const ruleIds = RULES.map((rule) => rule.id);
const bundledText = (ruleId: string): string => readFileSync(new URL(`../../cards/${ruleId}.yaml`, import.meta.url), 'utf8');
const check = (ruleId: string, text: string) => checkLocalWording(ruleId, text, templates.get(ruleId), ruleIds);
const problemsOf = (result: ReturnType<typeof check>) => (result.kind === 'invalid' ? result.problems : []);

/** Line (1-based) of the first line of `text` that contains `fragment`. */
const lineOf = (text: string, fragment: string): number => text.split('\n').findIndex((line) => line.includes(fragment)) + 1;

describe('checkLocalWording', () => {
  it.each(ruleIds)('accepts the bundled wording of %s as local wording', (ruleId) => {
    expect(check(ruleId, bundledText(ruleId)).kind).toBe('ok');
  });

  it('accepts a reworded card and uses its words, keeping the bundled safety statements', () => {
    const text = bundledText('spo2-above-target').replace(
      'weaning it as the patient improves',
      'stepping it down with the Larkspur Bay weaning chart',
    );
    const result = check('spo2-above-target', text);
    expect(result.kind).toBe('ok');
    if (result.kind !== 'ok') return;
    expect(result.template.detail).toContain('Larkspur Bay weaning chart');
    expect(result.template.safetyStatements).toEqual(templates.get('spo2-above-target')?.safetyStatements);
  });

  it('refuses a file for an unknown rule id, suggesting the nearest', () => {
    const [problem] = problemsOf(checkLocalWording('spo2-above-targte', bundledText('spo2-above-target'), undefined, ruleIds));
    expect(problem).toMatchObject({ path: '(file)', line: 1, column: 1 });
    expect(problem?.message).toContain("'spo2-above-targte' is not a rule id");
    expect(problem?.fix).toContain("did you mean 'spo2-above-target.yaml'?");
  });

  it.each([
    { what: 'a missing key', text: (t: string) => t.replace(/^overrideReasons:[\s\S]*$/m, '') },
    { what: 'an unknown key', text: (t: string) => `${t}\nsumary: "misspelt"\n` },
    { what: 'a safety statement not in the text', text: (t: string) => t.replace('a single high reading may be an\n  artefact', 'a reading may mislead') },
  ])('refuses a file that is not a valid card file ($what), pointing to the bundled card for the fix', ({ text }) => {
    const problems = problemsOf(check('spo2-above-target', text(bundledText('spo2-above-target'))));
    expect(problems.length).toBeGreaterThan(0);
    for (const problem of problems) {
      expect(problem.fix).toContain('compare with cards/spo2-above-target.yaml');
    }
  });

  it('refuses a placeholder the rule does not supply, at its own line and column', () => {
    const text = bundledText('spo2-above-target').replace('The latest SpO2, {{spo2}},', 'The latest SpO2, {{spo2}} ({{spo2Value}}),');
    const problems = problemsOf(check('spo2-above-target', text));
    const line = lineOf(text, '{{spo2Value}}');
    expect(problems).toStrictEqual([
      expect.objectContaining({
        path: 'detail',
        message: "placeholder '{{spo2Value}}' is not one the rule 'spo2-above-target' supplies",
        line,
        column: (text.split('\n')[line - 1] ?? '').indexOf('{{spo2Value}}') + 1,
      }),
    ]);
  });

  it.each(ruleIds.filter((id) => /\{\{/.test(templates.get(id)?.detail ?? '')))(
    '%s: refuses wording that drops a figure the bundled card shows',
    (ruleId) => {
      const text = bundledText(ruleId);
      const bundled = templates.get(ruleId);
      const name = /\{\{\s*([A-Za-z0-9]+)\s*\}\}/.exec(bundled?.detail ?? '')?.[1] ?? '';
      if (['guideline', 'guidelines', 'ventilationGuideline'].includes(name)) return;
      // Every occurrence replaced by fixed words, in the summary, the detail and the label alike.
      const dropped = text.replaceAll(new RegExp(`\\{\\{\\s*${name}\\s*\\}\\}`, 'g'), 'a value');
      const problems = problemsOf(check(ruleId, dropped));
      expect(problems.map((p) => p.message)).toContainEqual(expect.stringContaining(`placeholder '{{${name}}}' of cards/${ruleId}.yaml is missing`));
      expect(problems.every((p) => p.line >= 1)).toBe(true);
    },
  );

  it.each(ruleIds.filter((id) => (templates.get(id)?.safetyStatements ?? []).length > 0))(
    '%s: refuses wording that drops one of its safety statements, at the detail key',
    (ruleId) => {
      const text = bundledText(ruleId);
      const statement = templates.get(ruleId)?.safetyStatements?.[0] ?? '';
      // The statement may run over a line break in the file: remove it wherever it is, spacing aside.
      const pattern = new RegExp(statement.split(/\s+/).map((w) => w.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')).join('\\s+'), 'i');
      const dropped = text.replace(pattern, 'see the ward guidance').replace(/^safetyStatements:.*\n/m, '');
      expect(dropped).not.toMatch(pattern);
      const problems = problemsOf(check(ruleId, dropped));
      expect(problems).toContainEqual(
        expect.objectContaining({ path: 'detail', message: expect.stringContaining(`drops the safety statement "${statement}"`), line: lineOf(dropped, 'detail:') }),
      );
    },
  );

  it('refuses a card that drops the suggestion label of a rule that offers a change', () => {
    const text = bundledText('target-range-missing').replace(/^suggestionLabel:.*\n/m, '');
    expect(problemsOf(check('target-range-missing', text)).map((p) => p.path)).toStrictEqual(['suggestionLabel']);
  });

  it('refuses what the card schema refuses, with the line of the key at fault', () => {
    const text = `${bundledText('target-range-missing')}sumary: typo\n`;
    const problems = problemsOf(check('target-range-missing', text));
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatchObject({ message: expect.stringContaining('sumary'), line: lineOf(text, 'sumary:'), column: 1 });
    const broken = 'summary: "unclosed\n';
    expect(problemsOf(check('target-range-missing', broken))[0]).toMatchObject({ path: '(file)', message: expect.any(String) });
  });

  it("lets a local card add or leave out the policy's guideline citation", () => {
    const text = bundledText('target-range-missing').replace(' ({{guideline}})', ' (Larkspur Bay oxygen policy; {{guidelines}})');
    expect(check('target-range-missing', text).kind).toBe('ok');
  });
});
