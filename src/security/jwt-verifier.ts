import jwt from 'jsonwebtoken';
import { isSigningAlgorithm, keySuitsAlgorithm, type SigningAlgorithm } from './algorithms.js';
import type { PreparedKey } from './jwk-keys.js';
import type { JwksStore } from './jwks-store.js';
import { checkCdsClaims, type CheckedClaims, type ClaimFailure, type ClaimLimits } from './jwt-claims.js';
import type { PendingJti, ReplayCache } from './replay-cache.js';
import type { TrustConfig, TrustedClient } from './trust-config.js';

/**
 * Verifies a CDS client's bearer JWT (CDS Hooks 2.0 §Trusting CDS Clients; RFC 7515 §5.2, RFC 7519
 * §7.2). jsonwebtoken decodes the token and checks the signature, `exp` and `nbf` with the clock skew,
 * the issuer and the algorithm against the client's list; this file adds only what CDS Hooks asks on
 * top: the trust file's clients, the key by `kid` from the client's own sources (the `jku`
 * allowlist), the header rules, the claims jsonwebtoken leaves optional (jwt-claims.ts), the audience
 * of the endpoint called, the tenant, and the replay cache. Order matters: everything that needs no
 * key is checked first; a key is looked up only for a trusted issuer and only from that issuer's own
 * sources; the replay cache is written last, so a forged or otherwise refused token can never fill it
 * or burn a genuine token's `jti`.
 */
export type VerifyFailure =
  | 'malformed'
  | 'alg-not-allowed'
  | 'typ-invalid'
  | 'kid-missing'
  | 'crit-unsupported'
  | 'iss-untrusted'
  | 'kid-unknown'
  | 'jwks-unavailable'
  | 'key-unsuitable'
  | 'signature-invalid'
  | 'expired'
  | 'nbf-in-future'
  | ClaimFailure
  | 'jti-replayed'
  /** The client holds its whole share of the replay cache: answered 429, not 401. */
  | 'jti-share-full'
  /** The replay cache could not be consulted: refused (fail closed) and answered 503. */
  | 'replay-check-failed';

/** What may be logged about a token: identifiers the spec allows, each capped in length. */
export interface TokenLabels {
  readonly iss?: string;
  readonly kid?: string;
  readonly jti?: string;
  readonly tenant?: string;
}

export type VerifyOutcome =
  | {
      readonly kind: 'verified';
      readonly client: TrustedClient;
      readonly claims: CheckedClaims;
      readonly alg: SigningAlgorithm;
      /** The token id, held by this process and still to be committed by whoever serves the call. */
      readonly pendingJti?: PendingJti;
    }
  | {
      readonly kind: 'refused';
      readonly reason: VerifyFailure;
      readonly labels: TokenLabels;
      /** Seconds until a token from this client may be taken again (`jti-share-full` only). */
      readonly retryAfterS?: number;
    };

export type VerifyToken = (token: string, audience: string) => Promise<VerifyOutcome>;

export interface VerifierDeps {
  readonly trust: TrustConfig;
  readonly jwks: JwksStore;
  readonly replayCache: ReplayCache;
  readonly clock: () => Date;
  readonly limits: ClaimLimits;
}

const LABEL_MAX = 128;

function label(value: unknown): string | undefined {
  return typeof value === 'string' && value !== '' ? value.slice(0, LABEL_MAX) : undefined;
}

type JsonObject = Readonly<Record<string, unknown>>;

function labelsOf(header: JsonObject, payload: JsonObject): TokenLabels {
  const entries = {
    iss: label(payload['iss']),
    kid: label(header['kid']),
    jti: label(payload['jti']),
    tenant: label(payload['tenant']),
  };
  return Object.fromEntries(Object.entries(entries).filter(([, v]) => v !== undefined));
}

/** Bigger than any CDS client token needs; refused before any decoding work. */
export const MAX_TOKEN_LENGTH = 8192;

function isJsonObject(value: unknown): value is JsonObject {
  return value !== null && typeof value === 'object' && !Array.isArray(value);
}

/**
 * The header and payload as jsonwebtoken reads them (three base64url segments, RFC 7515 §7.1), so the
 * key is chosen from the same reading of the header that the signature check uses. Both must be JSON
 * objects (RFC 7515 §5.2 steps 1-3; RFC 7519 §7.2 step 10); jsonwebtoken would pass an array or a
 * bare string on. Duplicate member names keep the last, as JSON.parse does (RFC 7515 §5.2 allows it).
 */
