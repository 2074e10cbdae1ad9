import {
  expandPrefetchTemplate,
  PREFETCH_KEYS,
  type PrefetchKey,
} from '../cds/services.js';
import type { FhirFallbackLimits } from '../config/env-config.js';
import type { FhirResource, GatheredData } from '../fhir/gathered-data.js';
import type { FallbackSummary } from '../log/logger.js';
import type { UnavailablePrefetch } from './errors.js';
import { getFhirJson, isUnderServer, resolveUnderServer, type FhirFetchOutcome } from './fhir-client.js';
import { readPrefetchKey, readPrefetchValue, type PrefetchReading } from './read-prefetch.js';

/**
 * Turns `request.prefetch` into GatheredData, fetching what is missing from `fhirServer` when, and
 * only when, the request carries both `fhirServer` and `fhirAuthorization` (CDS Hooks 2.0 §FHIR
 * Resource Access). Required data still unobtainable means 412 (§Prefetch Template); optional data
 * is named in `missing` and the call goes on.
 */

/** The parts of a validated hook request this step reads. */
export interface GatherRequest {
  readonly fhirServer?: string | undefined;
  readonly fhirAuthorization?: { readonly access_token: string } | undefined;
  readonly prefetch?: Readonly<Record<string, unknown>> | undefined;
  readonly context: Readonly<Record<string, unknown>>;
}

export type GatherOutcome =
  | { readonly kind: 'gathered'; readonly data: GatheredData; readonly fallback: FallbackSummary }
  | {
      readonly kind: 'unavailable';
      readonly unavailable: readonly UnavailablePrefetch[];
      readonly fallback: FallbackSummary;
    };

/** `templates` is the service's prefetch map (key → template), as declared in discovery. */
export type Gather = (
  request: GatherRequest,
  templates: Readonly<Partial<Record<PrefetchKey, string>>>,
) => Promise<GatherOutcome>;

type Field = 'patient' | 'encounter' | 'observations' | 'conditions' | 'activeOrders';

/** Where each key's resources go, and the one resource type kept from it (a search may `_include`). */
const DESTINATION: Readonly<Record<PrefetchKey, { field: Field; resourceType: string }>> = {
  patient: { field: 'patient', resourceType: 'Patient' },
  encounter: { field: 'encounter', resourceType: 'Encounter' },
  observations: { field: 'observations', resourceType: 'Observation' },
  conditions: { field: 'conditions', resourceType: 'Condition' },
  medicationRequests: { field: 'activeOrders', resourceType: 'MedicationRequest' },
  serviceRequests: { field: 'activeOrders', resourceType: 'ServiceRequest' },
};

type KeyResult =
  | { readonly kind: 'had'; readonly resources: readonly FhirResource[]; readonly fetched: boolean; readonly incomplete: boolean }
  | { readonly kind: 'not-applicable' }
  | { readonly kind: 'unobtainable'; readonly reason: string; readonly fetched: boolean };

const FAILURE_TEXT: Readonly<Record<string, string>> = {
  timeout: 'the FHIR server did not answer in time',
  network: 'the FHIR server could not be reached',
  redirect: 'the FHIR server answered with a redirect, which is not followed',
  'http-status': 'the FHIR server answered with an error status',
  'too-large': 'the FHIR server response was larger than the size limit',
  'invalid-json': 'the FHIR server response was not JSON',
  'not-fhir': 'the FHIR server response was not a FHIR resource',
  'outside-server': 'the query would leave the FHIR server base URL',
};

function describeFailure(outcome: Extract<FhirFetchOutcome, { kind: 'failed' }>): string {
  const text = FAILURE_TEXT[outcome.failure] ?? 'the FHIR request failed';
  return outcome.status === undefined ? text : `${text} (HTTP ${outcome.status})`;
}

interface FetchScope {
  readonly fetch: typeof fetch;
  readonly fhirServer: string;
  readonly accessToken: string;
  readonly budget: AbortSignal;
  readonly limits: FhirFallbackLimits;
  /** How many FHIR requests this hook call made, for the summary line. */
  readonly calls: { count: number };
}

function callFhir(url: URL, scope: FetchScope): Promise<FhirFetchOutcome> {
  scope.calls.count += 1;
  return getFhirJson(url, {
    fetch: scope.fetch,
    accessToken: scope.accessToken,
    signal: AbortSignal.any([scope.budget, AbortSignal.timeout(scope.limits.callTimeoutMs)]),
    maxResponseBytes: scope.limits.maxResponseBytes,
  });
}

