import { createHash } from 'node:crypto';
import { readdir, readFile } from 'node:fs/promises';
import { basename, dirname, join, resolve } from 'node:path';
import { compiledCardTemplate, parseCardTemplate, type CardTemplate, type CardTemplates } from '../cds/card-templates.js';
import { missingTemplates } from '../cds/evaluate-hook.js';
import { checkLocalWording } from '../cds/local-card-wording.js';
import { offeredOverrideReasons } from '../cds/policy-card-text.js';
import { RULES } from '../core/rules/index.js';
import { MAX_OFFERED_REASONS } from '../policy/card-sections-schema.js';
import { locateDocument } from '../policy/locate.js';
import type { Policy } from '../core/policy.js';
import { parsePolicyText, type PolicyAcknowledgement, type PolicyProblem } from '../policy/parse-policy.js';

/**
 * Reads the policy file and every card template at start-up (the server and the CLI both use this).
 * Every problem in every file is collected, so one run shows all there is to fix; the caller refuses
 * to start when there is any.
 */

export interface LoadProblem {
  /** The file at fault (absolute path), or the cards folder. */
  readonly file: string;
  /** Dot path inside the file, `(file)` for the file as a whole. */
  readonly path: string;
  readonly message: string;
  /** How to put it right, when the checker knows. */
  readonly fix?: string;
  /** 1-based line and column in the file, when known. */
  readonly line?: number;
  readonly column?: number;
}

export type LoadedFiles =
  | {
      readonly kind: 'ok';
      readonly policy: Policy;
      /** sha256 of the policy file's bytes (hex): the audit trail names exactly which file judged a card. */
      readonly policyContentHash: string;
      readonly templates: CardTemplates;
      /** Problems that do not stop the service; logged at start. */
      readonly policyWarnings: readonly LoadProblem[];
      /** Critical rules the policy switches off or lowers, with the recorded reasons; logged at start. */
      readonly policyAcknowledgements: readonly PolicyAcknowledgement[];
    }
  | { readonly kind: 'invalid'; readonly problems: readonly LoadProblem[] };

export interface FilePaths {
  readonly policyPath: string;
  readonly cardsDir: string;
}

/** A card file is named by its rule id: `cards/<rule-id>.yaml`, the id in kebab-case. */
const CARD_FILE = /^([a-z0-9]+(?:-[a-z0-9]+)*)\.yaml$/;

/** The reason a file could not be read, without the stack: `ENOENT`, `EACCES`, ... */
function readFailure(error: unknown): string {
  const code = (error as { code?: unknown } | null)?.code;
  return typeof code === 'string' ? `cannot be read (${code})` : 'cannot be read';
}

interface LoadedPolicy {
  readonly policy: Policy;
  /** The text parsed, for the positions of problems found after parsing. */
  readonly text: string;
  readonly contentHash: string;
  readonly warnings: readonly LoadProblem[];
  readonly acknowledgements: readonly PolicyAcknowledgement[];
}

function inFile(file: string, problem: PolicyProblem): LoadProblem {
  return { file, ...problem };
}

async function loadPolicy(path: string, problems: LoadProblem[]): Promise<LoadedPolicy | undefined> {
  let bytes: Buffer;
  try {
    bytes = await readFile(path);
  } catch (error) {
    problems.push({ file: path, path: '(file)', message: readFailure(error) });
    return undefined;
  }
  const text = bytes.toString('utf8');
  const parsed = parsePolicyText(text);
  if (parsed.kind === 'invalid') {
    problems.push(...parsed.problems.map((p) => inFile(path, p)));
    return undefined;
  }
  // Hashed from the bytes read, not re-read later, so the hash is of the very text that was parsed.
  return {
    policy: parsed.policy,
    text,
    contentHash: createHash('sha256').update(bytes).digest('hex'),
    warnings: parsed.warnings.map((p) => inFile(path, p)),
    acknowledgements: parsed.acknowledgements,
  };
}

async function loadCards(dir: string, problems: LoadProblem[]): Promise<Map<string, CardTemplate>> {
  const templates = new Map<string, CardTemplate>();
  let names: string[];
  try {
    names = (await readdir(dir)).sort();
  } catch (error) {
    problems.push({ file: dir, path: '(file)', message: readFailure(error) });
    return templates;
  }
  for (const name of names.filter((n) => n.endsWith('.yaml') || n.endsWith('.yml'))) {
    const file = join(dir, name);
    const ruleId = CARD_FILE.exec(basename(name))?.[1];
    if (ruleId === undefined) {
      problems.push({
        file,
        path: '(file)',
        message: 'must be named <rule-id>.yaml with a kebab-case rule id',
      });
      continue;
    }
    let text: string;
    try {
      text = await readFile(file, 'utf8');
    } catch (error) {
      problems.push({ file, path: '(file)', message: readFailure(error) });
      continue;
    }
    const parsed = parseCardTemplate(text);
    if (parsed.kind === 'invalid') {
      problems.push(...parsed.problems.map((p) => ({ file, path: p.path, message: p.message })));
      continue;
    }
    templates.set(ruleId, parsed.template);
  }
  return templates;
}

