import { parse as parseYaml } from 'yaml';
import { z } from 'zod';
import { yamlProblemText } from '../text/yaml-message.js';
import { describeIssues, type Issue } from './schemas.js';

/**
 * The inputs a card may list under "Based on" (`basedOn:` in cards/<rule-id>.yaml), each rendered
 * from the call's facts by card-detail.ts with its local time.
 */
export const BASED_ON_KINDS = [
  'order',
  'delivered-fio2',
  'spo2',
  'resp-rate',
  'recorded-oxygen',
  'blood-gas',
  'haemoglobin',
  'age',
  'hypercapnic-risk',
] as const;
export type BasedOnKind = (typeof BASED_ON_KINDS)[number];

/**
 * Card wording lives in `cards/<rule-id>.yaml`, apart from the rule's logic, so clinicians can
 * review it. This module parses one file's text (reading the file is the caller's job) and fills
 * its `{{name}}` placeholders from `Finding.values`.
 */

const KEBAB_CODE = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;

const squash = (text: string): string => text.replace(/\s+/g, ' ').trim().toLowerCase();

/** Whether a text holds a statement word for word, line breaks and case aside. */
export function containsStatement(text: string, statement: string): boolean {
  return squash(text).includes(squash(statement));
}

/** Strict: an unknown key is an error, so a misspelt `sumary` cannot silently drop the wording. */
export const CardTemplateSchema = z
  .strictObject({
    summary: z.string().min(1),
    detail: z.string().min(1),
    /** The inputs the card lists under "Based on": only those the finding rests on. */
    basedOn: z.array(z.enum(BASED_ON_KINDS)).max(5).optional(),
    suggestionLabel: z.string().min(1).optional(),
    /**
     * This card's own safety statements (e.g. "never a reason to withhold oxygen"), each as written in
     * its summary or detail. Local wording (the policy's `cardWording` folder) must keep each one word
     * for word; the policy's cautions are added to every card by the builder whatever the wording.
     */
    safetyStatements: z.array(z.string().min(8)).optional(),
    overrideReasons: z
      .array(
        z.strictObject({
          code: z.string().regex(KEBAB_CODE, 'must be kebab-case, e.g. patient-specific-target'),
          display: z.string().min(1),
        }),
      )
      .min(1)
      .max(4),
  })
  .superRefine((template, ctx) => {
    (template.safetyStatements ?? []).forEach((statement, index) => {
      if (!containsStatement(`${template.summary}\n${template.detail}`, statement)) {
        ctx.addIssue({
          code: 'custom',
          path: ['safetyStatements', index],
          message: 'is not in the summary or detail word for word',
        });
      }
    });
    const seen = new Set<string>();
    template.overrideReasons.forEach((reason, index) => {
      if (seen.has(reason.code)) {
        ctx.addIssue({ code: 'custom', path: ['overrideReasons', index, 'code'], message: 'is a duplicate code' });
      }
      seen.add(reason.code);
    });
  });

export type CardTemplate = z.infer<typeof CardTemplateSchema>;
/** Templates by rule id. */
export type CardTemplates = ReadonlyMap<string, CardTemplate>;

export type CardTemplateParse =
  | { readonly kind: 'ok'; readonly template: CardTemplate }
  | { readonly kind: 'invalid'; readonly problems: readonly Issue[] };

/** Parses the YAML text of one card template. Pure. */
export function parseCardTemplate(yamlText: string): CardTemplateParse {
  let raw: unknown;
  try {
    raw = parseYaml(yamlText, { logLevel: 'error' });
  } catch (error) {
    const at = (error as { linePos?: readonly { line: number; col: number }[] } | null)?.linePos?.[0];
    const message =
      (error instanceof Error ? yamlProblemText(error.message) : 'unreadable YAML') +
      (at === undefined ? '' : ` at line ${at.line}, column ${at.col}`);
    return { kind: 'invalid', problems: [{ path: '(file)', message }] };
  }
  const parsed = CardTemplateSchema.safeParse(raw);
  return parsed.success
    ? { kind: 'ok', template: parsed.data }
    : { kind: 'invalid', problems: describeIssues(parsed.error) };
}

const PLACEHOLDER = /\{\{\s*([A-Za-z][A-Za-z0-9]*)\s*\}\}/g;

/** The distinct placeholder names in a template text, in order of first use. */
export function placeholderNames(templateText: string): string[] {
  return [...new Set([...templateText.matchAll(PLACEHOLDER)].map((match) => match[1] ?? ''))];
}

/**
 * A value needs work only when it holds a GFM special character or a line break; most values (numbers,
 * ranges, times, words) hold neither and are returned as they are, without a copy.
 */
