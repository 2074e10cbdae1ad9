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

/** Characters with meaning in GitHub-Flavored Markdown, backslash-escaped in interpolated values. */
const MARKDOWN_SPECIAL = /[\\`*_[\]<>|#]/g;

/**
 * Escapes a value for GFM: the characters `` \ ` * _ [ ] < > | # `` get a backslash, and line
 * breaks fold to one space so a value cannot start a list, heading or table row of its own.
 */
export function escapeMarkdown(value: string): string {
  return foldLines(value).replace(MARKDOWN_SPECIAL, (character) => `\\${character}`);
}

function foldLines(value: string): string {
  return value.replace(/\s*[\r\n]+\s*/g, ' ');
}

export interface Rendered {
  readonly text: string;
  /** Placeholders with no value; each was replaced by "(not available)". */
  readonly missing: readonly string[];
}

export const MISSING_VALUE_TEXT = '(not available)';

/**
 * Fills `{{name}}` placeholders. `markdown` escapes each value for GFM (card detail); `plain` leaves
 * values as they are (summaries and button labels are plain text). One pass: a value that itself
 * contains `{{…}}` is not expanded again.
 */
export function renderTemplate(
  templateText: string,
  values: Readonly<Record<string, string>>,
  mode: 'markdown' | 'plain' = 'markdown',
): Rendered {
  const missing: string[] = [];
  const text = templateText.replace(PLACEHOLDER, (_match, name: string) => {
    const value = Object.hasOwn(values, name) ? values[name] : undefined;
    if (value === undefined || value.trim() === '') {
      if (!missing.includes(name)) {
        missing.push(name);
      }
      return MISSING_VALUE_TEXT;
    }
    return mode === 'markdown' ? escapeMarkdown(value) : foldLines(value);
  });
  return { text, missing };
}
