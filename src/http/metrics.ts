import { performance } from 'node:perf_hooks';
import type { RequestHandler } from 'express';
import { collectDefaultMetrics, Counter, Gauge, Histogram, Registry } from 'prom-client';
import type { PolicyHolder } from '../live-policy/policy-snapshot.js';
import type { ReplayCheck, StoredIndicator, Store } from '../store/store.js';
import type { OverloadReason } from './overload.js';
import { requestState } from './request-context.js';

/**
 * The service's Prometheus metrics (text format, prom-client), all named `oxygen_checker_*`, in a
 * registry of their own per app so tests can build several apps. Every label value comes from a
 * fixed set the code or the policy defines: route names, HTTP status codes, rule ids, card
 * indicators, outcome and reason words, store method names, and the policy's own id, version and
 * hash. Nothing a client sends (no patient id, token, URL or free text) ever becomes a label.
 */

/** How one request to a FHIR server ended: a 2xx, another status, or no answer (network, timeout, abort). */
export type FhirFetchOutcome = 'ok' | 'http-error' | 'failed';

/** The replay cache's answer to a token id: new, seen before, or the client's share is full. */
export type ReplayOutcome = 'fresh' | 'replayed' | 'refused';

export interface ServiceMetrics {
  readonly registry: Registry;
  /** One request answered (or dropped), from its summary line: route name, status, duration. */
  readonly requestFinished: (route: string, status: number, durationMs: number, serviceId?: string) => void;
  /** The cards of one hook call, by the rule that fired and the card's indicator. */
  readonly cardsIssued: (cards: readonly { readonly ruleId: string; readonly indicator: StoredIndicator }[]) => void;
  readonly fhirFetched: (outcome: FhirFetchOutcome, durationMs: number) => void;
  readonly overloadRefused: (reason: OverloadReason) => void;
  /** How long a hook call had waited when it was admitted to evaluation (overload.ts). */
  readonly hookAdmitted: (waitedMs: number) => void;
  readonly replayChecked: (outcome: ReplayOutcome) => void;
  /** A store call that rejected, by method name. */
  readonly storeFailed: (operation: keyof Store) => void;
}

const PREFIX = 'oxygen_checker_';

/**
 * Builds the metrics. The policy info gauge reads the holder at each scrape, so a reload shows on the
 * next scrape without the reloader knowing about metrics.
 */
export function createServiceMetrics(options: { readonly policy: PolicyHolder; readonly processMetrics?: boolean }): ServiceMetrics {
  const registry = new Registry();
  if (options.processMetrics ?? false) {
    collectDefaultMetrics({ register: registry, prefix: PREFIX });
  }
  const requests = new Counter({
    name: `${PREFIX}http_requests_total`,
    help: 'HTTP requests answered, by route name and status code, and for hook calls the CDS service.',
    labelNames: ['route', 'status', 'service'] as const,
    registers: [registry],
  });
  const latency = new Histogram({
    name: `${PREFIX}http_request_duration_seconds`,
    help: 'Time from a request arriving to its response closing, by route name and status code, and for hook calls the CDS service.',
    labelNames: ['route', 'status', 'service'] as const,
    // CDS Hooks 2.0 asks for answers "on the order of 500 ms": buckets are dense around it.
    buckets: [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10],
    registers: [registry],
  });
  const cards = new Counter({
    name: `${PREFIX}cards_total`,
    help: 'Cards returned by hook calls, by rule id and card indicator.',
    labelNames: ['rule_id', 'indicator'] as const,
    registers: [registry],
  });
  const fhirLatency = new Histogram({
    name: `${PREFIX}fhir_fetch_duration_seconds`,
    help: 'Time to the response headers of each request to a FHIR server, by outcome.',
    labelNames: ['outcome'] as const,
    buckets: [0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5],
    registers: [registry],
  });
  const fhirFailures = new Counter({
    name: `${PREFIX}fhir_fetch_failures_total`,
    help: 'Requests to a FHIR server that did not answer 2xx, by outcome (http-error or failed).',
    labelNames: ['outcome'] as const,
    registers: [registry],
  });
  const refusals = new Counter({
    name: `${PREFIX}overload_refusals_total`,
    help: 'Hook calls refused before evaluation: loop-delay (503), waited (503), shared-cap (503), client-share (429).',
    labelNames: ['reason'] as const,
    registers: [registry],
  });
  const waited = new Histogram({
    name: `${PREFIX}hook_wait_seconds`,
    help: 'Time hook calls admitted to evaluation had waited: the event loop delay when each arrived plus the time to its admission.',
    // Dense below OXYGEN_CHECKER_MAX_WAIT_MS (250 ms by default), which a call passes only while none is evaluated.
    buckets: [0.005, 0.01, 0.025, 0.05, 0.1, 0.15, 0.2, 0.25, 0.5, 1, 2.5],
    registers: [registry],
  });
  const replay = new Counter({
    name: `${PREFIX}replay_checks_total`,
    help: 'Token ids checked against the replay cache, by outcome: fresh, replayed, or refused (client share full).',
    labelNames: ['outcome'] as const,
    registers: [registry],
  });
  const storeErrors = new Counter({
    name: `${PREFIX}store_errors_total`,
    help: 'Store calls that failed, by store operation.',
    labelNames: ['operation'] as const,
    registers: [registry],
  });
  new Gauge({
    name: `${PREFIX}policy_info`,
    help: 'The policy in force: its id, version and sha256 content hash (always 1).',
    labelNames: ['id', 'version', 'hash'] as const,
    registers: [registry],
    collect() {
      const snapshot = options.policy.current();
      this.reset();
      this.set({ id: snapshot.policy.id, version: snapshot.policy.version, hash: snapshot.contentHash }, 1);
    },
  });

  return {
    registry,
    requestFinished(route, status, durationMs, serviceId) {
      // The service id is set only once it named one of ours, so the label's values are a fixed set.
      const labels = serviceId === undefined ? { route, status: String(status) } : { route, status: String(status), service: serviceId };
      requests.inc(labels);
      latency.observe(labels, durationMs / 1000);
    },
    cardsIssued(issued) {
      for (const card of issued) {
        cards.inc({ rule_id: card.ruleId, indicator: card.indicator });
      }
    },
    fhirFetched(outcome, durationMs) {
      fhirLatency.observe({ outcome }, durationMs / 1000);
      if (outcome !== 'ok') {
        fhirFailures.inc({ outcome });
      }
    },
    overloadRefused: (reason) => refusals.inc({ reason }),
    hookAdmitted: (waitedMs) => waited.observe(waitedMs / 1000),
    replayChecked: (outcome) => replay.inc({ outcome }),
    storeFailed: (operation) => storeErrors.inc({ operation }),
  };
}

