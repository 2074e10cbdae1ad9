import { describe, expect, it } from 'vitest';
import {
  escapeMarkdown,
  MISSING_VALUE_TEXT,
  parseCardTemplate,
  placeholderNames,
  renderTemplate,
} from '../../src/cds/card-templates.js';

const validYaml = `
summary: "Target {{orderedRange}} ordered, but {{patientLabel}} is at risk of hypercapnia: {{advisedRange}} advised"
detail: |
  The ordered target is **{{orderedRange}}**.
suggestionLabel: "Change target to {{advisedRange}}"
overrideReasons:
  - { code: patient-specific-target, display: "Patient has an individual target agreed by the team" }
  - { code: senior-decision, display: "Senior clinician has decided on this target" }
`;

describe('parseCardTemplate', () => {
  it('reads a template with summary, detail, suggestion label and override reasons', () => {
    expect(parseCardTemplate(validYaml)).toStrictEqual({
      kind: 'ok',
      template: {
        summary: 'Target {{orderedRange}} ordered, but {{patientLabel}} is at risk of hypercapnia: {{advisedRange}} advised',
        detail: 'The ordered target is **{{orderedRange}}**.\n',
        suggestionLabel: 'Change target to {{advisedRange}}',
        overrideReasons: [
          { code: 'patient-specific-target', display: 'Patient has an individual target agreed by the team' },
          { code: 'senior-decision', display: 'Senior clinician has decided on this target' },
        ],
      },
    });
  });

  it('rejects unknown keys, so a misspelt key cannot drop wording', () => {
    expect(parseCardTemplate(`${validYaml}\nsumary: typo\n`)).toStrictEqual({
      kind: 'invalid',
      problems: [{ path: '(root)', message: 'Unrecognized key: "sumary"' }],
    });
  });

  it.each([
    ['no override reasons', 'overrideReasons: []', 'overrideReasons'],
    [
      'five override reasons',
      `overrideReasons:\n${['a', 'b', 'c', 'd', 'e'].map((c) => `  - { code: ${c}, display: "${c}" }`).join('\n')}`,
      'overrideReasons',
    ],
    ['a code that is not kebab-case', 'overrideReasons:\n  - { code: Patient_Target, display: "x" }', 'overrideReasons.0.code'],
    ['a reason without display', 'overrideReasons:\n  - { code: patient-target }', 'overrideReasons.0.display'],
    ['a duplicate code', 'overrideReasons:\n  - { code: a, display: "x" }\n  - { code: a, display: "y" }', 'overrideReasons.1.code'],
  ])('rejects %s', (_name, reasons, path) => {
    const text = `summary: "s"\ndetail: "d"\n${reasons}\n`;
    const result = parseCardTemplate(text);
    expect(result.kind).toBe('invalid');
    expect(result.kind === 'invalid' ? result.problems.map((p) => p.path) : []).toStrictEqual([path]);
  });

  describe('edge cases', () => {
    it('reports unreadable YAML as a problem, not a throw', () => {
      const result = parseCardTemplate('summary: "unclosed\n');
      expect(result.kind).toBe('invalid');
      expect(result.kind === 'invalid' ? result.problems[0]?.path : undefined).toBe('(file)');
    });

    it('rejects a missing summary and an empty detail', () => {
      const result = parseCardTemplate('detail: ""\noverrideReasons:\n  - { code: a, display: "x" }\n');
      expect(result.kind === 'invalid' ? result.problems.map((p) => p.path) : []).toStrictEqual(['summary', 'detail']);
    });
  });
});

describe('renderTemplate', () => {
  it('fills placeholders, escaping values for Markdown', () => {
    // GFM spec, "Backslash escapes" (§2.4, number from memory): any ASCII punctuation may be escaped
    expect(renderTemplate('Ward: {{ward}}', { ward: '*Bay_4* [east] <b>|#`x`\\' })).toStrictEqual({
      text: 'Ward: \\*Bay\\_4\\* \\[east\\] \\<b\\>\\|\\#\\`x\\`\\\\',
      missing: [],
    });
  });

  it('leaves values as they are in plain mode (summaries)', () => {
    expect(renderTemplate('{{range}} advised', { range: '88–92 %' }, 'plain').text).toBe('88–92 % advised');
    expect(renderTemplate('{{a}}', { a: 'x_y*z' }, 'plain').text).toBe('x_y*z');
  });

  it('reports placeholders without a value, once each, and marks them in the text', () => {
    expect(renderTemplate('{{a}} {{b}} {{ b }} {{c}}', { a: '1', c: '  ' })).toStrictEqual({
      text: `1 ${MISSING_VALUE_TEXT} ${MISSING_VALUE_TEXT} ${MISSING_VALUE_TEXT}`,
      missing: ['b', 'c'],
    });
  });

  describe('edge cases', () => {
    it('does not expand placeholders inside values', () => {
      expect(renderTemplate('{{a}}', { a: '{{b}}', b: 'no' }, 'plain').text).toBe('{{b}}');
    });

    it('folds line breaks in values so a value cannot start a Markdown block', () => {
      expect(escapeMarkdown('first\n# heading\r\n- item')).toBe('first \\# heading - item');
    });

    it('does not look up inherited properties as values', () => {
      expect(renderTemplate('{{toString}}', {}).missing).toStrictEqual(['toString']);
    });
  });
});

describe('placeholderNames', () => {
  it('lists distinct names in order of first use', () => {
    expect(placeholderNames('{{b}} {{a}} {{ b }}')).toStrictEqual(['b', 'a']);
  });
});