function decodeToken(token: string): { readonly header: JsonObject; readonly payload: JsonObject } | undefined {
  if (token.length > MAX_TOKEN_LENGTH) {
    return undefined;
  }
  let decoded: jwt.Jwt | null;
  try {
    decoded = jwt.decode(token, { complete: true });
  } catch {
    // jws throws on a payload that is not JSON when the header says typ JWT
    return undefined;
  }
  if (decoded === null || !isJsonObject(decoded.header) || !isJsonObject(decoded.payload)) {
    return undefined;
  }
  return { header: decoded.header, payload: decoded.payload };
}

/**
 * jsonwebtoken's refusals, for the log's stable reason codes. Its time errors have their own classes;
 * the rest are plain JsonWebTokenErrors told apart by message only (jsonwebtoken 9, pinned in
 * package.json; tests/security/jwt-verifier.test.ts meets each message listed here). Anything else
 * thrown while checking, such as an ES signature of the wrong length (RFC 7518 §3.4), is a bad
 * signature. Its issuer and algorithm checks repeat ones made above on the same reading of the token,
 * so they cannot refuse what passed here; any other refusal is logged as `malformed`.
 */
const SIGNATURE_MESSAGES: ReadonlySet<string> = new Set(['invalid signature', 'jwt signature is required']);
const CLAIM_MESSAGES: ReadonlyMap<string, VerifyFailure> = new Map([
  ['invalid exp value', 'exp-missing'],
  ['invalid nbf value', 'nbf-in-future'],
]);

type JwtOptions = jwt.VerifyOptions & { readonly complete: false };

type SignatureCheck =
  | { readonly kind: 'ok'; readonly payload: JsonObject }
  | { readonly kind: 'bad-signature' }
  | { readonly kind: 'refused'; readonly reason: VerifyFailure };

function failureOf(error: unknown): SignatureCheck {
  if (error instanceof jwt.TokenExpiredError) {
    return { kind: 'refused', reason: 'expired' };
  }
  if (error instanceof jwt.NotBeforeError) {
    return { kind: 'refused', reason: 'nbf-in-future' };
  }
  if (!(error instanceof jwt.JsonWebTokenError) || SIGNATURE_MESSAGES.has(error.message)) {
    return { kind: 'bad-signature' };
  }
  return { kind: 'refused', reason: CLAIM_MESSAGES.get(error.message) ?? 'malformed' };
}

/**
 * One key's check by jsonwebtoken: signature with the client's algorithms only, `iss`, `exp` and
 * `nbf` with the skew, at the injected clock. `aud` is not given to it: see checkCdsClaims.
 */
function checkWithKey(token: string, key: PreparedKey, options: JwtOptions): SignatureCheck {
  let payload: string | jwt.JwtPayload;
  try {
    payload = jwt.verify(token, key.keyObject, options);
  } catch (error) {
    return failureOf(error);
  }
  return isJsonObject(payload) ? { kind: 'ok', payload } : { kind: 'refused', reason: 'malformed' };
}

/** RFC 7515 §4.1.9 and RFC 7519 §5.1: `JWT`, compared case-insensitively, `application/` optional. */
function isJwtType(typ: unknown): boolean {
  return typeof typ === 'string' && /^(application\/)?jwt$/i.test(typ);
}

function normalisedUrl(text: string): string | undefined {
  try {
    return new URL(text).href;
  } catch {
    return undefined;
  }
}

type KeyChoice =
  | { readonly kind: 'keys'; readonly keys: readonly PreparedKey[] }
  | { readonly kind: 'refused'; readonly reason: VerifyFailure };

/**
 * The keys named `kid`: from an allowlisted `jku`, else from the client's configured source. A `jku`
 * that is not on the client's allowlist is never fetched (fetching it would be server-side request
 * forgery and trivial key substitution) but does not refuse the token either: EHRs put their own
 * `jku` in every header, and the token is then checked against the keys the trust file gives for
 * this client by `kid`, as if the header had no `jku` (docs/security.md, "What is checked on every
 * call", step 5).
 * Keys from the trust file are answered at once, without a promise: most clients list their keys there.
 */
function chooseKeys(client: TrustedClient, kid: string, jku: unknown, jwks: JwksStore): KeyChoice | Promise<KeyChoice> {
  const allowlistedJku = typeof jku === 'string' ? allowlisted(client, jku) : undefined;
  const url = allowlistedJku ?? (client.keySource.kind === 'remote' ? client.keySource.url : undefined);
  if (url === undefined) {
    const keys = client.keySource.kind === 'static' ? client.keySource.keys.get(kid) : undefined;
    return keys === undefined ? { kind: 'refused', reason: 'kid-unknown' } : { kind: 'keys', keys };
  }
  return fetchedKeys(url, kid, client.iss, jwks);
}

/** The `jku` as the allowlist holds it, when the client may name it; else undefined. */
function allowlisted(client: TrustedClient, jku: string): string | undefined {
  const normalised = normalisedUrl(jku);
  return normalised !== undefined && client.jkuAllowlist.includes(normalised) ? normalised : undefined;
}