/** A fetch that reports each request's outcome and time to headers; the URL is never recorded. */
export function measuredFetch(inner: typeof fetch, metrics: ServiceMetrics): typeof fetch {
  return async (input, init) => {
    const started = performance.now();
    try {
      const response = await inner(input, init);
      metrics.fhirFetched(response.ok ? 'ok' : 'http-error', performance.now() - started);
      return response;
    } catch (error) {
      metrics.fhirFetched('failed', performance.now() - started);
      throw error;
    }
  };
}

function replayOutcome(check: ReplayCheck): ReplayOutcome {
  switch (check.kind) {
    case 'fresh':
      return 'fresh';
    case 'replayed':
      return 'replayed';
    case 'client-full':
      return 'refused';
  }
}

/**
 * The store, counting every rejected call by method and the replay cache's answers. Each call goes
 * through one wrapper: the app wraps the store it uses, the server wraps the one token checks use.
 */
export function measuredStore(store: Store, metrics: ServiceMetrics): Store {
  const counted = <T>(operation: keyof Store, call: () => Promise<T>): Promise<T> => {
    let running: Promise<T>;
    try {
      running = call();
    } catch (error) {
      running = Promise.reject(error instanceof Error ? error : new Error(String(error)));
    }
    return running.catch((error: unknown) => {
      metrics.storeFailed(operation);
      throw error;
    });
  };
  return {
    recordAdvisories: (records) => counted('recordAdvisories', () => store.recordAdvisories(records)),
    recordFeedback: (client, items, receivedAt, limits) =>
      counted('recordFeedback', () => store.recordFeedback(client, items, receivedAt, limits)),
    checkAndRememberJti: (clientKey, jti, expiresAt, now, maxPerClient) =>
      counted('checkAndRememberJti', async () => {
        const check = await store.checkAndRememberJti(clientKey, jti, expiresAt, now, maxPerClient);
        metrics.replayChecked(replayOutcome(check));
        return check;
      }),
    rememberJtiAndRecordAdvisories: (token, records) =>
      counted('rememberJtiAndRecordAdvisories', async () => {
        const check = await store.rememberJtiAndRecordAdvisories(token, records);
        metrics.replayChecked(replayOutcome(check));
        return check;
      }),
    listAdvisories: (query) => counted('listAdvisories', () => store.listAdvisories(query)),
    getAdvisory: (cardUuid) => counted('getAdvisory', () => store.getAdvisory(cardUuid)),
    listUnmatchedFeedback: (limit, offset) => counted('listUnmatchedFeedback', () => store.listUnmatchedFeedback(limit, offset)),
    summarise: (query) => counted('summarise', () => store.summarise(query)),
    facets: () => counted('facets', () => store.facets()),
    purge: (cutoff, now) => counted('purge', () => store.purge(cutoff, now)),
    isEmpty: () => counted('isEmpty', () => store.isEmpty()),
    readiness: () => counted('readiness', () => store.readiness()),
    close: () => store.close(),
  };
}

/**
 * `GET /metrics`: the registry in Prometheus text format, served only where the settings allow
 * (app.ts). Not a JSON route, so it writes its own text answer; a failure goes to the error middleware.
 * In a cluster's worker `clusterText` gives every worker's metrics summed (src/cluster); when it
 * cannot (a worker did not answer in time), the scrape gets 503, which Prometheus counts as a failed
 * scrape, rather than a partial sum that would look like counters going back.
 */
export function metricsHandler(metrics: ServiceMetrics, clusterText?: () => Promise<string>): RequestHandler {
  return (_req, res, next) => {
    requestState(res).route = 'metrics';
    if (clusterText !== undefined) {
      clusterText().then(
        (text) => {
          res.status(200).setHeader('Content-Type', metrics.registry.contentType);
          res.end(text);
        },
        () => {
          res.status(503).setHeader('Content-Type', 'text/plain; charset=utf-8');
          res.end('metrics unavailable: not every worker answered in time\n');
        },
      );
      return;
    }
    metrics.registry.metrics().then(
      (text) => {
        res.status(200).setHeader('Content-Type', metrics.registry.contentType);
        res.end(text);
      },
      next,
    );
  };
}
