import { locateDocument, type TextPosition } from '../policy/locate.js';
import { nearest } from '../policy/rule-ids.js';
import { CardTemplateSchema, containsStatement, placeholderNames, type CardTemplate } from './card-templates.js';
import { POLICY_PLACEHOLDERS } from './policy-card-text.js';

/**
 * Local card wording (the policy's `cardWording.folder`): a `<rule-id>.yaml` there replaces
 * `cards/<rule-id>.yaml` for that rule. It is held to the card-file schema, and beyond it to the rule's
 * bundled card: the same placeholders (every figure the bundled card shows, none the rule does not
 * supply, plus the policy's guideline placeholders if wanted) and every safety statement of the bundled
 * card word for word. Each problem carries its line and column. Pure: the shell reads the files.
 */

export interface WordingProblem {
  /** Dot path in the card file, `(file)` for the file as a whole. */
  readonly path: string;
  readonly message: string;
  readonly fix?: string;
  readonly line: number;
  readonly column: number;
}

export type LocalWordingCheck =
  | { readonly kind: 'ok'; readonly template: CardTemplate }
  | { readonly kind: 'invalid'; readonly problems: readonly WordingProblem[] };

const TEXT_KEYS = ['summary', 'detail', 'suggestionLabel'] as const;

/** Line and column of a character offset, counted from 1 as editors do. */
function positionAt(text: string, offset: number): TextPosition {
  const before = text.slice(0, offset);
  const lines = before.split('\n');
  return { line: lines.length, column: (lines.at(-1)?.length ?? 0) + 1 };
}

function escapeRegExp(text: string): string {
  return text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

/** Where `{{name}}` is first written in the file text; the fallback when it is not found as such. */
function placeholderPosition(text: string, name: string, fallback: TextPosition): TextPosition {
  const match = new RegExp(`\\{\\{\\s*${escapeRegExp(name)}\\s*\\}\\}`).exec(text);
  return match === null ? fallback : positionAt(text, match.index);
}

function placeholdersOf(template: CardTemplate, keys: readonly (typeof TEXT_KEYS)[number][]): Set<string> {
  return new Set(keys.flatMap((key) => placeholderNames(template[key] ?? '')));
}

/** What to do about a card file that is not a valid card file: compare it with the bundled one. */
function cardFileFix(ruleId: string): string {
  return `compare with cards/${ruleId}.yaml; a card file takes summary, detail, basedOn, suggestionLabel, safetyStatements and overrideReasons (docs/policy.md, local card wording)`;
}

/**
 * Checks the text of a local card file for `ruleId` against the rule's bundled template (`undefined`
 * when no rule has that id; `ruleIds` then gives the nearest for the fix).
 */
export function checkLocalWording(
  ruleId: string,
  text: string,
  bundled: CardTemplate | undefined,
  ruleIds: readonly string[],
): LocalWordingCheck {
  const START: TextPosition = { line: 1, column: 1 };
  if (bundled === undefined) {
    const guess = nearest(ruleId, ruleIds);
    return {
      kind: 'invalid',
      problems: [
        {
          path: '(file)',
          message: `'${ruleId}' is not a rule id, so this wording would never be shown`,
          fix: `${guess === undefined ? '' : `did you mean '${guess}.yaml'? `}name the file <rule-id>.yaml after a section heading of docs/clinical-basis.md`,
          ...START,
        },
      ],
    };
  }
  const doc = locateDocument(text);
  if (doc.syntaxErrors.length > 0) {
    return {
      kind: 'invalid',
      problems: doc.syntaxErrors.map((e) => ({ path: '(file)', message: e.message, fix: 'correct the YAML at this line', ...e.position })),
    };
  }
  const parsed = CardTemplateSchema.safeParse(doc.value);
  if (!parsed.success) {
    return {
      kind: 'invalid',
      problems: parsed.error.issues.map((issue) => {
        const path = issue.path.map((step) => (typeof step === 'symbol' ? String(step) : step));
        // An unknown key is placed at the key itself, not at the map that holds it.
        const at = issue.code === 'unrecognized_keys' && issue.keys[0] !== undefined ? [...path, issue.keys[0]] : path;
        return { path: path.map(String).join('.') || '(root)', message: issue.message, fix: cardFileFix(ruleId), ...doc.locate(at) };
      }),
    };
  }
  const local = parsed.data;
  const problems: WordingProblem[] = [];
  const supplied = new Set([...placeholdersOf(bundled, TEXT_KEYS), ...POLICY_PLACEHOLDERS]);
  for (const key of TEXT_KEYS) {
    for (const name of placeholderNames(local[key] ?? '')) {
      if (!supplied.has(name)) {
        const guess = nearest(name, [...supplied]);
        problems.push({
          path: key,
          message: `placeholder '{{${name}}}' is not one the rule '${ruleId}' supplies`,
          fix: `${guess === undefined ? '' : `did you mean '{{${guess}}}'? `}use the placeholders of cards/${ruleId}.yaml or ${POLICY_PLACEHOLDERS.map((p) => `{{${p}}}`).join(', ')}`,
          ...placeholderPosition(text, name, doc.locate([key])),
        });
      }
    }
  }
  // Every figure the bundled card shows stays on the card: summary and detail may trade them.
  const shown = placeholdersOf(local, ['summary', 'detail']);
  for (const name of placeholdersOf(bundled, ['summary', 'detail'])) {
    if (!POLICY_PLACEHOLDERS.includes(name) && !shown.has(name)) {
      problems.push({
        path: 'detail',
        message: `placeholder '{{${name}}}' of cards/${ruleId}.yaml is missing: the card would no longer show it`,
        fix: `write {{${name}}} in the summary or the detail`,
        ...doc.locate(['detail']),
      });
    }
  }
  if (bundled.suggestionLabel !== undefined) {
    const labelled = placeholdersOf(local, ['suggestionLabel']);
    if (local.suggestionLabel === undefined) {
      problems.push({
        path: 'suggestionLabel',
        message: `is missing: the rule '${ruleId}' offers a one-click change that needs a label`,
        fix: `add suggestionLabel, e.g. "${bundled.suggestionLabel}"`,
        ...doc.locate([]),
      });
    } else {
      for (const name of placeholderNames(bundled.suggestionLabel).filter((n) => !labelled.has(n))) {
        problems.push({
          path: 'suggestionLabel',
          message: `placeholder '{{${name}}}' of cards/${ruleId}.yaml is missing: the button would not say what it changes`,
          fix: `write {{${name}}} in the suggestion label`,
          ...doc.locate(['suggestionLabel']),
        });
      }
    }
  }
  const wording = `${local.summary}\n${local.detail}`;
  for (const statement of bundled.safetyStatements ?? []) {
    if (!containsStatement(wording, statement)) {
      problems.push({
        path: 'detail',
        message: `drops the safety statement "${statement}" of cards/${ruleId}.yaml`,
        fix: 'keep the statement word for word in the summary or the detail',
        ...doc.locate(['detail']),
      });
    }
  }
  const withSafety = bundled.safetyStatements === undefined ? local : { ...local, safetyStatements: [...new Set([...bundled.safetyStatements, ...(local.safetyStatements ?? [])])] };
  return problems.length > 0 ? { kind: 'invalid', problems } : { kind: 'ok', template: withSafety };
}
