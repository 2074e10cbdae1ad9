import { createHash } from 'node:crypto';
import { parsePolicyText, type PolicyParse, type PolicyProblem } from '../policy/parse-policy.js';
import type { CliIo } from './cli-io.js';

/** A policy file read for a `policy` command: its validation and the hash the service would put on cards. */
export type PolicyFileRead =
  | { readonly kind: 'unreadable'; readonly file: string }
  | { readonly kind: 'read'; readonly file: string; readonly parse: PolicyParse; readonly contentHash: string };

export function readPolicyFile(file: string, io: CliIo): PolicyFileRead {
  let text: string;
  try {
    text = io.readFile(file);
  } catch {
    return { kind: 'unreadable', file };
  }
  // The sha256 of the file's bytes, as src/config/load-files.ts computes it for cards and log lines.
  return { kind: 'read', file, parse: parsePolicyText(text), contentHash: createHash('sha256').update(text, 'utf8').digest('hex') };
}

/**
 * One problem as `file:line:column: level: path: message`, then its fix. Problems carry yaml's first
 * line of message and a position, never the text of the file, so a file holding something private
 * is never echoed to a terminal or a CI log.
 */
export function describeProblem(file: string, level: 'error' | 'warning', p: PolicyProblem): string {
  const where = p.line === undefined ? file : `${file}:${p.line}:${p.column ?? 1}`;
  return `${where}: ${level}: ${p.path}: ${p.message}${p.fix === undefined ? '' : `\n    fix: ${p.fix}`}`;
}

export const count = (n: number, word: string): string => `${n} ${word}${n === 1 ? '' : 's'}`;

/** The report of an invalid file: a count, then every error and warning. */
export function invalidReport(file: string, parse: Extract<PolicyParse, { kind: 'invalid' }>): string {
  return (
    `${file}: not valid: ${count(parse.problems.length, 'error')}, ${count(parse.warnings.length, 'warning')}\n` +
    parse.problems.map((p) => `${describeProblem(file, 'error', p)}\n`).join('') +
    parse.warnings.map((p) => `${describeProblem(file, 'warning', p)}\n`).join('')
  );
}
