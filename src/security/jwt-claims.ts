import { audienceMatches } from './public-url.js';

/**
 * The claim checks on a token whose signature has verified: `nbf` and `exp` with the clock skew
 * (RFC 7519 §4.1.4, §4.1.5), then what CDS Hooks 2.0 §Trusting CDS Clients and its best practices
 * add: `exp`, `iat` and `jti` required, `iat` not in the future, a lifetime cap, the audience of the
 * endpoint called, the tenant. Pure: the time comes in as `nowS`.
 */
export interface ClaimLimits {
  /** Leeway for clocks that disagree, in seconds (RFC 7519 §4.1.4 "small leeway"); 60 by default. */
  readonly clockSkewS: number;
  /** Longest `exp - iat` accepted, in seconds; CDS Hooks best practices keep client JWTs to ≤ 1 h. */
  readonly maxLifetimeS: number;
}

export type ClaimFailure =
  | 'nbf-in-future'
  | 'expired'
  | 'exp-missing'
  | 'iat-missing'
  | 'iat-in-future'
  | 'lifetime-too-long'
  | 'lifetime-invalid'
  | 'aud-mismatch'
  | 'jti-missing'
  | 'tenant-invalid'
  | 'tenant-not-allowed';

export interface CheckedClaims {
  readonly expS: number;
  readonly iatS: number;
  readonly jti: string;
  readonly tenant: string | undefined;
}

export type ClaimCheck =
  | { readonly kind: 'ok'; readonly claims: CheckedClaims }
  | { readonly kind: 'refused'; readonly reason: ClaimFailure };

export interface ClaimExpectations {
  readonly nowS: number;
  /** This endpoint's public URL (see public-url.ts). */
  readonly audience: string;
  /** The client's tenant allowlist; undefined when the client has none. */
  readonly tenants: readonly string[] | undefined;
  readonly limits: ClaimLimits;
}

/** An id longer than this is not a nonce but a payload; it would also bloat the replay cache. */
export const MAX_JTI_LENGTH = 256;

function numericDate(value: unknown): number | undefined {
  // RFC 7519 §2 NumericDate: seconds since the epoch, non-integer values allowed.
  return typeof value === 'number' && Number.isFinite(value) ? value : undefined;
}

/**
 * RFC 7519 §4.1.5 and §4.1.4 with the skew as the "small leeway" both allow, in the order and at the
 * boundaries the service has always used (those of jsonwebtoken 9, which checked them before): a
 * present `nbf` must be a number; refused when `nbf > now + skew` or `now >= exp + skew`. An `exp`
 * that is absent or not a number passes here and is refused below as `exp-missing`.
 */
function checkValidityWindow(payload: Readonly<Record<string, unknown>>, nowS: number, skewS: number): ClaimFailure | undefined {
  const { nbf, exp } = payload;
  if (nbf !== undefined && (typeof nbf !== 'number' || nbf > nowS + skewS)) {
    return 'nbf-in-future';
  }
  if (typeof exp === 'number' && nowS >= exp + skewS) {
    return 'expired';
  }
  return undefined;
}

export function checkCdsClaims(payload: Readonly<Record<string, unknown>>, expect: ClaimExpectations): ClaimCheck {
  const refuse = (reason: ClaimFailure): ClaimCheck => ({ kind: 'refused', reason });
  const { nowS, limits } = expect;
  const outsideWindow = checkValidityWindow(payload, nowS, limits.clockSkewS);
  if (outsideWindow !== undefined) {
    return refuse(outsideWindow);
  }
  // RFC 7519 makes exp optional; CDS Hooks 2.0 requires it.
  const expS = numericDate(payload['exp']);
  if (expS === undefined) {
    return refuse('exp-missing');
  }
  const iatS = numericDate(payload['iat']);
  if (iatS === undefined) {
    return refuse('iat-missing');
  }
  if (iatS > nowS + limits.clockSkewS) {
    return refuse('iat-in-future');
  }
  if (expS <= iatS) {
    return refuse('lifetime-invalid');
  }
  // Not jsonwebtoken's maxAge, which bounds the time since iat: this bounds the lifetime the token
  // declares, and with exp checked it bounds the time since iat as well.
  if (expS - iatS > limits.maxLifetimeS) {
    return refuse('lifetime-too-long');
  }
  // Not jsonwebtoken's `audience` option: it compares byte for byte, and passes an aud array that
  // holds other, non-string members; this one compares normalised URLs and refuses such an array.
  if (!audienceMatches(payload['aud'], expect.audience)) {
    return refuse('aud-mismatch');
  }
  const jti = payload['jti'];
  if (typeof jti !== 'string' || jti === '' || jti.length > MAX_JTI_LENGTH) {
    return refuse('jti-missing');
  }
  const tenant = payload['tenant'];
  if (tenant !== undefined && typeof tenant !== 'string') {
    return refuse('tenant-invalid');
  }
  // A client with a tenant list must say which tenant each call is for.
  if (expect.tenants !== undefined && (tenant === undefined || !expect.tenants.includes(tenant))) {
    return refuse('tenant-not-allowed');
  }
  return { kind: 'ok', claims: { expS, iatS, jti, tenant } };
}
