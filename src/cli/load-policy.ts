import type { Policy } from '../core/policy.js';
import { bundledPath } from '../config/package-root.js';
import { parsePolicyText } from '../policy/parse-policy.js';
import { UsageError, type CliIo } from './cli-io.js';

export const DEFAULT_POLICY_PATH = bundledPath('policies', 'based-on-bts-2017.yaml');

/** Reads and validates a policy file; every problem is reported, as the service does at start. */
export function loadPolicy(path: string | undefined, io: CliIo): Policy {
  const file = path ?? DEFAULT_POLICY_PATH;
  let text: string;
  try {
    text = io.readFile(file);
  } catch {
    throw new UsageError(`cannot read the policy file ${file}`);
  }
  const parsed = parsePolicyText(text);
  if (parsed.kind === 'invalid') {
    // As policy validate gives them: where (file, line, column), what and how to fix it; never the text.
    const lines = parsed.problems.map((p) => {
      const where = p.line === undefined ? file : `${file}:${p.line}:${p.column ?? 1}`;
      return `  ${where}: ${p.path}: ${p.message}${p.fix === undefined ? '' : `\n    fix: ${p.fix}`}`;
    });
    throw new UsageError(`the policy file ${file} is not valid:\n${lines.join('\n')}`);
  }
  return parsed.policy;
}
