import { parseArgs } from 'node:util';
import { z } from 'zod';
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
    throw new UsageError(error instanceof Error ? error.message : 'cannot read the options');
  }
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
