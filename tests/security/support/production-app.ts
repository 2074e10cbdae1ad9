import type { ClaimLimits } from '../../../src/security/jwt-claims.js';
import { createJwksStore } from '../../../src/security/jwks-store.js';
import { createJwtVerifier } from '../../../src/security/jwt-verifier.js';
import { createProductionAuthenticator } from '../../../src/security/production-authenticator.js';
import { createMemoryReplayCache } from '../../../src/security/replay-cache.js';
import { createMemoryFeedbackStore, type FeedbackEntry } from '../../../src/http/feedback-store.js';
import { createGatherer, type Gather } from '../../../src/http/gather-data.js';
import { buildTestApp, TEST_CONFIG, type TestApp } from '../../http/test-app.js';
import { ehrClient, NOW, PUBLIC_BASE, theatresClient, trustOf } from './fixtures.js';

/**
 * The app as production builds it (trust file, JWKS store, replay cache, verifier, authenticator),
 * with spies on the two places a handler reaches: the gather step of a service call and the feedback
 * store. A refused call must leave both untouched.
 */
export interface ProductionApp extends TestApp {
  /** One entry per service call that got as far as gathering data. */
  readonly gathered: unknown[];
  /** One entry per feedback item the feedback handler recorded. */
  readonly recorded: FeedbackEntry[];
}

export interface ProductionAppOptions {
  readonly clients?: readonly Record<string, unknown>[];
  /** https for the trust file's URLs, JWKS fetches and fhirServers; false only for loopback servers. */
  readonly requireHttps?: boolean;
  /** Overrides requireHttps for the fhirServer check alone. */
  readonly requireHttpsFhirServers?: boolean;
  /** Used for JWKS fetches; FHIR calls always use the real fetch (to loopback servers). */
  readonly jwksFetch?: typeof fetch;
  readonly fhirFetch?: typeof fetch;
  readonly clock?: () => Date;
  readonly limits?: ClaimLimits;
  readonly publicBase?: string;
}

export async function buildProductionApp(options: ProductionAppOptions = {}): Promise<ProductionApp> {
  const requireHttps = options.requireHttps ?? true;
  const clock = options.clock ?? (() => NOW);
  const trust = trustOf(options.clients ?? [ehrClient(), theatresClient()], requireHttps);
  const jwks = createJwksStore({
    fetch: options.jwksFetch ?? globalThis.fetch,
    clock,
    timeoutMs: 1000,
    maxBytes: 65_536,
    requireHttps,
    ttlMs: 300_000,
    minRefreshIntervalMs: 60_000,
  });
  const verify = createJwtVerifier({
    trust,
    jwks,
    replayCache: createMemoryReplayCache({ maxEntries: 10_000, clock }),
    clock,
    // common practice: 60 s leeway; CDS Hooks best practices: client JWTs live at most 1 h
    limits: options.limits ?? { clockSkewS: 60, maxLifetimeS: 3600 },
  });
  const authenticate = createProductionAuthenticator({
    verify,
    publicBaseUrl: options.publicBase ?? PUBLIC_BASE,
    requireHttpsFhirServers: options.requireHttpsFhirServers ?? requireHttps,
  });
  const gathered: unknown[] = [];
  const fhirFetch = options.fhirFetch ?? globalThis.fetch;
  const real = createGatherer({ fetch: fhirFetch, limits: TEST_CONFIG.fhir });
  const gather: Gather = (request, templates) => {
    gathered.push(request);
    return real(request, templates);
  };
  const recorded: FeedbackEntry[] = [];
  const store = createMemoryFeedbackStore();
  const feedbackStore = {
    record: (entry: FeedbackEntry) => {
      recorded.push(entry);
      return store.record(entry);
    },
  };
  const built = await buildTestApp({ authenticate, gather, feedbackStore, clock, fetch: fhirFetch });
  return { ...built, gathered, recorded };
}
