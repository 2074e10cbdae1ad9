import { audienceMatches } from './public-url.js';

/**
 * The registered-claim checks on a token whose signature has already been verified (RFC 7519 §4.1,
 * CDS Hooks 2.0 §Trusting CDS Clients and its best practices). Pure: the time comes in as `nowS`.
 */
export interface ClaimLimits {
  /** Leeway for clocks that disagree, in seconds (RFC 7519 §4.1.4 "small leeway"); 60 by default. */
  readonly clockSkewS: number;
  /** Longest `exp - iat` accepted, in seconds; CDS Hooks best practices keep client JWTs to ≤ 1 h. */
  readonly maxLifetimeS: number;
}

export type ClaimFailure =
  | 'exp-missing'
  | 'expired'
  | 'nbf-in-future'
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

export function checkClaims(payload: Readonly<Record<string, unknown>>, expect: ClaimExpectations): ClaimCheck {
  const refuse = (reason: ClaimFailure): ClaimCheck => ({ kind: 'refused', reason });
  const { nowS, limits } = expect;
  const expS = numericDate(payload['exp']);
  if (expS === undefined) {
    return refuse('exp-missing');
  }
  // RFC 7519 §4.1.4: the current time MUST be before exp, with a small leeway.
  if (nowS >= expS + limits.clockSkewS) {
    return refuse('expired');
  }
  const nbfS = payload['nbf'] === undefined ? undefined : numericDate(payload['nbf']);
  if (payload['nbf'] !== undefined && (nbfS === undefined || nowS + limits.clockSkewS < nbfS)) {
    return refuse('nbf-in-future');
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
  if (expS - iatS > limits.maxLifetimeS) {
    return refuse('lifetime-too-long');
  }
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
