import type { ClaimLimits } from '../../../src/security/jwt-claims.js';
import { createJwksStore } from '../../../src/security/jwks-store.js';
import { createJwtVerifier } from '../../../src/security/jwt-verifier.js';
import { createProductionAuthenticator } from '../../../src/security/production-authenticator.js';
import { createStoreReplayCache } from '../../../src/security/store-replay-cache.js';
import type { FeedbackInput, Store } from '../../../src/store/store.js';
import type { AppConfig, AppDeps } from '../../../src/http/app.js';
import type { Authenticate } from '../../../src/http/auth.js';
import { createGatherer, type Gather } from '../../../src/http/gather-data.js';
import { createLogger, type Logger } from '../../../src/log/logger.js';
import { openTempStore } from '../../helpers/temp-store.js';
import { buildTestApp, TEST_CONFIG, type TestApp } from '../../http/test-app.js';
import { ehrClient, NOW, PUBLIC_BASE, theatresClient, trustOf } from './fixtures.js';

/**
 * The app as production builds it (trust file, JWKS store, the replay cache in the store, verifier,
 * authenticator), with spies on the two places a handler reaches: the gather step of a service call
 * and the store's feedback write. A refused call must leave both untouched.
 */
export interface ProductionApp extends TestApp {
  /** One entry per service call that got as far as gathering data. */
  readonly gathered: unknown[];
  /** One entry per feedback item the feedback handler sent to the store. */
  readonly recorded: FeedbackInput[];
  /** The real store behind the app (a temporary directory unless `dataDir` was given). */
  readonly store: Store;
  readonly dataDir: string;
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
  /** Opens the store here (a simulated restart reuses a data directory); a fresh one otherwise. */
  readonly dataDir?: string;
  /** Live token ids per client in the replay cache (OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT). */
  readonly replayMaxPerClient?: number;
  /** Wraps the store the replay cache uses (to make it fail, say). */
  readonly replayStore?: (real: Store) => Store;
  /** Where the replay cache logs a store failure; silent otherwise. */
  readonly replayLogger?: Logger;
  /** Wraps the production authenticator (to count the calls that enter and leave it, say). */
  readonly watchAuthenticate?: (authenticate: Authenticate) => Authenticate;
  /** Awaited before a service call's data is gathered (to hold a call inside the app, say). */
  readonly beforeGather?: () => Promise<void>;
  /** Further dependencies of the app (its metrics, the overload gate's clock), as buildTestApp takes them. */
  readonly appDeps?: Partial<AppDeps>;
  /** Settings over TEST_CONFIG (the overload gate's limits, say). */
  readonly appConfig?: Partial<AppConfig>;
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
  const { store: realStore, dataDir } = openTempStore(options.dataDir);
  const verify = createJwtVerifier({
    trust,
    jwks,
    replayCache: createStoreReplayCache({
      store: options.replayStore === undefined ? realStore : options.replayStore(realStore),
      // the project default share (src/config/env-config.ts ENV_DEFAULTS)
      maxPerClient: options.replayMaxPerClient ?? 20_000,
      clock,
      logger: options.replayLogger ?? createLogger({ level: 'silent' }),
      // as the service sets it up (setup-authentication.ts)
      deferCommit: true,
    }),
    clock,
    // common practice: 60 s leeway; CDS Hooks best practices: client JWTs live at most 1 h
    limits: options.limits ?? { clockSkewS: 60, maxLifetimeS: 3600 },
  });
  const production = createProductionAuthenticator({
    verify,
    publicBaseUrl: options.publicBase ?? PUBLIC_BASE,
    requireHttpsFhirServers: options.requireHttpsFhirServers ?? requireHttps,
  });
  const authenticate = options.watchAuthenticate?.(production) ?? production;
  const gathered: unknown[] = [];
  const fhirFetch = options.fhirFetch ?? globalThis.fetch;
  const real = createGatherer({ fetch: fhirFetch, limits: TEST_CONFIG.fhir });
  const beforeGather = options.beforeGather;
  const gather: Gather = async (request, templates, gatherOptions) => {
    gathered.push(request);
    await beforeGather?.();
    return real(request, templates, gatherOptions);
  };
  const recorded: FeedbackInput[] = [];
  const store: Store = {
    ...realStore,
    recordFeedback: (client, items, receivedAt, limits) => {
      recorded.push(...items);
      return realStore.recordFeedback(client, items, receivedAt, limits);
    },
  };
  const built = await buildTestApp({ ...options.appDeps, authenticate, gather, store, clock, fetch: fhirFetch }, options.appConfig);
  return { ...built, gathered, recorded, store: realStore, dataDir };
}
