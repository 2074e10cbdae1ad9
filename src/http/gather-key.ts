import { expandPrefetchTemplate, type PrefetchKey } from '../cds/services.js';
import type { FhirFallbackLimits } from '../config/env-config.js';
import type { FhirResource } from '../fhir/gathered-data.js';
import {
  getFhirJson,
  resolveUnderServer,
  type FetchFailure,
  type FhirFetchOutcome,
} from './fhir-client.js';
import type { FallbackDeadline } from './fhir-deadline.js';
import { followPages, MAX_RESOURCES_PER_KEY, type PagingOptions } from './gather-pages.js';
import { readPrefetchKey, readPrefetchValue, type PrefetchReading } from './read-prefetch.js';
import { belongsToPatient } from './same-patient.js';

/**
 * One prefetch key: what the client sent (CDS Hooks 2.0 §Prefetch Template's five cases), pages
 * still to follow, and the FHIR read that replaces an absent or unusable value.
 */

/** The parts of a validated hook request this step reads. */
export interface GatherRequest {
  readonly fhirServer?: string | undefined;
  readonly fhirAuthorization?: { readonly access_token: string } | undefined;
  readonly prefetch?: Readonly<Record<string, unknown>> | undefined;
  readonly context: Readonly<Record<string, unknown>>;
}

export type Field = 'patient' | 'encounter' | 'observations' | 'conditions' | 'activeOrders';

/** Where each key's resources go, and the one resource type kept from it. */
export const DESTINATION: Readonly<Record<PrefetchKey, { field: Field; resourceType: string }>> = {
  patient: { field: 'patient', resourceType: 'Patient' },
  encounter: { field: 'encounter', resourceType: 'Encounter' },
  observations: { field: 'observations', resourceType: 'Observation' },
  conditions: { field: 'conditions', resourceType: 'Condition' },
  medicationRequests: { field: 'activeOrders', resourceType: 'MedicationRequest' },
  serviceRequests: { field: 'activeOrders', resourceType: 'ServiceRequest' },
  deviceRequests: { field: 'activeOrders', resourceType: 'DeviceRequest' },
};

export type KeyResult =
  | {
      readonly kind: 'had';
      readonly resources: readonly FhirResource[];
      readonly fetched: boolean;
      /** More pages existed than could be followed; the pages had are used. */
      readonly incomplete: boolean;
    }
  | { readonly kind: 'not-applicable' }
  | { readonly kind: 'unobtainable'; readonly reason: string; readonly fetched: boolean };

const FAILURE_TEXT: Readonly<Record<FetchFailure, string>> = {
  timeout: 'the FHIR server did not answer in time',
  network: 'the FHIR server could not be reached',
  interrupted: 'the FHIR server connection broke off during the answer',
  redirect: 'the FHIR server answered with a redirect, which is not followed',
  'http-status': 'the FHIR server answered with an error status',
  'too-large': 'the FHIR server response was larger than the size limit',
  'invalid-json': 'the FHIR server response was not JSON',
  'not-fhir': 'the FHIR server response was not a FHIR resource',
  'too-complex': 'the FHIR server response nested too deeply or held too long a list or text',
  'outside-server': 'the query would leave the FHIR server base URL',
};

function describeFailure(outcome: Extract<FhirFetchOutcome, { kind: 'failed' }>): string {
  const text = FAILURE_TEXT[outcome.failure];
  return outcome.status === undefined ? text : `${text} (HTTP ${outcome.status})`;
}

export interface FetchScope {
  readonly fetch: typeof fetch;
  readonly fhirServer: string;
  readonly accessToken: string;
  /** Shared by every request and page of the hook call (fhir-deadline.ts). */
  readonly deadline: FallbackDeadline;
  readonly limits: FhirFallbackLimits;
  /** How many FHIR requests this hook call made, for the summary line. */
  readonly calls: { count: number };
}

async function callFhir(url: URL, scope: FetchScope): Promise<FhirFetchOutcome> {
  if (scope.deadline.signal.aborted) {
    // Time is up: nothing more is asked; what was read so far is what the answer rests on.
    return { kind: 'failed', failure: 'timeout' };
  }
  scope.calls.count += 1;
  const { signal, release } = scope.deadline.request(scope.limits.callTimeoutMs);
  try {
    return await getFhirJson(url, {
      fetch: scope.fetch,
      accessToken: scope.accessToken,
      signal,
      maxResponseBytes: scope.limits.maxResponseBytes,
    });
  } finally {
    release();
  }
}

/** Which key, and whose data, a reading must be. */
interface KeyTarget {
  readonly key: PrefetchKey;
  readonly patientId: string | undefined;
}

/**
 * Keeps the key's own resource type (a search may `_include` others) and refuses the whole value
 * when any of it is another patient's: a client that mixes patients cannot be trusted for this key.
 */