const NEEDS_ESCAPE = /[\\`*_[\]<>|#\r\n]/;
/**
 * Folding and escaping in one pass: a line break with the white space around it (group 1) becomes one
 * space, any other match is a special character and gets a backslash. White space is never special, so
 * this gives the same text as folding first and escaping after.
 */
const ESCAPE_PASS = /(\s*[\r\n]+\s*)|[\\`*_[\]<>|#]/g;
const LINE_BREAK = /[\r\n]/;
const FOLD_PASS = /\s*[\r\n]+\s*/g;

function escapeOne(match: string, lineBreak: string | undefined): string {
  return lineBreak === undefined ? `\\${match}` : ' ';
}

/**
 * Escapes a value for GFM: the characters `` \ ` * _ [ ] < > | # `` get a backslash, and line
 * breaks fold to one space so a value cannot start a list, heading or table row of its own.
 */
export function escapeMarkdown(value: string): string {
  return NEEDS_ESCAPE.test(value) ? value.replace(ESCAPE_PASS, escapeOne) : value;
}

function foldLines(value: string): string {
  return LINE_BREAK.test(value) ? value.replace(FOLD_PASS, ' ') : value;
}

export interface Rendered {
  readonly text: string;
  /** Placeholders with no value; each was replaced by "(not available)". */
  readonly missing: readonly string[];
}

export const MISSING_VALUE_TEXT = '(not available)';

/**
 * A template text split once into its fixed wording and its placeholders, so that rendering scans no
 * text: `literals[0]`, the value of `names[0]`, `literals[1]`, …, `literals[names.length]`.
 */
export interface CompiledText {
  readonly literals: readonly string[];
  readonly names: readonly string[];
}

/** Splits a template text at its `{{name}}` placeholders (a capturing split alternates text and names). */
export function compileText(templateText: string): CompiledText {
  const pieces = templateText.split(PLACEHOLDER);
  return {
    literals: pieces.filter((_piece, index) => index % 2 === 0),
    names: pieces.filter((_piece, index) => index % 2 === 1),
  };
}

/** The `missing` of a text whose placeholders all had values: one list, as most renders have none. */
const NONE_MISSING: readonly string[] = Object.freeze([]);

/**
 * Fills a compiled text's placeholders. `markdown` escapes each value for GFM (card detail); `plain`
 * leaves values as they are (summaries and button labels are plain text) but folds line breaks. A
 * value that itself contains `{{…}}` is not expanded again. `overrides`, when given, are looked up
 * first, as if the two were one record with `overrides` assigned over `values`: a card passes the
 * finding's values and the policy's without merging them into a new record per card.
 */
export function renderCompiled(
  compiled: CompiledText,
  values: Readonly<Record<string, string>>,
  mode: 'markdown' | 'plain' = 'markdown',
  overrides?: Readonly<Record<string, string>>,
): Rendered {
  const { literals, names } = compiled;
  let missing: string[] | undefined;
  let text = literals[0] ?? '';
  for (let index = 0; index < names.length; index += 1) {
    const name = names[index] ?? '';
    const value =
      overrides !== undefined && Object.hasOwn(overrides, name)
        ? overrides[name]
        : Object.hasOwn(values, name)
          ? values[name]
          : undefined;
    if (value === undefined || value.trim() === '') {
      missing ??= [];
      if (!missing.includes(name)) {
        missing.push(name);
      }
      text += MISSING_VALUE_TEXT;
    } else {
      text += mode === 'markdown' ? escapeMarkdown(value) : foldLines(value);
    }
    text += literals[index + 1] ?? '';
  }
  return { text, missing: missing ?? NONE_MISSING };
}

/**
 * `compiled` with the placeholders `fixed` holds filled in for good, each value escaped (`markdown`) or
 * folded (`plain`) once and joined to the wording around it, so that rendering the result with the other
 * values gives what `renderCompiled(compiled, values, mode, fixed)` gives, without looking up or
 * escaping the fixed values again. For values that are the same for every render of a text, such as the
 * guideline a policy cites for a rule. Undefined when a fixed value is blank: a render reports that one
 * missing in its place, so the text is left to be rendered with `fixed` as overrides.
 */
export function bindFixedValues(
  compiled: CompiledText,
  fixed: Readonly<Record<string, string>>,
  mode: 'markdown' | 'plain',
): CompiledText | undefined {
  const literals: string[] = [compiled.literals[0] ?? ''];
  const names: string[] = [];
  for (let index = 0; index < compiled.names.length; index += 1) {
    const name = compiled.names[index] ?? '';
    const next = compiled.literals[index + 1] ?? '';
    if (!Object.hasOwn(fixed, name)) {
      names.push(name);
      literals.push(next);
      continue;
    }
    const value = fixed[name];
    if (value === undefined || value.trim() === '') {
      return undefined;
    }
    const last = literals.length - 1;
    literals[last] = `${literals[last] ?? ''}${mode === 'markdown' ? escapeMarkdown(value) : foldLines(value)}${next}`;
  }
  return { literals, names };
}

/** Fills `{{name}}` placeholders of a template text; see {@link renderCompiled}. */
export function renderTemplate(
  templateText: string,
  values: Readonly<Record<string, string>>,
  mode: 'markdown' | 'plain' = 'markdown',
): Rendered {
  return renderCompiled(compileText(templateText), values, mode);
}

/** A card template's texts, compiled. */
export interface CompiledCardTemplate {
  readonly summary: CompiledText;
  readonly detail: CompiledText;
  readonly suggestionLabel: CompiledText | undefined;
}

/**
 * Templates are parsed once and never change, so each is compiled once: at load (load-files.ts) or,
 * for a template made elsewhere (tests, the CLI), on first use. Held weakly, so a template dropped
 * by a reload of the card files takes its compiled form with it.
 */
const COMPILED = new WeakMap<CardTemplate, CompiledCardTemplate>();

export function compiledCardTemplate(template: CardTemplate): CompiledCardTemplate {
  let compiled = COMPILED.get(template);
  if (compiled === undefined) {
    compiled = {
      summary: compileText(template.summary),
      detail: compileText(template.detail),
      suggestionLabel: template.suggestionLabel === undefined ? undefined : compileText(template.suggestionLabel),
    };
    COMPILED.set(template, compiled);
  }
  return compiled;
}
