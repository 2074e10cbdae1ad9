import type { SecurityConfig } from '../config/env-config.js';
import { allowEveryRequest, type Authenticate } from '../http/auth.js';
import type { Logger } from '../log/logger.js';
import { createJwksStore } from './jwks-store.js';
import { createJwtVerifier } from './jwt-verifier.js';
import { createProductionAuthenticator } from './production-authenticator.js';
import type { Store } from '../store/store.js';
import type { ReplayCache } from './replay-cache.js';
import { createStoreReplayCache } from './store-replay-cache.js';
import { formatTrustProblems, loadTrustFile } from './trust-config.js';

/**
 * Builds the authenticator for the configured mode at start-up. Production refuses to start, with
 * every problem in the trust file listed, rather than run with a partial trust configuration.
 */
export type AuthenticationSetup =
  | { readonly kind: 'demo'; readonly authenticate: Authenticate }
  | {
      readonly kind: 'production';
      readonly authenticate: Authenticate;
      readonly publicUrl: string;
      readonly trustedClients: number;
    }
  | { readonly kind: 'refused'; readonly problems: string };

export interface SetupDeps {
  readonly fetch: typeof fetch;
  readonly clock: () => Date;
  readonly logger: Logger;
  /** Holds the replay cache in production, so a token stays refused across restarts. */
  readonly store: Store;
  /** Told of each replay refused from this process's memory, before the store is asked (the metrics). */
  readonly onReplayInMemory?: () => void;
  /** Replaces the store-backed replay cache (tests only). */
  readonly replayCache?: ReplayCache;
}

export async function setUpAuthentication(security: SecurityConfig, deps: SetupDeps): Promise<AuthenticationSetup> {
  if (security.mode === 'demo') {
    return { kind: 'demo', authenticate: allowEveryRequest };
  }
  const loaded = await loadTrustFile(security.trustPath, { requireHttps: true });
  if (loaded.kind === 'invalid') {
    return { kind: 'refused', problems: formatTrustProblems(security.trustPath, loaded.problems) };
  }
  const { limits } = security;
  const jwks = createJwksStore({
    fetch: deps.fetch,
    clock: deps.clock,
    timeoutMs: limits.jwksTimeoutMs,
    maxBytes: limits.jwksMaxBytes,
    requireHttps: true,
    ttlMs: limits.jwksCacheTtlS * 1000,
    minRefreshIntervalMs: limits.jwksRefreshMinIntervalS * 1000,
    onEvent: (event) => {
      if (event.kind === 'fetched') {
        const fields = { jwks: 'fetched', iss: event.issuer, keyCount: event.keyCount, skipped: event.skipped };
        deps.logger.info(fields, 'client keys fetched');
      } else {
        const fields = { jwks: 'fetch-failed', iss: event.issuer, failure: event.failure };
        deps.logger.warn(fields, 'client keys could not be fetched');
      }
    },
  });
  const replayCache =
    deps.replayCache ??
    createStoreReplayCache({
      store: deps.store,
      maxPerClient: limits.replayMaxPerClient,
      clock: deps.clock,
      logger: deps.logger,
      // A hook call commits its token id with its cards, in one transaction (store-replay-cache.ts).
      deferCommit: true,
      ...(deps.onReplayInMemory === undefined ? {} : { onReplayInMemory: deps.onReplayInMemory }),
    });
  const verify = createJwtVerifier({
    trust: loaded.trust,
    jwks,
    replayCache,
    clock: deps.clock,
    limits: { clockSkewS: limits.clockSkewS, maxLifetimeS: limits.maxTokenLifetimeS },
  });
  return {
    kind: 'production',
    authenticate: createProductionAuthenticator({
      verify,
      publicBaseUrl: security.publicUrl,
      requireHttpsFhirServers: true,
    }),
    publicUrl: security.publicUrl,
    trustedClients: loaded.trust.clients.size,
  };
}
