import type { SetAsideNote } from '../core/types.js';
import { asFhirResource, type FhirResource } from './gathered-data.js';
import { arrayAt, codingsOf, isObject, objectsAt, stringAt } from './json.js';

/**
 * Flattens what a client sent (a Bundle, a bare resource, a list of either, or null) into resources,
 * and turns any OperationOutcome among them into a note: CDS Hooks lets a client put one in place of
 * prefetch data when its own query failed (cds-hooks.md §3.4).
 */

export interface Entry {
  readonly resource: FhirResource;
  readonly fullUrl: string | undefined;
}

export interface Flattened {
  readonly entries: readonly Entry[];
  readonly notes: readonly SetAsideNote[];
}

/** Bundles inside bundles are followed this deep; deeper nesting is not something a client sends. */
const MAX_DEPTH = 4;

function outcomeNote(outcome: FhirResource): SetAsideNote {
  const issue = objectsAt(outcome, 'issue')[0];
  const words =
    stringAt(issue, 'diagnostics') ??
    stringAt(issue?.['details'], 'text') ??
    codingsOf(issue?.['details'])[0]?.display ??
    stringAt(issue, 'code') ??
    'no detail given';
  return {
    what: 'OperationOutcome',
    reason: 'error-in-source',
    detail: `The EHR reported a problem getting data: ${words.slice(0, 200)}`,
    reference: outcome.id === undefined ? undefined : `OperationOutcome/${outcome.id}`,
  };
}

interface Collected {
  readonly entries: Entry[];
  readonly notes: SetAsideNote[];
}

function collect(value: unknown, fullUrl: string | undefined, depth: number, out: Collected): void {
  if (depth > MAX_DEPTH) {
    return;
  }
  if (Array.isArray(value)) {
    for (const item of value) {
      collect(item, undefined, depth + 1, out);
    }
    return;
  }
  const resource = asFhirResource(value);
  if (resource === undefined) {
    if (isObject(value) && Array.isArray(value['entry'])) {
      // A Bundle that forgot its resourceType: hook examples omit more than Bundle.type.
      collect({ ...value, resourceType: 'Bundle' }, fullUrl, depth, out);
    }
    return;
  }
  if (resource.resourceType === 'Bundle') {
    for (const entry of arrayAt(resource, 'entry')) {
      collect(isObject(entry) ? entry['resource'] : undefined, stringAt(entry, 'fullUrl'), depth + 1, out);
    }
    return;
  }
  if (resource.resourceType === 'OperationOutcome') {
    out.notes.push(outcomeNote(resource));
    return;
  }
  out.entries.push({ resource, fullUrl });
}

/** Every resource in `value`, Bundles opened, OperationOutcomes turned into notes. Never throws. */
export function flattenResources(value: unknown): Flattened {
  const out: Collected = { entries: [], notes: [] };
  collect(value, undefined, 0, out);
  return out;
}

/**
 * The `Type/id` a draft is known by. A resource without an id gets its entry's fullUrl, or a
 * position-based name; suggestions cannot update those, but the order is still checked.
 */
export function referenceOf(entry: Entry, index: number): string {
  if (entry.resource.id !== undefined) {
    return `${entry.resource.resourceType}/${entry.resource.id}`;
  }
  return entry.fullUrl ?? `${entry.resource.resourceType}/entry-${index + 1}`;
}

/** True when a selection (or reference) such as `MedicationRequest/103`, or a URL ending so, names the entry. */
export function referenceMatches(entry: Entry, index: number, wanted: string): boolean {
  const own = referenceOf(entry, index);
  if (wanted === own || (entry.fullUrl !== undefined && wanted === entry.fullUrl)) {
    return true;
  }
  return entry.resource.id !== undefined && wanted.endsWith(`/${own}`);
}
