import { z } from 'zod';
import { buildConfigReference, renderConfigReference } from '../config/config-reference.js';
import { UsageError, writeOutputFile, type CliIo, type ExitCode } from './cli-io.js';
import { checkOptions, parseOptions } from './parse-options.js';

export const CONFIG_DOCS_USAGE = `Usage: oxygen-order-checker config docs [--out FILE]

Prints the configuration reference (docs/configuration.md) of this version: every environment variable
the service reads, with its type, default, unit, meaning and whether it is a secret, generated from the
parsers the service starts with. \`npm run docs:config\` writes docs/configuration.md with it.
  --out  write the reference to FILE instead of stdout`;

const ConfigDocsOptionsSchema = z.strictObject({ out: z.string().min(1).optional() });

export function runConfigDocsCommand(args: readonly string[], io: CliIo): ExitCode {
  const parsed = parseOptions(args, { out: { type: 'string' } });
  if (parsed.values['help'] === true) {
    io.stdout(`${CONFIG_DOCS_USAGE}\n`);
    return 0;
  }
  if (parsed.positionals.length > 0) {
    throw new UsageError(`takes no FILE argument (got '${parsed.positionals[0] ?? ''}'); use --out FILE to write one`);
  }
  const options = checkOptions(ConfigDocsOptionsSchema, { out: parsed.values['out'] });
  const reference = buildConfigReference();
  if (reference.kind === 'incomplete') {
    io.stderr(`oxygen-order-checker config docs: the reference is incomplete:\n${reference.problems.map((p) => `  ${p}\n`).join('')}`);
    return 1;
  }
  const text = renderConfigReference(reference.variables);
  if (options.out === undefined) {
    io.stdout(text);
    return 0;
  }
  if (!writeOutputFile(io, 'config docs', options.out, text)) {
    return 1;
  }
  io.stderr(`oxygen-order-checker config docs: wrote ${options.out}\n`);
  return 0;
}