/**
 * The policy's card-wording folder (`cardWording.folder`, relative to the policy file's folder): each
 * `<rule-id>.yaml` there replaces the bundled template of that rule once it passes the checks of
 * local-card-wording.ts. Resolved here, in the shell, so the core and the card builder stay pure.
 */
async function overlayLocalWording(
  policyPath: string,
  folder: string,
  templates: Map<string, CardTemplate>,
  problems: LoadProblem[],
): Promise<void> {
  const dir = resolve(dirname(policyPath), folder);
  let names: string[];
  try {
    names = (await readdir(dir)).sort();
  } catch (error) {
    problems.push({ file: policyPath, path: 'cardWording.folder', message: `'${dir}' ${readFailure(error)}`, fix: 'give a folder relative to the policy file' });
    return;
  }
  const ruleIds = RULES.map((rule) => rule.id);
  for (const name of names.filter((n) => n.endsWith('.yaml') || n.endsWith('.yml'))) {
    const file = join(dir, name);
    const ruleId = CARD_FILE.exec(basename(name))?.[1];
    if (ruleId === undefined) {
      problems.push({ file, path: '(file)', message: 'must be named <rule-id>.yaml with a kebab-case rule id', line: 1, column: 1 });
      continue;
    }
    let text: string;
    try {
      text = await readFile(file, 'utf8');
    } catch (error) {
      problems.push({ file, path: '(file)', message: readFailure(error) });
      continue;
    }
    const checked = checkLocalWording(ruleId, text, ruleIds.includes(ruleId) ? templates.get(ruleId) : undefined, ruleIds);
    if (checked.kind === 'invalid') {
      problems.push(...checked.problems.map((p) => ({ file, ...p })));
      continue;
    }
    templates.set(ruleId, checked.template);
  }
}

/** A card offers at most MAX_OFFERED_REASONS override reasons once the policy's are merged in. */
function checkOfferedReasons(loaded: LoadedPolicy, path: string, templates: CardTemplates, problems: LoadProblem[]): void {
  const locate = locateDocument(loaded.text).locate;
  for (const [ruleId, template] of templates) {
    const count = offeredOverrideReasons(loaded.policy, ruleId, template).length;
    if (count > MAX_OFFERED_REASONS) {
      problems.push({
        file: path,
        path: 'overrideReasons',
        message: `gives the card of '${ruleId}' ${count} override reasons; at most ${MAX_OFFERED_REASONS} are offered on one card`,
        fix: `use merge: replace, or fewer reasons in allCards or byRule.${ruleId}`,
        ...locate(['overrideReasons']),
      });
    }
  }
}

/** Loads both; `invalid` lists every problem found. */
export async function loadPolicyAndCards(paths: FilePaths): Promise<LoadedFiles> {
  const problems: LoadProblem[] = [];
  const [loaded, templates] = await Promise.all([
    loadPolicy(paths.policyPath, problems),
    loadCards(paths.cardsDir, problems),
  ]);
  const folder = loaded?.policy.cardWording.folder;
  if (loaded !== undefined && folder !== undefined) {
    await overlayLocalWording(paths.policyPath, folder, templates, problems);
  }
  if (loaded !== undefined) {
    checkOfferedReasons(loaded, paths.policyPath, templates, problems);
  }
  if (!problems.some((p) => p.file === paths.cardsDir)) {
    for (const ruleId of missingTemplates(templates)) {
      problems.push({
        file: join(paths.cardsDir, `${ruleId}.yaml`),
        path: '(file)',
        message: `is missing: rule '${ruleId}' has no card template`,
      });
    }
  }
  if (problems.length > 0 || loaded === undefined) {
    return { kind: 'invalid', problems };
  }
  // Compiled now rather than on the first hook call that shows each card (card-templates.ts).
  for (const template of templates.values()) {
    compiledCardTemplate(template);
  }
  return {
    kind: 'ok',
    policy: loaded.policy,
    policyContentHash: loaded.contentHash,
    templates,
    policyWarnings: loaded.warnings,
    policyAcknowledgements: loaded.acknowledgements,
  };
}

/** One problem: `file:line:column: path: message` (`file: path: message` without a position), then its fix. */
export function formatLoadProblem(p: LoadProblem): string {
  const where = p.line === undefined ? `${p.file}:` : `${p.file}:${p.line}:${p.column ?? 1}:`;
  return `${where} ${p.path}: ${p.message}${p.fix === undefined ? '' : ` (fix: ${p.fix})`}`;
}

/** One problem a line, as formatLoadProblem gives it. */
export function formatLoadProblems(problems: readonly LoadProblem[]): string {
  return problems.map(formatLoadProblem).join('\n');
}
