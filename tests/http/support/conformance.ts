import { checkCdsResponse } from '../../../src/cds/check-response.js';
import { CdsResponseSchema, describeIssues } from '../../../src/cds/schemas.js';
import { pruneEmpty } from '../../../src/fhir/text-slots.js';
import { fhirSchemaErrors } from '../../helpers/fhir-schema.js';

/**
 * Conformance checks for responses to hostile or mutated requests. A suggestion's `update` carries
 * the whole draft resource with the change written in (CDS Hooks 2.0 §Action), so whatever R4 faults
 * the caller's draft had, the suggestion has too: the service answers for the faults it adds, not for
 * the ones it was sent. `conformanceProblems` in tests/helpers checks all three parts on valid input.
 */

/** The §5.3 checklist (`checkCdsResponse`) and the strict response schema; `[]` when both pass. */
export function protocolProblems(body: unknown): string[] {
  const problems = [...checkCdsResponse(body)];
  const parsed = CdsResponseSchema.safeParse(body);
  if (!parsed.success) {
    problems.push(...describeIssues(parsed.error).map((issue) => `schema ${issue.path}: ${issue.message}`));
  }
  return problems;
}

interface Resourceish {
  readonly resourceType?: unknown;
  readonly id?: unknown;
}

function draftResources(request: unknown): Resourceish[] {
  const entries = (request as { context?: { draftOrders?: { entry?: unknown } } } | null)?.context?.draftOrders?.entry;
  return Array.isArray(entries)
    ? entries
        .map((entry: unknown) => (entry as { resource?: unknown } | null)?.resource)
        .filter((r): r is Resourceish => typeof r === 'object' && r !== null)
    : [];
}

/** An error with its array indices dropped: removing an empty item shifts the ones after it. */
function unindexed(error: string): string {
  return error.replace(/\[\d+\]/g, '[]');
}

/**
 * R4 schema errors in suggestion resources that the draft with the same type and id did not have
 * (compared without array indices). `[]` when the service added none.
 */
export function addedR4Problems(body: unknown, request: unknown): string[] {
  const parsed = CdsResponseSchema.safeParse(body);
  if (!parsed.success) {
    return [];
  }
  const drafts = draftResources(request);
  const problems: string[] = [];
  parsed.data.cards.forEach((card, c) => {
    card.suggestions?.forEach((suggestion, s) => {
      suggestion.actions?.forEach((action, a) => {
        if (action.resource === undefined) return;
        const { resourceType, id } = action.resource;
        // By type and id; a draft whose id was not a usable string is matched by type alone.
        const sameType = drafts.filter((d) => d.resourceType === resourceType);
        const draft = sameType.find((d) => d.id === id) ?? (sameType.length === 1 ? sameType[0] : undefined);
        // FHIR forbids empty values, so the suggestion drops them; a draft's `subject: {}` becomes no
        // subject. What the draft had either way counts as the draft's own.
        const pruned = draft === undefined ? undefined : (structuredClone(draft) as Record<string, unknown>);
        if (pruned !== undefined) pruneEmpty(pruned);
        const own = draft === undefined || pruned === undefined ? [] : [...fhirSchemaErrors(draft), ...fhirSchemaErrors(pruned)];
        const before = new Set(own.map(unindexed));
        for (const error of fhirSchemaErrors(action.resource)) {
          if (!before.has(unindexed(error))) problems.push(`cards[${c}].suggestions[${s}].actions[${a}].resource R4: ${error}`);
        }
      });
    });
  });
  return problems;
}
