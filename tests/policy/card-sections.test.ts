import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePolicyText } from '../../src/policy/parse-policy.js';

/** The policy sections on what cards cite and offer: checked beyond the schema, each problem at its line. */

const bts = readFileSync(new URL('../../policies/based-on-bts-2017.yaml', import.meta.url), 'utf8');
const tsanz = readFileSync(new URL('../../policies/based-on-tsanz-2015.yaml', import.meta.url), 'utf8');

const problems = (text: string) => {
  const parsed = parsePolicyText(text);
  return parsed.kind === 'invalid' ? parsed.problems : [];
};
const lineOf = (text: string, fragment: string): number => text.split('\n').findIndex((line) => line.includes(fragment)) + 1;

describe('clinicalBasis', () => {
  it('reads both presets: the primary guideline first, then the others they follow', () => {
    const b = parsePolicyText(bts);
    const t = parsePolicyText(tsanz);
    expect(b.kind === 'ok' && b.policy.clinicalBasis.guidelineKeys).toStrictEqual(['bts-2017', 'bts-ics-2016', 'rcp-news2-2017']);
    expect(t.kind === 'ok' && t.policy.clinicalBasis.guidelineKeys).toStrictEqual(['tsanz-2015', 'bts-2017', 'bts-ics-2016']);
    // BTS 2017 Table 2: pneumothorax under observation, reservoir mask at 15 L/min; TSANZ 2015 says no such thing (from memory)
    expect(t.kind === 'ok' && t.policy.clinicalBasis.ruleCitations['pneumothorax-oxygen']).toBe('bts-2017');
    expect(t.kind === 'ok' && t.policy.clinicalBasis.ruleCitations['target-range-missing']).toBeUndefined();
  });

  it('refuses a guideline that is not a reference, at its list item', () => {
    const text = bts.replace('guidelines: [bts-2017, bts-ics-2016, rcp-news2-2017]', 'guidelines: [bts-2017, bts-ics-2061, rcp-news2-2017]');
    expect(problems(text)).toStrictEqual([
      expect.objectContaining({ path: 'clinicalBasis.guidelines.1', message: "'bts-ics-2061' is not a key of references", line: lineOf(text, 'bts-ics-2061') }),
      // and so the NIV thresholds now cite a guideline the file no longer says it follows
      expect.objectContaining({ path: 'clinicalBasis.topicCitations.ventilation', line: lineOf(text, 'ventilation: bts-ics-2016') }),
    ]);
  });

  it('refuses a citation of a reference the policy does not say it follows', () => {
    // BMJ 2018 is among the references but not among the guidelines the preset follows.
    const text = bts.replace('  ruleCitations: {}', '  ruleCitations:\n    spo2-above-target: bmj-2018');
    expect(problems(text)).toStrictEqual([
      expect.objectContaining({
        path: 'clinicalBasis.ruleCitations.spo2-above-target',
        message: expect.stringContaining("'bmj-2018' is not among the guidelines this policy follows"),
        line: lineOf(text, 'spo2-above-target: bmj-2018'),
      }),
    ]);
  });

  it('refuses a citation or reasons for a rule id that does not exist, suggesting the nearest', () => {
    const text = tsanz
      .replace('    pneumothorax-oxygen: bts-2017', '    pneumothorax-oxgen: bts-2017')
      .replace('  byRule: {}', '  byRule:\n    target-range-mising:\n      - { code: local-reason, display: "Local reason" }');
    const found = problems(text);
    expect(found.map((p) => p.path)).toStrictEqual(['clinicalBasis.ruleCitations.pneumothorax-oxgen', 'overrideReasons.byRule.target-range-mising']);
    expect(found.map((p) => p.fix)).toStrictEqual([
      expect.stringContaining("did you mean 'pneumothorax-oxygen'?"),
      expect.stringContaining("did you mean 'target-range-missing'?"),
    ]);
  });
});

describe('overrideReasons', () => {
  it('refuses a code given twice in one list, a code that is not kebab-case and an unknown merge', () => {
    const text = bts
      .replace('  merge: add ', '  merge: append ')
      .replace(
        '  allCards: []',
        '  allCards:\n    - { code: discussed-with-consultant, display: "Discussed with the consultant" }\n    - { code: discussed-with-consultant, display: "Again" }\n    - { code: Local_Reason, display: "x" }',
      );
    expect(problems(text).map((p) => p.path)).toStrictEqual([
      'overrideReasons.merge',
      'overrideReasons.allCards.1.code',
      'overrideReasons.allCards.2.code',
    ]);
  });

  it('reads the reasons the policy gives', () => {
    const text = bts.replace('  allCards: []', '  allCards:\n    - { code: discussed-with-consultant, display: "Discussed with the consultant" }');
    const parsed = parsePolicyText(text);
    expect(parsed.kind === 'ok' && parsed.policy.overrideReasons.allCards).toStrictEqual([
      { code: 'discussed-with-consultant', display: 'Discussed with the consultant' },
    ]);
  });
});
