import { parseArgs } from 'node:util';
import { z } from 'zod';
import { nearestWithin } from '../text/edit-distance.js';
import { UsageError } from './cli-io.js';

type OptionSpec = Readonly<Record<string, { readonly type: 'string' | 'boolean' }>>;

export interface ParsedCommand {
  readonly values: Readonly<Record<string, string | boolean | undefined>>;
  readonly positionals: readonly string[];
}

/** Strict parsing: an unknown option or a missing value is a usage error, never ignored. */
export function parseOptions(args: readonly string[], options: OptionSpec): ParsedCommand {
  try {
    const { values, positionals } = parseArgs({
      args: [...args],
      options: { ...options, help: { type: 'boolean', short: 'h' } },
      strict: true,
      allowPositionals: true,
    });
    return { values, positionals };
  } catch (error) {
    throw new UsageError(optionProblem(error, Object.keys(options)));
  }
}

/**
 * node:util's message for an unknown option tells how to pass a positional that starts with '-'; a
 * person who typed `--unti` wants the option they meant, so name the nearest one instead.
 */
function optionProblem(error: unknown, names: readonly string[]): string {
  const code = (error as { code?: unknown } | null)?.code;
  const message = error instanceof Error ? error.message : 'cannot read the options';
  const unknown = /^Unknown option '(-{1,2}[^']*)'/.exec(message)?.[1];
  if (code !== 'ERR_PARSE_ARGS_UNKNOWN_OPTION' || unknown === undefined) return message;
  return unknownOptionMessage(unknown, [...names, 'help']);
}

/** "unknown option '--unti'; did you mean --unit?", or the list of options when none is near. */
export function unknownOptionMessage(given: string, names: readonly string[]): string {
  const word = given.replace(/^-+/, '');
  const guess = nearestWithin(word, names, Math.max(2, Math.floor(word.length / 3)));
  return guess === undefined
    ? `unknown option '${given}'; the options are ${names.map((n) => `--${n}`).join(', ')}`
    : `unknown option '${given}'; did you mean --${guess}?`;
}

/** Validates option values with a zod schema, naming the option on failure. */
export function checkOptions<T extends z.ZodType>(schema: T, values: unknown): z.infer<T> {
  const result = schema.safeParse(values);
  if (!result.success) {
    const lines = result.error.issues.map((issue) => {
      const name = issue.path.map(String).join('.');
      return name === '' ? issue.message : `--${toKebab(name)}: ${issue.message}`;
    });
    throw new UsageError(lines.join('\n'));
  }
  return result.data;
}

function toKebab(name: string): string {
  return name.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`);
}

/** A numeric option given as text ("0.28", "15"); empty or non-numeric text is refused. */
export const numberText = z
  .string()
  .trim()
  .regex(/^[+-]?(\d+(\.\d*)?|\.\d+)$/, 'must be a number')
  .transform(Number);
