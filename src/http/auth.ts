import type { Request, RequestHandler, Response } from 'express';
import type { FhirServerPolicy } from '../security/fhir-server-allowlist.js';
import { AppError, type ErrorCode } from './errors.js';
import { requestState } from './request-context.js';

/**
 * The pluggable authentication seam: one function decides, one middleware enforces. The demo passes
 * every request; production plugs in `createProductionAuthenticator` (src/security), which checks the
 * client's signed JWT (CDS Hooks 2.0 §Trusting CDS Clients), without touching any route.
 */

/** Who called, as far as the service needs to know: for the log and for FHIR server access. */
export interface AuthenticatedClient {
  /** A label for the log: the issuer, or `demo`. */
  readonly client: string;
  readonly iss: string;
  readonly tenant?: string;
  /** Which `fhirServer` URLs the service may call with this client's `fhirAuthorization` token. */
  readonly fhirServers: FhirServerPolicy;
}

/** Why a call was refused, for the operator's log only: a reason code and the token's identifiers. */
export interface AuthRefusalDetail {
  readonly reason: string;
  readonly iss?: string;
  readonly kid?: string;
  readonly jti?: string;
  readonly tenant?: string;
}

export type AuthResult =
  | ({ readonly kind: 'allowed' } & AuthenticatedClient)
  | {
      readonly kind: 'denied';
      /**
       * `too-many-tokens`: a valid token, but its client holds its whole replay-cache share (429 with
       * Retry-After). `unavailable`: the replay check could not be made (503). Otherwise 401.
       */
      readonly reason: 'missing' | 'invalid-token' | 'too-many-tokens' | 'unavailable';
      /** Seconds to wait, for `too-many-tokens`. */
      readonly retryAfterS?: number;
      /** Why, for the operator only; never sent to the client and never containing the token. */
      readonly cause?: unknown;
      /** Logged on the request's summary line; never sent to the client. */
      readonly detail?: AuthRefusalDetail;
    };

export type Authenticate = (req: Request) => Promise<AuthResult>;

/**
 * The demo's one client. Its FHIR server policy is loopback only, so even the demo cannot be made to
 * send a `fhirAuthorization` token to another machine.
 */
export const DEMO_CLIENT: Extract<AuthResult, { kind: 'allowed' }> = Object.freeze({
  kind: 'allowed',
  client: 'demo',
  iss: 'urn:oxygen-order-checker:demo-client',
  fhirServers: Object.freeze({ kind: 'loopback-only' }),
});

/** Demo mode: authentication off. Only for the loopback demo, never for clinical use. */
export const allowEveryRequest: Authenticate = () => Promise.resolve(DEMO_CLIENT);

const CLIENT_KEY = 'oxygenCheckerClient';

const DENIAL_CODES = {
  missing: 'CDS_ERR_AUTH_MISSING',
  'invalid-token': 'CDS_ERR_AUTH_INVALID_TOKEN',
  'too-many-tokens': 'CDS_ERR_AUTH_TOO_MANY_TOKENS',
  unavailable: 'CDS_ERR_STORE_UNAVAILABLE',
} as const satisfies Record<Extract<AuthResult, { kind: 'denied' }>['reason'], ErrorCode>;

/** The client `requireAuthentication` let through for this response. */
export function authenticatedClient(res: Response): AuthenticatedClient {
  const client = res.locals[CLIENT_KEY] as AuthenticatedClient | undefined;
  if (client === undefined) {
    throw new Error('requireAuthentication must run before this handler');
  }
  return client;
}

/**
 * Runs `authenticate` and turns a denial into the catalogue's 401 with a generic challenge; the
 * reason goes on the request's summary line. An authenticator that throws counts as a denial: a
 * fault in checking credentials must not let the call through, nor become a 500.
 */
export function requireAuthentication(authenticate: Authenticate): RequestHandler {
  return async (req, res, next) => {
    let result: AuthResult;
    try {
      result = await authenticate(req);
    } catch (error) {
      result = { kind: 'denied', reason: 'invalid-token', cause: error, detail: { reason: 'authenticator-failed' } };
    }
    if (result.kind === 'denied') {
      if (result.detail !== undefined) {
        requestState(res).detail = { kind: 'auth-refused', ...result.detail };
      }
      if (result.reason === 'too-many-tokens') {
        res.setHeader('Retry-After', String(Math.max(1, Math.ceil(result.retryAfterS ?? 1))));
      }
      throw new AppError(DENIAL_CODES[result.reason], result.cause === undefined ? {} : { cause: result.cause });
    }
    const { kind: _kind, ...client } = result;
    res.locals[CLIENT_KEY] = client;
    requestState(res).authenticatedIss = client.iss;
    next();
  };
}
