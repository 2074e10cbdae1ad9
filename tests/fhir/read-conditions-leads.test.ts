import { readFileSync, readdirSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { LEAD_WORDS, TEXT_PATTERNS, readConditions } from '../../src/fhir/read-conditions.js';
import { leadWordFinder } from '../../src/text/lead-words.js';
import type { ConditionKind } from '../../src/core/types.js';
import { condition } from './helpers/larkspur-bay.js';

/**
 * readConditions matches a kind's pattern only against words in which one of the kind's lead words
 * starts a word. It reads what it read with every pattern run on every word exactly when each match
 * of each pattern starts a word with one of its kind's lead words: that is what is checked here, on
 * the condition words of the tests, the examples and the clinical basis, and on generated words.
 * The condition names are the trade's (BTS 2017 Tables 3 and 4, and the words docs/clinical-basis.md
 * lists, common practice).
 */

const finder = leadWordFinder(new Map(Object.entries(LEAD_WORDS) as [ConditionKind, readonly string[]][]));
const led = (text: string): ReadonlySet<ConditionKind> => finder([text]);
const everyMatch = TEXT_PATTERNS.map(([kind, pattern]) => [kind, new RegExp(pattern.source, `${pattern.flags}g`)] as const);

/** The matches whose kind the lead words do not flag in the text. */
function unflagged(text: string): string[] {
  const kinds = led(text);
  return everyMatch.flatMap(([kind, pattern]) =>
    kinds.has(kind) ? [] : [...text.matchAll(pattern)].map((m) => `${kind}: '${m[0]}' in '${text}'`),
  );
}

/** Every quoted string and line of the condition tests, the examples and the clinical basis. */
function corpus(): string[] {
  const files = [readFileSync(new URL('read-conditions.test.ts', import.meta.url), 'utf8')];
  const examples = new URL('../../examples/', import.meta.url);
  for (const file of readdirSync(examples).filter((f) => f.endsWith('.json'))) {
    files.push(readFileSync(new URL(file, examples), 'utf8'));
  }
  files.push(readFileSync(new URL('../../docs/clinical-basis.md', import.meta.url), 'utf8'));
  const quoted = files.flatMap((text) => [...text.matchAll(/'([^'\n]{2,200})'|"([^"\n]{2,200})"/g)].map((m) => m[1] ?? m[2] ?? ''));
  const texts = [...quoted, ...files.flatMap((text) => text.split('\n'))];
  return [...new Set(texts.flatMap((t) => [t, t.toUpperCase(), t.toLowerCase()]))];
}

/** Words of the patterns and of the trade, negations, history words and separators. */
const WORDS = [
  'COPD', 'COAD', 'chronic obstructive pulmonary disease', 'chronic obstructive airways disease', 'emphysema',
  'bronchiectasis', 'cystic fibrosis', 'kyphoscoliosis', 'scoliosis', 'chest wall deformity', 'thoracoplasty',
  'motor neurone disease', 'motor neuron disease', 'MND', 'amyotrophic lateral sclerosis', 'muscular dystrophy',
  'myasthenia', 'neuromuscular', 'Guillain-Barré', 'Guillain Barre', 'spinal muscular atrophy', 'myopathy',
  'diaphragmatic paralysis', 'diaphragm weakness', 'post-polio', 'postpolio', 'obesity hypoventilation',
  'pickwickian', 'morbidly obese', 'morbid obesity', 'severe obesity', 'class III obesity', 'class 3 obesity',
  'type 2 respiratory failure', 'type II respiratory failure', 'hypercapnic respiratory failure',
  'respiratory failure with hypercapnia', 'CO2 retention', 'carbon dioxide retention', 'home NIV', 'home BiPAP',
  'home ventilation', 'previous', 'prior', 'history of', 'intubation', 'intubated', 'IMV', 'mechanically ventilated',
  'invasive ventilation', 'non-invasive ventilation', 'noninvasive ventilation', 'required', 'requiring', 'needed',
  'needing', 'treated with', 'received', 'NIV', 'BiPAP', 'ventilator-dependent', 'ventilator dependence',
  'carbon monoxide', 'CO poisoning', 'carboxyhaemoglobin', 'carboxyhemoglobin', 'paraquat', 'bleomycin',
  'cluster headache', 'pneumothorax', 'pneumothoraces', 'sickle cell crisis', 'sickle-cell pain crisis',
  'sickle crisis', 'vaso-occlusive crisis', 'vasoocclusive crisis', 'acute chest syndrome', 'pregnant', 'pregnancy',
  'pregnancy test', 'gravid', 'status asthmaticus', 'acute', 'life-threatening', 'near fatal', 'asthma', 'attack',
  'exacerbation', 'exacerbated', 'flare', 'opioid', 'opiates', 'heroin', 'morphine', 'diamorphine', 'methadone',
  'fentanyl', 'oxycodone', 'codeine', 'tramadol', 'buprenorphine', 'benzodiazepines', 'diazepam', 'midazolam',
  'lorazepam', 'temazepam', 'sedative', 'hypnotic', 'overdose', 'toxicity', 'poisoning', 'intoxication', 'narcosis',
  'of', 'with', 'by', 'from', 'on', 'over-sedation', 'oversedated', 'excessively sedated', 'excessive sedation',
  'opioid-induced respiratory depression', 'opioid induced hypoventilation', 'non-ST elevation', 'non ST segment elevation',
  'nonST-elevation', 'myocardial infarction', 'MI', 'ACS', 'acute coronary syndrome', 'NSTEMI', 'N-STEMI', 'STEMI',
  'unstable angina', 'heart attack', 'stroke', 'heat stroke', 'heatstroke', 'stroke volume', 'CVA',
  'cerebrovascular accident', 'cerebral infarct', 'cerebral infarction', 'intracerebral haemorrhage',
  'intracerebral bleed', 'hyperventilation', 'hyperventilating', 'panic attack', 'dysfunctional breathing',
  'anxiety', 'panic', 'breathlessness', 'breathless', 'dyspnoea', 'shortness of breath', 'no', 'not', 'without',
  'ruled out', 'excluded', 'old', 'hx of', 'h/o', 'in 2024', 'left', 'right', 'x',
];
const SEPARATORS = [' ', ' ', ', ', '. ', '; ', '-', '/', '', ' (', ') '];

const words = fc
  .tuple(fc.array(fc.constantFrom(...WORDS), { minLength: 1, maxLength: 6 }), fc.array(fc.constantFrom(...SEPARATORS), { minLength: 6, maxLength: 6 }))
  .chain(([parts, gaps]) =>
    fc
      .constantFrom((t: string) => t, (t: string) => t.toUpperCase(), (t: string) => t.toLowerCase())
      .map((letterCase) => letterCase(parts.map((p, i) => `${p}${gaps[i] ?? ' '}`).join('').trim())),
  );

describe('condition lead words', () => {
  it('start a word in every match of every pattern in the corpus', () => {
    const texts = corpus();
    expect(texts.flatMap(unflagged)).toStrictEqual([]);
    // The corpus names most kinds by their words, so the check means something.
    const matched = new Set(texts.flatMap((t) => everyMatch.filter(([, p]) => [...t.matchAll(p)].length > 0).map(([k]) => k)));
    expect(matched.size).toBeGreaterThanOrEqual(18);
  });

  it('start a word in every match of every pattern, on generated condition words', () => {
    fc.assert(
      fc.property(words, (text) => {
        expect(unflagged(text)).toStrictEqual([]);
      }),
      { numRuns: 5000 },
    );
  });

  it('name a kind for every pattern, as the reader needs', () => {
    expect(new Set(TEXT_PATTERNS.map(([kind]) => kind))).toStrictEqual(new Set(Object.keys(LEAD_WORDS)));
  });

  describe('edge cases', () => {
    // Forms whose lead word is not the first word of the match, or starts a word after a hyphen.
    it.each([
      ['Status asthmaticus', 'acute-asthma'],
      ['Life-threatening asthma', 'acute-asthma'],
      ['N-STEMI', 'acute-coronary-syndrome'],
      ['Non-ST elevation MI', 'acute-coronary-syndrome'],
      ['Excessive sedation with midazolam', 'sedative-or-opioid-toxicity'],
      ['Overdose of methadone', 'sedative-or-opioid-toxicity'],
      ['Anxiety with breathlessness', 'hyperventilation'],
      ['CO poisoning', 'carbon-monoxide-poisoning'],
      ['Postpolio syndrome', 'neuromuscular-disease'],
    ])('reads %j as %s', (text, kind) => {
      expect(readConditions([condition('c1', { text })]).conditions.map((c) => c.kind)).toContain(kind);
    });

    it('reads nothing from words no lead word starts', () => {
      expect(readConditions([condition('c1', { text: 'Left lower lobe pneumonia' })]).conditions).toStrictEqual([]);
      expect(led('Left lower lobe pneumonia')).toStrictEqual(new Set());
    });
  });
});
