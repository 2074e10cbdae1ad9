import type { Authenticate, AuthResult } from '../http/auth.js';
import { readBearerToken } from './bearer-token.js';
import type { VerifyToken } from './jwt-verifier.js';
import { endpointAudience } from './public-url.js';

/**
 * Production authentication for every /cds-services route: a Bearer JWT from a trusted CDS client
 * (CDS Hooks 2.0 §Trusting CDS Clients), checked by the verifier against the audience this endpoint
 * has at its public URL. Failures say only "missing" or "invalid token" to the caller; the reason
 * code and the token's iss, kid, jti and tenant go to the log, the token itself nowhere.
 */
export interface ProductionAuthOptions {
  readonly verify: VerifyToken;
  /** From `parsePublicBaseUrl`: e.g. `https://cds.example.org`, no trailing slash. */
  readonly publicBaseUrl: string;
  /** True in production: a fhirServer must use https even if a listed prefix matched otherwise. */
  readonly requireHttpsFhirServers: boolean;
}

export function createProductionAuthenticator(options: ProductionAuthOptions): Authenticate {
  return async (req): Promise<AuthResult> => {
    const bearer = readBearerToken(req.headers.authorization);
    if (bearer.kind === 'none') {
      return { kind: 'denied', reason: 'missing', detail: { reason: 'no-bearer-token' } };
    }
    if (bearer.kind === 'malformed') {
      return { kind: 'denied', reason: 'invalid-token', detail: { reason: 'malformed' } };
    }
    const audience = endpointAudience(options.publicBaseUrl, req.originalUrl);
    const outcome = await options.verify(bearer.token, audience);
    if (outcome.kind === 'refused') {
      const detail = { reason: outcome.reason, ...outcome.labels };
      // A valid token over its client's share is a rate limit (429), and a replay check that could not
      // be made is the service's fault (503); every other refusal is an invalid token (401).
      if (outcome.reason === 'jti-share-full') {
        return { kind: 'denied', reason: 'too-many-tokens', retryAfterS: outcome.retryAfterS ?? 1, detail };
      }
      if (outcome.reason === 'replay-check-failed') {
        return { kind: 'denied', reason: 'unavailable', detail };
      }
      return { kind: 'denied', reason: 'invalid-token', detail };
    }
    const { client, claims } = outcome;
    return {
      kind: 'allowed',
      client: client.iss,
      iss: client.iss,
      ...(claims.tenant === undefined ? {} : { tenant: claims.tenant }),
      fhirServers: { kind: 'listed', servers: client.fhirServers, requireHttps: options.requireHttpsFhirServers },
      // Committed before the answer by requireAuthentication, or by the hook route with its cards.
      ...(outcome.pendingJti === undefined ? {} : { pendingJti: outcome.pendingJti }),
    };
  };
}
