import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  bindFixedValues,
  compiledCardTemplate,
  compileText,
  escapeMarkdown,
  MISSING_VALUE_TEXT,
  parseCardTemplate,
  placeholderNames,
  renderCompiled,
  renderTemplate,
  type CardTemplate,
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

// GFM spec, "Backslash escapes" (§2.4, number from memory): these are the characters we escape.
const SPECIALS = ['\\', '`', '*', '_', '[', ']', '<', '>', '|', '#'];

/**
 * The renderer as it was before templates were compiled (a regex replace over the template text, fold
 * then escape per value): the compiled renderer must give the same text and the same missing names.
 */
function referenceEscape(value: string): string {
  return value.replace(/\s*[\r\n]+\s*/g, ' ').replace(/[\\`*_[\]<>|#]/g, (character) => `\\${character}`);
}
function referenceRender(
  templateText: string,
  values: Readonly<Record<string, string>>,
  mode: 'markdown' | 'plain',
): { text: string; missing: string[] } {
  const missing: string[] = [];
  const text = templateText.replace(/\{\{\s*([A-Za-z][A-Za-z0-9]*)\s*\}\}/g, (_match, name: string) => {
    const value = Object.hasOwn(values, name) ? values[name] : undefined;
    if (value === undefined || value.trim() === '') {
      if (!missing.includes(name)) {
        missing.push(name);
      }
      return MISSING_VALUE_TEXT;
    }
    return mode === 'markdown' ? referenceEscape(value) : value.replace(/\s*[\r\n]+\s*/g, ' ');
  });
  return { text, missing };
}

function bundledTemplates(): [string, CardTemplate][] {
  const folder = join(import.meta.dirname, '../../cards');
  return readdirSync(folder)
    .filter((file) => file.endsWith('.yaml'))
    .map((file) => {
      const parsed = parseCardTemplate(readFileSync(join(folder, file), 'utf8'));
      if (parsed.kind !== 'ok') {
        throw new Error(`${file} does not parse`);
      }
      return [file, parsed.template];
    });
}

/** Values that exercise every path: plain, specials, line breaks, blank, a placeholder inside a value. */
const VALUE_KINDS = ['88–92 %', 'a_b *c* [d] <e> |f| #g `h` \\i', 'line one\n  - line two\r\n# three', '   ', '', '{{other}}'];

describe('compiled card templates', () => {
  it('render every bundled card text as the former renderer did, for every placeholder and value kind', () => {
    const templates = bundledTemplates();
    expect(templates.length).toBeGreaterThan(20);
    for (const [file, template] of templates) {
      const compiled = compiledCardTemplate(template);
      const texts = [
        [template.summary, compiled.summary],
        [template.detail, compiled.detail],
        ...(template.suggestionLabel === undefined || compiled.suggestionLabel === undefined
          ? []
          : [[template.suggestionLabel, compiled.suggestionLabel] as const]),
      ] as const;
      for (const [text, compiledText] of texts) {
        const names = placeholderNames(text);
        VALUE_KINDS.forEach((_kind, shift) => {
          // Each placeholder gets a different kind of value, and one in three is left out.
          const values = Object.fromEntries(
            names.flatMap((name, index) => (index % 3 === shift % 3 ? [] : [[name, VALUE_KINDS[(index + shift) % VALUE_KINDS.length] ?? '']])),
          );
          for (const mode of ['markdown', 'plain'] as const) {
            expect(renderCompiled(compiledText, values, mode), `${file} ${mode}`).toStrictEqual(referenceRender(text, values, mode));
          }
        });
      }
    }
  });

  it('compiles each template once and keeps it', () => {
    const template = bundledTemplates()[0]?.[1];
    if (template === undefined) {
      throw new Error('cards/ holds no card file');
    }
    expect(compiledCardTemplate(template)).toBe(compiledCardTemplate(template));
  });

  it('splits a text into its fixed wording and its placeholders, in order', () => {
    expect(compileText('SpO2 {{spo2}} below {{ range }}.')).toStrictEqual({ literals: ['SpO2 ', ' below ', '.'], names: ['spo2', 'range'] });
    expect(compileText('no placeholders')).toStrictEqual({ literals: ['no placeholders'], names: [] });
  });

  it('render any template and values as the former renderer did', () => {
    const name = fc.constantFrom('a', 'b', 'spo2', 'toString');
    const piece = fc.oneof(fc.string(), name.map((n) => `{{${n}}}`), name.map((n) => `{{ ${n} }}`));
    fc.assert(
      fc.property(fc.array(piece, { maxLength: 8 }), fc.dictionary(name, fc.string()), fc.constantFrom<'markdown' | 'plain'>('markdown', 'plain'), (pieces, values, mode) => {
        const text = pieces.join('');
        expect(renderTemplate(text, values, mode)).toStrictEqual(referenceRender(text, values, mode));
      }),
    );
  });
});

describe('bindFixedValues', () => {
  it('renders any text as rendering it with the fixed values as overrides does, or declines', () => {
    const name = fc.constantFrom('a', 'b', 'guideline', 'toString');
    const piece = fc.oneof(fc.string(), name.map((n) => `{{${n}}}`), name.map((n) => `{{ ${n} }}`));
    // Values with GFM specials and line breaks (GFM spec, backslash escapes and line endings), blanks too.
    const value = fc.oneof(fc.string(), fc.constantFrom('', '  ', 'BTS 2017', 'a*b_c', 'x\n  y', '[link](u) | #'));
    fc.assert(
      fc.property(
        fc.array(piece, { maxLength: 8 }),
        fc.dictionary(name, value),
        fc.dictionary(name, value),
        fc.constantFrom<'markdown' | 'plain'>('markdown', 'plain'),
        (pieces, values, fixed, mode) => {
          const compiled = compileText(pieces.join(''));
          const expected = renderCompiled(compiled, values, mode, fixed);
          const bound = bindFixedValues(compiled, fixed, mode);
          const usesBlankFixed = compiled.names.some((n) => Object.hasOwn(fixed, n) && (fixed[n] ?? '').trim() === '');
          // It declines exactly when a fixed value it would fill in is blank (to be reported missing in place).
          expect(bound === undefined).toBe(usesBlankFixed);
          if (bound !== undefined) {
            expect(bound.names.every((n) => !Object.hasOwn(fixed, n))).toBe(true);
            expect(renderCompiled(bound, values, mode)).toStrictEqual(expected);
          }
        },
      ),
    );
  });

  it('fills the guideline into every bundled card text once, leaving the finding placeholders', () => {
    const fixed = { guideline: 'BTS 2017', guidelines: 'BTS 2017, TSANZ 2015' };
    let filled = 0;
    for (const [file, template] of bundledTemplates()) {
      const compiled = compiledCardTemplate(template);
      for (const [text, mode] of [[compiled.summary, 'plain'], [compiled.detail, 'markdown']] as const) {
        const bound = bindFixedValues(text, fixed, mode);
        expect(bound, file).toBeDefined();
        expect(bound?.names).toStrictEqual(text.names.filter((n) => !Object.hasOwn(fixed, n)));
        filled += text.names.length - (bound?.names.length ?? 0);
      }
    }
    // 21 of the bundled card files cite {{guideline}} (cards/*.yaml).
    expect(filled).toBeGreaterThanOrEqual(21);
  });
});

describe('escapeMarkdown invariants', () => {
  it('escapes every Markdown special character, wherever it stands', () => {
    for (const special of SPECIALS) {
      expect(escapeMarkdown(special)).toBe(`\\${special}`);
      expect(escapeMarkdown(`SpO2 ${special}92`)).toBe(`SpO2 \\${special}92`);
    }
  });

  it('returns text without special characters or line breaks unchanged', () => {
    const ordinary = fc.string({ unit: fc.constantFrom(...'abcXYZ 0189.,:;-–%/()=+~!?@$^&{}"\'\t°'.split('')) });
    fc.assert(
      fc.property(ordinary, (text) => {
        expect(escapeMarkdown(text)).toBe(text);
      }),
    );
  });

  it('leaves no special character unescaped and no line break, and matches folding then escaping', () => {
    const mixed = fc.string({ unit: fc.constantFrom(...SPECIALS, 'a', ' ', '\t', '\n', '\r', '\u00a0') });
    fc.assert(
      fc.property(mixed, (text) => {
        const escaped = escapeMarkdown(text);
        expect(escaped).toBe(referenceEscape(text));
        expect(escaped).not.toMatch(/[\r\n]/);
        // Once every backslash pair is taken out, nothing special is left.
        expect(escaped.replace(/\\./g, '')).not.toMatch(/[\\`*_[\]<>|#]/);
      }),
    );
  });
});