/** Follows `next` links on the FHIR server, up to `maxPages` pages in all (the first included). */
async function followPages(
  first: Extract<PrefetchReading, { kind: 'resources' }>,
  scope: FetchScope | undefined,
): Promise<{ resources: FhirResource[]; incomplete: boolean }> {
  const resources = [...first.resources];
  let next = first.nextUrl;
  let pages = 1;
  while (next !== undefined) {
    if (scope === undefined || pages >= scope.limits.maxPages) {
      return { resources, incomplete: true };
    }
    let url: URL;
    try {
      url = new URL(next, `${scope.fhirServer.replace(/\/+$/, '')}/`);
    } catch {
      return { resources, incomplete: true };
    }
    if (!isUnderServer(url, scope.fhirServer)) {
      return { resources, incomplete: true };
    }
    const outcome = await callFhir(url, scope);
    const page = outcome.kind === 'ok' ? readPrefetchValue(true, outcome.resource) : undefined;
    if (page === undefined || page.kind === 'absent' || page.kind === 'unusable') {
      return { resources, incomplete: true };
    }
    pages += 1;
    if (page.kind === 'empty') {
      break;
    }
    resources.push(...page.resources);
    next = page.nextUrl;
  }
  return { resources, incomplete: false };
}

async function gatherKey(
  key: PrefetchKey,
  template: string,
  request: GatherRequest,
  scope: FetchScope | undefined,
): Promise<KeyResult> {
  const supplied = readPrefetchKey(request.prefetch, key);
  if (supplied.kind === 'empty') {
    return { kind: 'had', resources: [], fetched: false, incomplete: false };
  }
  if (supplied.kind === 'resources') {
    const paged = await followPages(supplied, scope);
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
    return { kind: 'unobtainable', fetched: true, reason: `${why}, and ${describeFailure(outcome)}` };
  }
  const reading = readPrefetchValue(true, outcome.resource);
  if (reading.kind === 'resources') {
    const paged = await followPages(reading, scope);
    return { kind: 'had', resources: paged.resources, fetched: true, incomplete: paged.incomplete };
  }
  if (reading.kind === 'empty') {
    return { kind: 'had', resources: [], fetched: true, incomplete: false };
  }
  const detail = reading.kind === 'unusable' ? reading.reason : 'no data';
  return { kind: 'unobtainable', fetched: true, reason: `${why}, and the FHIR server answer: ${detail}` };
}

function assemble(
  results: ReadonlyMap<PrefetchKey, KeyResult>,
  missing: readonly string[],
): GatheredData {
  const lists: Record<Field, FhirResource[]> = {
    patient: [],
    encounter: [],
    observations: [],
    conditions: [],
    activeOrders: [],
  };
  for (const [key, result] of results) {
    if (result.kind === 'had') {
      const { field, resourceType } = DESTINATION[key];
      lists[field].push(...result.resources.filter((r) => r.resourceType === resourceType));
    }
  }
  return {
    patient: lists.patient[0],
    encounter: lists.encounter[0],
    observations: lists.observations,
    conditions: lists.conditions,
    activeOrders: lists.activeOrders,
    missing,
  };
}

function isPrefetchKey(key: string): key is PrefetchKey {
  return Object.hasOwn(PREFETCH_KEYS, key);
}

export interface GatherDeps {
  readonly fetch: typeof fetch;
  readonly limits: FhirFallbackLimits;
}

/** Builds the gather step. All keys are gathered in parallel inside one overall time budget. */
export function createGatherer(deps: GatherDeps): Gather {
  return async (request, templates) => {
    const token = request.fhirAuthorization?.access_token;
    const scope: FetchScope | undefined =
      request.fhirServer !== undefined && token !== undefined
        ? {
            fetch: deps.fetch,
            fhirServer: request.fhirServer,
            accessToken: token,
            budget: AbortSignal.timeout(deps.limits.budgetMs),
            limits: deps.limits,
            calls: { count: 0 },
          }
        : undefined;
    const keys = Object.keys(templates).filter(isPrefetchKey);
    const settled = await Promise.all(
      keys.map(async (key) => [key, await gatherKey(key, templates[key] ?? '', request, scope)] as const),
    );
    const results = new Map(settled);
    const unavailable: UnavailablePrefetch[] = [];
    const missing: string[] = [];
    const keysFetched: string[] = [];
    const keysFailed: string[] = [];
    const keysIncomplete: string[] = [];
    for (const [key, result] of results) {
      if (result.kind === 'not-applicable') {
        continue;
      }
      if (result.fetched && result.kind === 'had') {
        keysFetched.push(key);
      }
      if (result.kind === 'had' && result.incomplete) {
        keysIncomplete.push(key);
      }
      if (result.kind === 'unobtainable') {
        if (result.fetched) {
          keysFailed.push(key);
        }
        if (PREFETCH_KEYS[key].required) {
          unavailable.push({ key, reason: result.reason });
        } else {
          missing.push(key);
        }
      }
    }
    const fallback: FallbackSummary = {
      used: (scope?.calls.count ?? 0) > 0,
      keysFetched,
      keysFailed,
      keysIncomplete,
    };
    return unavailable.length > 0
      ? { kind: 'unavailable', unavailable, fallback }
      : { kind: 'gathered', data: assemble(results, missing), fallback };
  };
}
