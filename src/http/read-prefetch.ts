import { asFhirResource, type FhirResource } from '../fhir/gathered-data.js';

/**
 * What one prefetch value says, in the five cases CDS Hooks 2.0 §Prefetch Template asks a service to
 * handle: key absent (not satisfied), `null` (looked, found nothing), a searchset Bundle (perhaps with
 * a `next` page), an OperationOutcome (the client hit an error), or a resource (a read). The same
 * reading serves the service's own FHIR responses, which have the same shapes.
 */
export type PrefetchReading =
  | { readonly kind: 'absent' }
  | { readonly kind: 'empty' }
  | {
      readonly kind: 'resources';
      readonly resources: readonly FhirResource[];
      /** `link[relation=next].url`, when the Bundle has more pages. */
      readonly nextUrl: string | undefined;
    }
  | { readonly kind: 'unusable'; readonly reason: string };

/** FHIR R4 IssueSeverity: `fatal` and `error` mean the data cannot be trusted as complete. */
function reportsError(outcome: FhirResource): boolean {
  const issues = outcome['issue'];
  return (
    Array.isArray(issues) &&
    issues.some((issue: unknown) => {
      const severity = (issue as { severity?: unknown } | null)?.severity;
      return severity === 'error' || severity === 'fatal';
    })
  );
}

function nextLink(bundle: FhirResource): string | undefined {
  const links = bundle['link'];
  if (!Array.isArray(links)) {
    return undefined;
  }
  for (const link of links as unknown[]) {
    const { relation, url } = (link ?? {}) as { relation?: unknown; url?: unknown };
    if (relation === 'next' && typeof url === 'string' && url !== '') {
      return url;
    }
  }
  return undefined;
}

/**
 * Flattens a Bundle. An OperationOutcome entry reporting an error makes the whole result unusable
 * (the client could not complete the search); one carrying only warnings or information (FHIR R4
 * `search.mode = outcome`) is dropped and the rest is used.
 */
function readBundle(bundle: FhirResource): PrefetchReading {
  const entries = bundle['entry'];
  const resources: FhirResource[] = [];
  if (entries !== undefined && !Array.isArray(entries)) {
    return { kind: 'unusable', reason: 'the Bundle entry element is not a list' };
  }
  for (const entry of (entries ?? []) as unknown[]) {
    const resource = asFhirResource((entry as { resource?: unknown } | null)?.resource);
    if (resource === undefined) {
      continue;
    }
    if (resource.resourceType === 'OperationOutcome') {
      if (reportsError(resource)) {
        return { kind: 'unusable', reason: 'the search result carried an OperationOutcome error' };
      }
      continue;
    }
    resources.push(resource);
  }
  const nextUrl = nextLink(bundle);
  if (resources.length === 0 && nextUrl === undefined) {
    return { kind: 'empty' };
  }
  return { kind: 'resources', resources, nextUrl };
}

/** Reads `prefetch[key]`. `present` distinguishes an absent key from one whose value is undefined. */
export function readPrefetchValue(present: boolean, value: unknown): PrefetchReading {
  if (!present) {
    return { kind: 'absent' };
  }
  if (value === null) {
    return { kind: 'empty' };
  }
  const resource = asFhirResource(value);
  if (resource === undefined) {
    return { kind: 'unusable', reason: 'the value is not a FHIR resource' };
  }
  if (resource.resourceType === 'OperationOutcome') {
    return { kind: 'unusable', reason: 'the value is an OperationOutcome (an error while prefetching)' };
  }
  if (resource.resourceType === 'Bundle') {
    return readBundle(resource);
  }
  return { kind: 'resources', resources: [resource], nextUrl: undefined };
}

/** Reads the prefetch entry for `key` from a request's (optional) prefetch object. */
export function readPrefetchKey(
  prefetch: Readonly<Record<string, unknown>> | undefined,
  key: string,
): PrefetchReading {
  const present = prefetch !== undefined && Object.hasOwn(prefetch, key);
  return readPrefetchValue(present, present ? prefetch[key] : undefined);
}