function vet(reading: PrefetchReading, target: KeyTarget): PrefetchReading {
  if (reading.kind !== 'resources') {
    return reading;
  }
  const { resourceType, field } = DESTINATION[target.key];
  const own = reading.resources.filter((r) => r.resourceType === resourceType);
  const { patientId } = target;
  if (patientId !== undefined && own.some((r) => !belongsToPatient(r, patientId))) {
    return { kind: 'unusable', reason: "it holds another patient's data" };
  }
  if (own.length === 0 && reading.nextUrl === undefined) {
    const isRead = field === 'patient' || field === 'encounter';
    // A search that found nothing is an empty Bundle; one holding only other resource types (a
    // Patient where Observations were asked for) is a wrong answer, not "none on record".
    return isRead || reading.resources.length > 0
      ? { kind: 'unusable', reason: `it holds no ${resourceType}` }
      : { kind: 'empty' };
  }
  return { kind: 'resources', resources: own, nextUrl: reading.nextUrl };
}

function pagingOptions(target: KeyTarget, scope: FetchScope | undefined, firstUrl: URL | undefined): PagingOptions {
  return {
    fhirServer: scope?.fhirServer,
    firstUrl,
    maxPages: scope?.limits.maxPages ?? 1,
    fetchPage: async (url) => {
      if (scope === undefined) {
        return undefined;
      }
      const outcome = await callFhir(url, scope);
      return outcome.kind === 'ok' ? vet(readPrefetchValue(true, outcome.resource), target) : undefined;
    },
  };
}

function keyTarget(key: PrefetchKey, request: GatherRequest): KeyTarget {
  const patientId = request.context['patientId'];
  return { key, patientId: typeof patientId === 'string' ? patientId : undefined };
}

/**
 * The key's result from what the client sent alone, when that settles it: a value with no further
 * page, or no usable value where the service could not ask the FHIR server anyway (the template does
 * not expand, or the request gave no FHIR server access). Undefined when the FHIR server must be
 * asked; then {@link gatherKey} gives the same result as this for every key this settles, so a call
 * whose prefetch is complete needs no promise per key.
 */
export function settleFromPrefetch(
  key: PrefetchKey,
  template: string,
  request: GatherRequest,
  canFetch: boolean,
): KeyResult | undefined {
  const supplied = vet(readPrefetchKey(request.prefetch, key), keyTarget(key, request));
  if (supplied.kind === 'empty') {
    return { kind: 'had', resources: [], fetched: false, incomplete: false };
  }
  if (supplied.kind === 'resources') {
    if (supplied.nextUrl !== undefined && canFetch) {
      return undefined;
    }
    // As followPages: at most MAX_RESOURCES_PER_KEY kept; a next page that cannot be read makes the key incomplete.
    const { resources } = supplied;
    return {
      kind: 'had',
      resources: resources.slice(0, MAX_RESOURCES_PER_KEY),
      fetched: false,
      incomplete: resources.length > MAX_RESOURCES_PER_KEY || supplied.nextUrl !== undefined,
    };
  }
  if (expandPrefetchTemplate(template, request.context) === undefined) {
    return { kind: 'not-applicable' };
  }
  if (canFetch) {
    return undefined;
  }
  const why = supplied.kind === 'absent' ? 'was not prefetched' : `was unusable: ${supplied.reason}`;
  return {
    kind: 'unobtainable',
    fetched: false,
    reason: `${why}, and the request gave no FHIR server access (fhirServer with fhirAuthorization)`,
  };
}

export async function gatherKey(
  key: PrefetchKey,
  template: string,
  request: GatherRequest,
  scope: FetchScope | undefined,
): Promise<KeyResult> {
  const target = keyTarget(key, request);
  const supplied = vet(readPrefetchKey(request.prefetch, key), target);
  if (supplied.kind === 'empty') {
    return { kind: 'had', resources: [], fetched: false, incomplete: false };
  }
  if (supplied.kind === 'resources') {
    const paged = await followPages(supplied, pagingOptions(target, scope, undefined));
    return { kind: 'had', resources: paged.resources, fetched: false, incomplete: paged.incomplete };
  }
  const why = supplied.kind === 'absent' ? 'was not prefetched' : `was unusable: ${supplied.reason}`;
  const relative = expandPrefetchTemplate(template, request.context);
  if (relative === undefined) {
    // e.g. no encounterId in the context: there is nothing to ask for.
    return { kind: 'not-applicable' };
  }
  if (scope === undefined) {
    return {
      kind: 'unobtainable',
      fetched: false,
      reason: `${why}, and the request gave no FHIR server access (fhirServer with fhirAuthorization)`,
    };
  }
  const url = resolveUnderServer(relative, scope.fhirServer);
  const outcome: FhirFetchOutcome =
    url === undefined ? { kind: 'failed', failure: 'outside-server' } : await callFhir(url, scope);
  if (outcome.kind === 'not-found') {
    return { kind: 'had', resources: [], fetched: true, incomplete: false };
  }
  if (outcome.kind === 'failed') {
    const reason = `${why}, and ${describeFailure(outcome)}`;
    return { kind: 'unobtainable', fetched: true, reason };
  }
  const reading = vet(readPrefetchValue(true, outcome.resource), target);
  if (reading.kind === 'resources') {
    const paged = await followPages(reading, pagingOptions(target, scope, url));
    return { kind: 'had', resources: paged.resources, fetched: true, incomplete: paged.incomplete };
  }
  if (reading.kind === 'empty') {
    return { kind: 'had', resources: [], fetched: true, incomplete: false };
  }
  const detail = reading.kind === 'unusable' ? reading.reason : 'no data';
  return {
    kind: 'unobtainable',
    fetched: true,
    reason: `${why}, and the FHIR server answer was unusable: ${detail}`,
  };
}
