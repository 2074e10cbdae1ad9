import { flattenResources, referenceMatches } from './bundle-entries.js';
import type { FhirResource } from './gathered-data.js';

/**
 * Finds the draft resource a reference names (`MedicationRequest/103`, or a URL ending so, or an
 * entry's fullUrl) in the context.draftOrders Bundle as sent. Returns the resource as sent (not a
 * copy); undefined when the bundle is unreadable or holds no such resource. Never throws.
 */
export function findDraftResource(draftOrders: unknown, reference: string): FhirResource | undefined {
  if (typeof reference !== 'string' || reference.trim() === '') {
    return undefined;
  }
  const wanted = reference.trim();
  const { entries } = flattenResources(draftOrders);
  const index = entries.findIndex((entry, i) => referenceMatches(entry, i, wanted));
  return index === -1 ? undefined : entries[index]?.resource;
}