async function fetchedKeys(url: string, kid: string, iss: string, jwks: JwksStore): Promise<KeyChoice> {
  const found = await jwks.findKeys(url, kid, iss);
  if (found.kind === 'found') {
    return { kind: 'keys', keys: found.keys };
  }
  return { kind: 'refused', reason: found.kind === 'unknown-kid' ? 'kid-unknown' : 'jwks-unavailable' };
}

export function createJwtVerifier(deps: VerifierDeps): VerifyToken {
  const { limits } = deps;
  return async (token, audience) => {
    const decoded = decodeToken(token);
    if (decoded === undefined) {
      return { kind: 'refused', reason: 'malformed', labels: {} };
    }
    const { header, payload } = decoded;
    const labels = labelsOf(header, payload);
    const refuse = (reason: VerifyFailure): VerifyOutcome => ({ kind: 'refused', reason, labels });
    const alg = header['alg'];
    // `none` and HS* are not in SIGNING_ALGORITHMS, so they stop here, before any key is touched.
    if (!isSigningAlgorithm(alg)) {
      return refuse('alg-not-allowed');
    }
    if (!isJwtType(header['typ'])) {
      return refuse('typ-invalid');
    }
    const kid = header['kid'];
    if (typeof kid !== 'string' || kid === '') {
      return refuse('kid-missing');
    }
    // RFC 7515 §4.1.11: extensions listed in crit that are not understood MUST make the JWS invalid.
    // jsonwebtoken ignores crit (and so RFC 7797 b64), so this check is ours.
    if (header['crit'] !== undefined) {
      return refuse('crit-unsupported');
    }
    const iss = payload['iss'];
    const client = typeof iss === 'string' ? deps.trust.clients.get(iss) : undefined;
    if (client === undefined) {
      return refuse('iss-untrusted');
    }
    if (!client.algorithms.includes(alg)) {
      return refuse('alg-not-allowed');
    }
    const chosen = chooseKeys(client, kid, header['jku'], deps.jwks);
    const choice = chosen instanceof Promise ? await chosen : chosen;
    if (choice.kind === 'refused') {
      return refuse(choice.reason);
    }
    // jsonwebtoken checks key type and curve as well, but neither RSA size nor the JWK's own alg.
    const suitable = choice.keys.filter((key) => keySuitsAlgorithm(key, alg));
    if (suitable.length === 0) {
      return refuse('key-unsuitable');
    }
    const nowMs = deps.clock().getTime();
    const options: JwtOptions = {
      // jsonwebtoken only reads the list; the client's frozen list is passed as it is.
      algorithms: client.algorithms as SigningAlgorithm[],
      complete: false,
      issuer: client.iss,
      clockTimestamp: nowMs / 1000,
      clockTolerance: limits.clockSkewS,
    };
    let verified: SignatureCheck = { kind: 'bad-signature' };
    for (const key of suitable) {
      verified = checkWithKey(token, key, options);
      if (verified.kind !== 'bad-signature') {
        break;
      }
    }
    if (verified.kind !== 'ok') {
      return refuse(verified.kind === 'refused' ? verified.reason : 'signature-invalid');
    }
    const checked = checkCdsClaims(verified.payload, {
      nowS: nowMs / 1000,
      audience,
      tenants: client.tenants,
      limits,
    });
    if (checked.kind === 'refused') {
      return refuse(checked.reason);
    }
    const { claims } = checked;
    // Held until the token could no longer pass the exp check, leeway included.
    const expiresAt = (claims.expS + deps.limits.clockSkewS) * 1000;
    const decision = await deps.replayCache.checkAndRemember(replayShareKey(client, claims.tenant), claims.jti, expiresAt);
    switch (decision.kind) {
      case 'fresh':
        return decision.pending === undefined
          ? { kind: 'verified', client, claims, alg }
          : { kind: 'verified', client, claims, alg, pendingJti: decision.pending };
      case 'replayed':
        return refuse('jti-replayed');
      case 'client-full':
        return { kind: 'refused', reason: 'jti-share-full', labels, retryAfterS: decision.retryAfterS };
      case 'unavailable':
        return refuse('replay-check-failed');
    }
  };
}

/**
 * Whose share of the replay cache a token counts against: the issuer, and its tenant when the trust
 * file lists the client's tenants. A client with no tenant list may put any text in `tenant`, so its
 * tenant cannot widen its share: all its tokens count against the issuer alone.
 */
export function replayShareKey(client: TrustedClient, tenant: string | undefined): string {
  return client.tenants !== undefined && tenant !== undefined
    ? JSON.stringify([client.iss, tenant])
    : JSON.stringify([client.iss]);
}
