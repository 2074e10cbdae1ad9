import { createHash } from 'node:crypto';
import { readdir, readFile } from 'node:fs/promises';
import { basename, join } from 'node:path';
import { parseCardTemplate, type CardTemplate, type CardTemplates } from '../cds/card-templates.js';
import { missingTemplates } from '../cds/evaluate-hook.js';
import type { Policy } from '../core/policy.js';
import { parsePolicyText } from '../policy/parse-policy.js';

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
}

export type LoadedFiles =
  | {
      readonly kind: 'ok';
      readonly policy: Policy;
      /** sha256 of the policy file's bytes (hex): the audit trail names exactly which file judged a card. */
      readonly policyContentHash: string;
      readonly templates: CardTemplates;
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
  readonly contentHash: string;
}

async function loadPolicy(path: string, problems: LoadProblem[]): Promise<LoadedPolicy | undefined> {
  let bytes: Buffer;
  try {
    bytes = await readFile(path);
  } catch (error) {
    problems.push({ file: path, path: '(file)', message: readFailure(error) });
    return undefined;
  }
  const parsed = parsePolicyText(bytes.toString('utf8'));
  if (parsed.kind === 'invalid') {
    problems.push(...parsed.problems.map((p) => ({ file: path, path: p.path, message: p.message })));
    return undefined;
  }
  // Hashed from the bytes read, not re-read later, so the hash is of the very text that was parsed.
  return { policy: parsed.policy, contentHash: createHash('sha256').update(bytes).digest('hex') };
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

/** Loads both; `invalid` lists every problem found. */
export async function loadPolicyAndCards(paths: FilePaths): Promise<LoadedFiles> {
  const problems: LoadProblem[] = [];
  const [loaded, templates] = await Promise.all([
    loadPolicy(paths.policyPath, problems),
    loadCards(paths.cardsDir, problems),
  ]);
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
  return { kind: 'ok', policy: loaded.policy, policyContentHash: loaded.contentHash, templates };
}

/** One problem a line: `file: path: message`. */
export function formatLoadProblems(problems: readonly LoadProblem[]): string {
  return problems.map((p) => `${p.file}: ${p.path}: ${p.message}`).join('\n');
}
