import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { discoveryResponse } from '../../src/cds/services.js';
import { ENV_DEFAULTS } from '../../src/config/env-config.js';
import { createGatherer } from '../../src/http/gather-data.js';
import { context, copd, encounter, fhirAuthorization, fullPrefetch, patient, respRate, searchset, spo2 } from './larkspur-fixtures.js';
import { startFhirServer, type FhirTestServer, type Reply } from './fhir-test-server.js';

/**
 * The FHIR fallback's one deadline (src/http/fhir-deadline.ts) against a loopback FHIR server that is
 * slow page by page, hangs, or answers at once while the service's own event loop is busy. Times are
 * asserted only as upper bounds with generous slack (the machine is shared); what is checked is the
 * outcome: answered by the deadline, with what was read by then, and no answer thrown away.
 */

const templates = discoveryResponse().services[0]?.prefetch ?? {};

/** The shipped defaults: 2 s for the whole fallback, pages included (issue target; CDS Hooks 2.0 asks ~500 ms). */
const DEFAULT_LIMITS = {
  callTimeoutMs: ENV_DEFAULTS.OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS,
  budgetMs: ENV_DEFAULTS.OXYGEN_CHECKER_FHIR_BUDGET_MS,
  maxResponseBytes: ENV_DEFAULTS.OXYGEN_CHECKER_FHIR_MAX_RESPONSE_BYTES,
  maxPages: ENV_DEFAULTS.OXYGEN_CHECKER_FHIR_MAX_PAGES,
};

/** Slack for a loaded, shared machine; still well below what any of the faults would cost without a deadline. */
const SLACK_MS = 1200;

/** How the server answers Observation searches in the current test. */
let observations: 'slow-pages' | 'hang' | 'at-once-then-busy' = 'slow-pages';
/** How long the event loop is kept busy, for `at-once-then-busy`. */
let busyMs = 0;

function busyLoop(ms: number): void {
  const until = performance.now() + ms;
  while (performance.now() < until) {
    // The service's own CPU work, as under load: nothing else on this event loop runs meanwhile.
  }
}

let fhir: FhirTestServer;

function observationReply(url: URL, origin: string): Reply {
  const page = Number(url.searchParams.get('page') ?? '1');
  const next = [{ relation: 'next', url: `${origin}/fhir/Observation?page=${page + 1}` }];
  switch (observations) {
    case 'slow-pages':
      return { status: 200, body: searchset([page === 1 ? spo2 : respRate], next), delayMs: 700 };
    case 'hang':
      return { status: 200, body: searchset([spo2]), delayMs: 60_000 };
    case 'at-once-then-busy':
      // The answer goes out now; then the (shared) event loop is busy past the deadline.
      setImmediate(() => busyLoop(busyMs));
      return { status: 200, body: searchset([spo2]) };
  }
}

beforeAll(async () => {
  fhir = await startFhirServer((request, origin) => {
    const url = new URL(request.url, origin);
    const path = url.pathname.replace(/^\/fhir\//, '');
    if (path.startsWith('Patient/')) return { status: 200, body: patient };
    if (path.startsWith('Encounter/')) return { status: 200, body: encounter };
    if (path === 'Observation') return observationReply(url, origin);
    if (path === 'Condition') return { status: 200, body: searchset([copd]) };
    return { status: 200, body: searchset([]) };
  });
});

afterAll(async () => {
  await fhir.close();
});

beforeEach(() => {
  fhir.requests.length = 0;
  busyMs = 0;
});

/** Everything prefetched but the observations, which the service must read itself. */
function withoutObservations() {
  const { observations: _dropped, ...prefetch } = fullPrefetch;
  return { fhirServer: fhir.baseUrl, fhirAuthorization, context, prefetch };
}

async function timed<T>(run: () => Promise<T>): Promise<{ result: T; elapsedMs: number }> {
  const started = performance.now();
  const result = await run();
  return { result, elapsedMs: performance.now() - started };
}

describe('the FHIR fallback deadline', () => {
  it('is 2 s by default, every request and page included, with no single request allowed longer', () => {
    // Issue 9 target: the fallback's deadline holds at 2 s (CDS Hooks 2.0 §Providing FHIR Resources: ~500 ms answers).
    expect(DEFAULT_LIMITS.budgetMs).toBe(2000);
    expect(DEFAULT_LIMITS.callTimeoutMs).toBeLessThanOrEqual(DEFAULT_LIMITS.budgetMs);
  });

  it('answers by the deadline when every page takes 700 ms, with the pages read by then', async () => {
    observations = 'slow-pages';
    const gather = createGatherer({ fetch: globalThis.fetch, limits: DEFAULT_LIMITS });
    const { result, elapsedMs } = await timed(() => gather(withoutObservations(), templates));
    // Five pages of 700 ms would be 3.5 s; the deadline stops the walk at 2 s.
    expect(elapsedMs).toBeLessThan(DEFAULT_LIMITS.budgetMs + SLACK_MS);
    expect(result.kind).toBe('gathered');
    if (result.kind !== 'gathered') return;
    expect(result.data.observations.length).toBeGreaterThanOrEqual(1);
    expect(result.data.observations.length).toBeLessThan(DEFAULT_LIMITS.maxPages);
    expect(result.data.observations[0]).toStrictEqual(spo2);
    expect(result.fallback.keysIncomplete).toStrictEqual(['observations']);
    expect(result.data.missing).toContain('observations (incomplete: more results than could be read)');
  });

  it('answers by the deadline when the server hangs, naming the key it could not read', async () => {
    observations = 'hang';
    const gather = createGatherer({
      fetch: globalThis.fetch,
      // The per-request timeout above the deadline, so only the deadline can end the wait.
      limits: { ...DEFAULT_LIMITS, callTimeoutMs: 60_000 },
    });
    const { result, elapsedMs } = await timed(() => gather(withoutObservations(), templates));
    expect(elapsedMs).toBeLessThan(DEFAULT_LIMITS.budgetMs + SLACK_MS);
    expect(result).toStrictEqual({
      kind: 'unavailable',
      unavailable: [{ key: 'observations', reason: 'was not prefetched, and the FHIR server did not answer in time' }],
      fallback: { used: true, keysFetched: [], keysFailed: ['observations'], keysIncomplete: [] },
    });
  });

  describe('under the service’s own CPU load', () => {
    const tight = { ...DEFAULT_LIMITS, callTimeoutMs: 500, budgetMs: 500 };
    /** Busy for about the timeout's length, and past it: the timers are due before the socket is read. */
    const BUSY_MS = tight.budgetMs + 100;

    it('uses an answer that arrived while the event loop was busy past the deadline', async () => {
      observations = 'at-once-then-busy';
      busyMs = BUSY_MS;
      const gather = createGatherer({ fetch: globalThis.fetch, limits: tight });
      const result = await gather(withoutObservations(), templates);
      expect(result.kind === 'gathered' && result.data.observations).toStrictEqual([spo2]);
      expect(result.kind === 'gathered' && result.fallback.keysFetched).toStrictEqual(['observations']);
    });

    it('does not charge the server for a busy spell before the request could even be sent', async () => {
      observations = 'at-once-then-busy';
      const gather = createGatherer({ fetch: globalThis.fetch, limits: tight });
      const pending = gather(withoutObservations(), templates);
      busyLoop(BUSY_MS);
      const result = await pending;
      expect(result.kind === 'gathered' && result.data.observations).toStrictEqual([spo2]);
    });
  });
});
