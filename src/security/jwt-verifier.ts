import { isSigningAlgorithm, keySuitsAlgorithm, type SigningAlgorithm } from './algorithms.js';
import type { PreparedKey } from './jwk-keys.js';
import type { JwksStore } from './jwks-store.js';
import { verifyJwsSignature } from './jws-signature.js';
import { checkCdsClaims, type CheckedClaims, type ClaimFailure, type ClaimLimits } from './jwt-claims.js';
import type { PendingJti, ReplayCache } from './replay-cache.js';
import type { TrustConfig, TrustedClient } from './trust-config.js';

/**
 * Verifies a CDS client's bearer JWT (CDS Hooks 2.0 §Trusting CDS Clients; RFC 7515 §5.2, RFC 7519
 * §7.2): the trust file's clients, the header rules, the key by `kid` from the client's own sources
 * (the `jku` allowlist), the signature (jws-signature.ts, on the thread pool), `nbf`, `exp` and the
 * claims CDS Hooks requires (jwt-claims.ts), the audience of the endpoint called, the tenant, and the
 * replay cache. Order matters: everything that needs no key is checked first; a key is looked up only
 * for a trusted issuer and only from that issuer's own sources; the replay cache is written last, so a
 * forged or otherwise refused token can never fill it or burn a genuine token's `jti`.
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

interface DecodedToken {
  readonly header: JsonObject;
  readonly payload: JsonObject;
  /** RFC 7515 §5.2 step 8: ASCII(BASE64URL(header) || '.' || BASE64URL(payload)), as received. */
  readonly signingInput: Buffer;
  readonly signature: Buffer;
}

/**
 * The bytes of one base64url segment (RFC 7515 §2: no padding, no other characters), or undefined
 * when the text is not exactly the encoding of those bytes. Node's decoder passes over characters
 * outside the alphabet and ignores the spare bits of the last character; the round trip leaves each
 * token one spelling, so the signature checked is exactly the one received.
 */
function base64urlBytes(segment: string): Buffer | undefined {
  const bytes = Buffer.from(segment, 'base64url');
  return bytes.toString('base64url') === segment ? bytes : undefined;
}

// RFC 7515 §5.2 steps 4 and 6: the header and payload are UTF-8. Invalid UTF-8 is refused rather than
// replaced, and a byte-order mark is kept, so JSON.parse refuses it (RFC 8259 §8.1).
const UTF8 = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });

function jsonObjectOf(bytes: Buffer): JsonObject | undefined {
  try {
    const value: unknown = JSON.parse(UTF8.decode(bytes));
    return isJsonObject(value) ? value : undefined;
  } catch {
    return undefined;
  }
}

/**
 * The JWS Compact Serialization (RFC 7515 §7.1): three base64url segments; header and payload
 * must be JSON objects (RFC 7515 §5.2 steps 1-5; RFC 7519 §7.2 step 10). Duplicate
 * member names keep the last, as JSON.parse does (RFC 7515 §5.2 allows it); the key choice and the
 * signature check use this one reading.
 */
function decodeToken(token: string): DecodedToken | undefined {
  if (token.length > MAX_TOKEN_LENGTH) {
    return undefined;
  }
  const segments = token.split('.');
  if (segments.length !== 3) {
    return undefined;
  }
  const [encodedHeader = '', encodedPayload = '', encodedSignature = ''] = segments;
  const headerBytes = base64urlBytes(encodedHeader);
  const payloadBytes = base64urlBytes(encodedPayload);
  const signature = base64urlBytes(encodedSignature);
  if (headerBytes === undefined || payloadBytes === undefined || signature === undefined) {
    return undefined;
  }
  const header = jsonObjectOf(headerBytes);
  const payload = jsonObjectOf(payloadBytes);
  if (header === undefined || payload === undefined) {
    return undefined;
  }
  const signingInput = Buffer.from(`${encodedHeader}.${encodedPayload}`, 'ascii');
  return { header, payload, signingInput, signature };
}

/** RFC 7517 §4.5: keys may share a `kid`; the token is good when one of them verifies it. */
async function signedByOneOf(token: DecodedToken, alg: SigningAlgorithm, keys: readonly PreparedKey[]): Promise<boolean> {
  for (const key of keys) {
    if (await verifyJwsSignature(alg, token.signingInput, token.signature, key.keyObject)) {
      return true;
    }
  }
  return false;
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
    // This service understands none (RFC 7797 b64 among them), so any crit is refused.
    if (header['crit'] !== undefined) {
      return refuse('crit-unsupported');
    }
    // Clients are found by their exact `iss` (RFC 7519 §4.1.1), so the issuer is checked here, once,
    // and only that client's keys can verify the token.
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
    const suitable = choice.keys.filter((key) => keySuitsAlgorithm(key, alg));
    if (suitable.length === 0) {
      return refuse('key-unsuitable');
    }
    if (!(await signedByOneOf(decoded, alg, suitable))) {
      return refuse('signature-invalid');
    }
    const checked = checkCdsClaims(payload, {
      nowS: deps.clock().getTime() / 1000,
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
