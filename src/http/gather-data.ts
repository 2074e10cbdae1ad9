import { PREFETCH_KEYS, type PrefetchKey } from '../cds/services.js';
import type { FhirFallbackLimits } from '../config/env-config.js';
import type { FhirResource, GatheredData } from '../fhir/gathered-data.js';
import type { FallbackSummary } from '../log/logger.js';
import type { UnavailablePrefetch } from './errors.js';
import { startFallbackDeadline } from './fhir-deadline.js';
import {
  DESTINATION,
  gatherKey,
  settleFromPrefetch,
  type FetchScope,
  type Field,
  type GatherRequest,
  type KeyResult,
} from './gather-key.js';

export type { GatherRequest } from './gather-key.js';

/**
 * Turns `request.prefetch` into GatheredData, fetching what is missing from `fhirServer` when, and
 * only when, the request carries both `fhirServer` and `fhirAuthorization` (CDS Hooks 2.0 §FHIR
 * Resource Access). Required data still unobtainable means 412 (§Prefetch Template); optional data
 * is named in `missing` and the call goes on, as is any key read only in part (`incompleteEntry`).
 */

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
  options?: GatherOptions,
) => Promise<GatherOutcome>;

export interface GatherOptions {
  /**
   * Awaited before the first request to `fhirServer` (and so before `fhirAuthorization` leaves the
   * service); when it rejects, nothing is sent. The hook route commits the call's token id here.
   */
  readonly beforeFetch?: () => Promise<void>;
}

/** `fetch`, each call first waiting for `before`, so a refusal there sends nothing. */
function fetchAfter(before: () => Promise<void>, fetchFn: typeof fetch): typeof fetch {
  return async (input, init) => {
    await before();
    return fetchFn(input, init);
  };
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

/**
 * How `GatheredData.missing` names a key whose search had more results than were read (page cap,
 * resource cap, a `next` link that loops or leaves the FHIR server, a page that failed): the key name
 * first, so the entry still says which data it is about.
 */
export function incompleteEntry(key: PrefetchKey): string {
  return `${key} (incomplete: more results than could be read)`;
}

function isPrefetchKey(key: string): key is PrefetchKey {
  return Object.hasOwn(PREFETCH_KEYS, key);
}

export interface GatherDeps {
  readonly fetch: typeof fetch;
  readonly limits: FhirFallbackLimits;
}

/**
 * Builds the gather step. All keys are gathered in parallel inside one deadline of `budgetMs`, which
 * every request and every next page shares; at the deadline the answer rests on what was read by
 * then (a page not read makes its key incomplete; a key not read at all is missing or, if required,
 * a 412).
 */
export function createGatherer(deps: GatherDeps): Gather {
  return (request, templates, options) => {
    // With every key settled by the prefetch (the usual call), the answer is ready at once: one
    // resolved promise, rather than one per key and the deadline's start and close.
    let settled: ReadonlyMap<PrefetchKey, KeyResult> | undefined;
    try {
      settled = settleAllFromPrefetch(request, templates);
    } catch {
      // The general path meets the same fault and rejects with it, as a promise should.
      settled = undefined;
    }
    return settled === undefined
      ? gatherWithFallback(deps, request, templates, options)
      : Promise.resolve(summarise(settled, 0));
  };
}

function canFetch(request: GatherRequest): boolean {
  return request.fhirServer !== undefined && request.fhirAuthorization?.access_token !== undefined;
}

/** Every key's result from the prefetch alone, or undefined when any key needs the FHIR server. */
function settleAllFromPrefetch(
  request: GatherRequest,
  templates: Readonly<Partial<Record<PrefetchKey, string>>>,
): Map<PrefetchKey, KeyResult> | undefined {
  const fetchAllowed = canFetch(request);
  const results = new Map<PrefetchKey, KeyResult>();
  for (const key of Object.keys(templates)) {
    if (!isPrefetchKey(key)) {
      continue;
    }
    const result = settleFromPrefetch(key, templates[key] ?? '', request, fetchAllowed);
    if (result === undefined) {
      return undefined;
    }
    results.set(key, result);
  }
  return results;
}

async function gatherWithFallback(
  deps: GatherDeps,
  request: GatherRequest,
  templates: Readonly<Partial<Record<PrefetchKey, string>>>,
  options: GatherOptions | undefined,
): Promise<GatherOutcome> {
  const token = request.fhirAuthorization?.access_token;
  const before = options?.beforeFetch;
  const scope: FetchScope | undefined =
    request.fhirServer !== undefined && token !== undefined
      ? {
          fetch: before === undefined ? deps.fetch : fetchAfter(before, deps.fetch),
          fhirServer: request.fhirServer,
          accessToken: token,
          deadline: startFallbackDeadline({ budgetMs: deps.limits.budgetMs }),
          limits: deps.limits,
          calls: { count: 0 },
        }
      : undefined;
  const keys = Object.keys(templates).filter(isPrefetchKey);
  let settled: (readonly [PrefetchKey, KeyResult])[];
  try {
    settled = await Promise.all(
      keys.map(async (key) => {
        const result = await gatherKey(key, templates[key] ?? '', request, scope);
        return [key, result] as const;
      }),
    );
  } finally {
    scope?.deadline.close();
  }
  return summarise(new Map(settled), scope?.calls.count ?? 0);
}

/** The outcome from each key's result: a 412 when a required key could not be had, else the data. */
function summarise(results: ReadonlyMap<PrefetchKey, KeyResult>, fhirCalls: number): GatherOutcome {
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
      // Named on the card like a missing key: a risk factor on an unread page can change the target.
      missing.push(incompleteEntry(key));
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
    used: fhirCalls > 0,
    keysFetched,
    keysFailed,
    keysIncomplete,
  };
  return unavailable.length > 0
    ? { kind: 'unavailable', unavailable, fallback }
    : { kind: 'gathered', data: assemble(results, missing), fallback };
}
