import { expect } from 'vitest';
import { checkCdsResponse } from '../../src/cds/check-response.js';
import { CdsResponseSchema, describeIssues } from '../../src/cds/schemas.js';
import { fhirSchemaErrors } from './fhir-schema.js';

/**
 * Conformance of a CDS Hooks response for tests: the §5.3 checklist (`checkCdsResponse`), our strict
 * response schema (`CdsResponseSchema`: field names and types), and the R4 JSON schema for every
 * resource inside every action (suggestions and systemActions).
 *
 * Usage in any test that produces cards: `expectConformant(response)`.
 */

function actionResources(body: unknown): { readonly path: string; readonly resource: unknown }[] {
  const found: { path: string; resource: unknown }[] = [];
  const parsed = CdsResponseSchema.safeParse(body);
  if (!parsed.success) {
    return found;
  }
  parsed.data.cards.forEach((card, c) => {
    card.suggestions?.forEach((suggestion, s) => {
      suggestion.actions?.forEach((action, a) => {
        if (action.resource !== undefined) {
          found.push({ path: `cards[${c}].suggestions[${s}].actions[${a}].resource`, resource: action.resource });
        }
      });
    });
  });
  parsed.data.systemActions?.forEach((action, a) => {
    if (action.resource !== undefined) {
      found.push({ path: `systemActions[${a}].resource`, resource: action.resource });
    }
  });
  return found;
}

/** Every conformance problem in a response, as plain strings; `[]` when it conforms. */
export function conformanceProblems(body: unknown): string[] {
  const problems = [...checkCdsResponse(body)];
  const parsed = CdsResponseSchema.safeParse(body);
  if (!parsed.success) {
    problems.push(...describeIssues(parsed.error).map((issue) => `schema ${issue.path}: ${issue.message}`));
  }
  for (const { path, resource } of actionResources(body)) {
    problems.push(...fhirSchemaErrors(resource).map((error) => `${path} R4: ${error}`));
  }
  return problems;
}

/** Asserts that a response conforms; the failure message lists every problem. */
export function expectConformant(body: unknown): void {
  expect(conformanceProblems(body)).toStrictEqual([]);
}
