import type { ErrorRequestHandler, Request, RequestHandler, Response } from 'express';
import type { FhirServerPolicy } from '../security/fhir-server-allowlist.js';
import type { PendingJti, ReplayAnswer } from '../security/replay-cache.js';
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
  | ({
      readonly kind: 'allowed';
      /**
       * The token's id, held by this process and not yet in the store (store-replay-cache.ts). It is
       * committed before the call is answered: here, or for a hook call by its route, in one
       * transaction with the call's cards (or alone before any FHIR fallback request).
       */
      readonly pendingJti?: PendingJti;
    } & AuthenticatedClient)
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
const PENDING_JTI_KEY = 'oxygenCheckerPendingJti';

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

type Denial = Extract<AuthResult, { kind: 'denied' }>;

/** The catalogue's error for a denial; its reason goes on the request's summary line. */
function denialError(res: Response, result: Denial): AppError {
  if (result.detail !== undefined) {
    requestState(res).detail = { kind: 'auth-refused', ...result.detail };
  }
  if (result.reason === 'too-many-tokens') {
    res.setHeader('Retry-After', String(Math.max(1, Math.ceil(result.retryAfterS ?? 1))));
  }
  return new AppError(DENIAL_CODES[result.reason], result.cause === undefined ? {} : { cause: result.cause });
}

/** Token labels are cut as the verifier cuts them (jwt-verifier.ts). */
const LABEL_MAX = 128;

/**
 * The denial a token id's commit means, exactly as when the id was committed at authentication
 * (production-authenticator.ts): replayed 401, share full 429, store failed 503; undefined when fresh.
 */
function commitDenial(res: Response, answer: ReplayAnswer, jti: string): Denial | undefined {
  const client = res.locals[CLIENT_KEY] as AuthenticatedClient | undefined;
  const labels = {
    ...(client === undefined ? {} : { iss: client.iss.slice(0, LABEL_MAX) }),
    jti: jti.slice(0, LABEL_MAX),
    ...(client?.tenant === undefined ? {} : { tenant: client.tenant.slice(0, LABEL_MAX) }),
  };
  switch (answer.kind) {
    case 'fresh':
      return undefined;
    case 'replayed':
      return { kind: 'denied', reason: 'invalid-token', detail: { reason: 'jti-replayed', ...labels } };
    case 'client-full':
      return {
        kind: 'denied',
        reason: 'too-many-tokens',
        retryAfterS: answer.retryAfterS,
        detail: { reason: 'jti-share-full', ...labels },
      };
    case 'unavailable':
      return { kind: 'denied', reason: 'unavailable', detail: { reason: 'replay-check-failed', ...labels } };
  }
}

/** The call's token id still to be committed (see `AuthResult`), when its commit was left to the route. */
export function pendingJtiOf(res: Response): PendingJti | undefined {
  return res.locals[PENDING_JTI_KEY] as PendingJti | undefined;
}

/** Throws the refusal a token id's commit answered, so the call is answered as a refused token. */
export function refuseUnlessCommitted(res: Response, pending: PendingJti, answer: ReplayAnswer): void {
  const denial = commitDenial(res, answer, pending.jti);
  if (denial !== undefined) {
    throw denialError(res, denial);
  }
}

export interface AuthenticationOptions {
  /**
   * True on the hook call's route, which commits the token id itself, with its cards. Otherwise the id
   * is committed here, before the request goes on.
   */
  readonly deferTokenCommit?: boolean;
}

/**
 * Runs `authenticate` and turns a denial into the catalogue's 401 with a generic challenge; the
 * reason goes on the request's summary line. An authenticator that throws counts as a denial: a
 * fault in checking credentials must not let the call through, nor become a 500.
 */
export function requireAuthentication(authenticate: Authenticate, options: AuthenticationOptions = {}): RequestHandler {
  return async (req, res, next) => {
    let result: AuthResult;
    try {
      result = await authenticate(req);
    } catch (error) {
      result = { kind: 'denied', reason: 'invalid-token', cause: error, detail: { reason: 'authenticator-failed' } };
    }
    if (result.kind === 'denied') {
      throw denialError(res, result);
    }
    const { kind: _kind, pendingJti, ...client } = result;
    res.locals[CLIENT_KEY] = client;
    requestState(res).authenticatedIss = client.iss;
    if (pendingJti !== undefined) {
      if (options.deferTokenCommit === true) {
        res.locals[PENDING_JTI_KEY] = pendingJti;
      } else {
        refuseUnlessCommitted(res, pendingJti, await pendingJti.commit());
      }
    }
    next();
  };
}

/**
 * An error middleware, just before the JSON error handler: a call that ends in an error before its
 * route committed its token id (a body that does not parse, an overload refusal, a 400 or 412 from
 * the route) commits it alone first, so no answer goes out for an id the store has not taken. When
 * the store refuses the id, the call is answered as that refusal, as it would have been at
 * authentication.
 */
export const commitTokenBeforeError: ErrorRequestHandler = (error: unknown, _req, res, next) => {
  const pending = pendingJtiOf(res);
  if (pending === undefined) {
    next(error);
    return;
  }
  void pending.commit().then((answer) => {
    const denial = commitDenial(res, answer, pending.jti);
    next(denial === undefined ? error : denialError(res, denial));
  });
};
