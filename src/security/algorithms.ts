/**
 * The JWS algorithms a CDS client may sign with. CDS Hooks 2.0 §JWT signing algorithm: `none` and
 * every symmetric algorithm SHALL NOT be used; ES384 and RS384 are RECOMMENDED. Everything here is
 * asymmetric (RFC 7518 §3.1): the service holds public keys only, so it can never mint a token.
 */
export const SIGNING_ALGORITHMS = [
  'ES256',
  'ES384',
  'ES512',
  'RS256',
  'RS384',
  'RS512',
  'PS256',
  'PS384',
  'PS512',
] as const;
export type SigningAlgorithm = (typeof SIGNING_ALGORITHMS)[number];

/** A client's algorithms when its trust entry names none: the two the spec recommends. */
export const DEFAULT_ALGORITHMS: readonly SigningAlgorithm[] = Object.freeze(['ES384', 'RS384']);

export type EcCurve = 'P-256' | 'P-384' | 'P-521';

/** The key each algorithm needs; the signature scheme itself is in jws-signature.ts. */
interface AlgorithmSpec {
  readonly kty: 'EC' | 'RSA';
  /** RFC 7518 §3.4: the curve each ES algorithm uses. */
  readonly curve?: EcCurve;
}

const SPECS: Readonly<Record<SigningAlgorithm, AlgorithmSpec>> = {
  ES256: { kty: 'EC', curve: 'P-256' },
  ES384: { kty: 'EC', curve: 'P-384' },
  ES512: { kty: 'EC', curve: 'P-521' },
  RS256: { kty: 'RSA' },
  RS384: { kty: 'RSA' },
  RS512: { kty: 'RSA' },
  PS256: { kty: 'RSA' },
  PS384: { kty: 'RSA' },
  PS512: { kty: 'RSA' },
};

/** RFC 7518 §3.3 and §3.5: RSA keys of 2048 bits or larger MUST be used. */
export const MIN_RSA_MODULUS_BITS = 2048;

export function isSigningAlgorithm(value: unknown): value is SigningAlgorithm {
  return typeof value === 'string' && Object.hasOwn(SPECS, value);
}

/** Why an algorithm name is refused outright, for configuration messages; undefined if it is one of ours. */
export function refusedAlgorithmReason(alg: string): string | undefined {
  if (isSigningAlgorithm(alg)) {
    return undefined;
  }
  if (alg.toLowerCase() === 'none') {
    return "'none' (unsigned tokens) is never accepted (CDS Hooks 2.0 §JWT signing algorithm)";
  }
  if (/^HS\d+$/i.test(alg)) {
    return `'${alg}' is symmetric and is never accepted (CDS Hooks 2.0 §JWT signing algorithm)`;
  }
  return `'${alg}' is not supported; use one of ${SIGNING_ALGORITHMS.join(', ')}`;
}

/** The public-key facts an algorithm's suitability depends on. */
export interface KeyShape {
  readonly kty: 'EC' | 'RSA';
  readonly crv: EcCurve | undefined;
  readonly modulusBits: number | undefined;
  /** The JWK's own `alg`, when it declares one (RFC 7517 §4.4). */
  readonly alg: string | undefined;
}

/** True when `key` may verify `alg`: right key type, curve or size, and no contrary `alg` on the JWK. */
export function keySuitsAlgorithm(key: KeyShape, alg: SigningAlgorithm): boolean {
  const spec = SPECS[alg];
  if (key.alg !== undefined && key.alg !== alg) {
    return false;
  }
  if (key.kty !== spec.kty) {
    return false;
  }
  if (spec.kty === 'EC') {
    return key.crv === spec.curve;
  }
  return (key.modulusBits ?? 0) >= MIN_RSA_MODULUS_BITS;
}
