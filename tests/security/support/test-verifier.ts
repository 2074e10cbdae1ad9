import { createJwksStore } from '../../../src/security/jwks-store.js';
import { createJwtVerifier, type VerifierDeps, type VerifyToken } from '../../../src/security/jwt-verifier.js';
import { createMemoryReplayCache } from '../../../src/security/replay-cache.js';
import type { TrustConfig } from '../../../src/security/trust-config.js';
import { fakeFetch, NOW } from './fixtures.js';

// common practice: 60 s leeway; CDS Hooks best practices: client JWTs live at most 1 h
export const LIMITS = { clockSkewS: 60, maxLifetimeS: 3600 };

/** A verifier over `trust` with a fresh replay cache, at the Larkspur Bay tests' clock unless given one. */
export function testVerifier(
  trust: TrustConfig,
  options: { fetch?: typeof fetch; clock?: () => Date; limits?: VerifierDeps['limits'] } = {},
): VerifyToken {
  const clock = options.clock ?? (() => NOW);
  const jwks = createJwksStore({
    fetch: options.fetch ?? fakeFetch({}).fetch,
    clock,
    timeoutMs: 1000,
    maxBytes: 65_536,
    requireHttps: true,
    ttlMs: 300_000,
    minRefreshIntervalMs: 60_000,
  });
  return createJwtVerifier({
    trust,
    jwks,
    replayCache: createMemoryReplayCache({ maxEntries: 1000, clock }),
    clock,
    limits: options.limits ?? LIMITS,
  });
}
