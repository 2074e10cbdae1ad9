import { z } from 'zod';
import { PolicyFileSchema } from './schema.js';

/**
 * The JSON Schema of the policy format, generated from the zod schema the service validates with, so
 * the two cannot drift. It describes what a person writes (zod's input side): keys with a default may
 * be left out. It covers the format only (types, required and unknown keys, bounds, accepted values);
 * the checks that protect patients (ranges ordered, critical thresholds below every range, rule ids)
 * need `policy validate`.
 */
export type JsonSchemaDraft = '2020-12' | '07';

export const POLICY_SCHEMA_ID = 'https://oxygen-order-checker.example.org/schema/policy-format-1.json';

export function policyJsonSchema(draft: JsonSchemaDraft = '2020-12'): Record<string, unknown> {
  const schema = z.toJSONSchema(PolicyFileSchema, {
    io: 'input',
    target: draft === '07' ? 'draft-7' : 'draft-2020-12',
  }) as Record<string, unknown>;
  const { $schema, ...rest } = schema;
  return {
    $schema,
    $id: POLICY_SCHEMA_ID,
    title: 'oxygen-order-checker local oxygen policy, format 1',
    description:
      'The format of the local oxygen policy file (docs/policy.md). Run `oxygen-order-checker policy validate FILE` for the checks that protect patients beyond the format.',
    ...rest,
  };
}
