import { z } from 'zod';
import { policyJsonSchema } from '../policy/policy-json-schema.js';
import { UsageError, writeOutputFile, type CliIo, type ExitCode } from './cli-io.js';
import { checkOptions, parseOptions } from './parse-options.js';

export const POLICY_SCHEMA_USAGE = `Usage: oxygen-order-checker policy schema [--out FILE] [--draft 2020-12|07]

Prints a JSON Schema of the policy file format, generated from the schema the service validates with,
for editors that complete keys and flag mistakes as you type. It covers the format (types, required and
unknown keys, bounds, accepted values); the checks that protect patients need policy validate.
  --out    write the schema to FILE instead of stdout
  --draft  JSON Schema draft: 2020-12 (default), or 07 for tools that read only draft-07, such as
           the YAML language server behind several editors' YAML support
With the YAML language server, the first line of a policy file names the schema:
  oxygen-order-checker policy schema --draft 07 --out policy.schema.json
  # yaml-language-server: $schema=./policy.schema.json`;

const PolicySchemaOptionsSchema = z.strictObject({
  out: z.string().min(1).optional(),
  draft: z.enum(['2020-12', '07'], { error: 'must be 2020-12 or 07' }).default('2020-12'),
});

export function runPolicySchemaCommand(args: readonly string[], io: CliIo): ExitCode {
  const parsed = parseOptions(args, { out: { type: 'string' }, draft: { type: 'string' } });
  if (parsed.values['help'] === true) {
    io.stdout(`${POLICY_SCHEMA_USAGE}\n`);
    return 0;
  }
  if (parsed.positionals.length > 0) {
    throw new UsageError(`takes no FILE argument (got '${parsed.positionals[0] ?? ''}'); use --out FILE to write one`);
  }
  const options = checkOptions(PolicySchemaOptionsSchema, { out: parsed.values['out'], draft: parsed.values['draft'] });
  const text = `${JSON.stringify(policyJsonSchema(options.draft), null, 2)}\n`;
  if (options.out === undefined) {
    io.stdout(text);
    return 0;
  }
  if (!writeOutputFile(io, 'policy schema', options.out, text)) {
    return 1;
  }
  io.stderr(`oxygen-order-checker policy schema: wrote ${options.out}\n`);
  return 0;
}
