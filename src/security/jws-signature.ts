import { constants, verify, type KeyObject } from 'node:crypto';
import type { SigningAlgorithm } from './algorithms.js';

/**
 * The JWS signature check (RFC 7515 §5.2 step 8) for our asymmetric algorithms (RFC 7518 §3.1), with
 * node:crypto's asynchronous `verify`: the public-key work runs on libuv's thread pool, so the event
 * loop keeps serving other calls meanwhile (docs/security.md, "The signature check runs off the event
 * loop"). The key must already suit the algorithm (keySuitsAlgorithm); this file only checks the bytes.
 */
interface SignatureScheme {
  readonly hash: 'sha256' | 'sha384' | 'sha512';
  readonly options: { readonly dsaEncoding: 'ieee-p1363' } | { readonly padding: number; readonly saltLength?: number };
  /** RFC 7518 §3.4: an ES signature is R || S, each exactly the curve's size in octets. */
  readonly ecSignatureBytes?: number;
}

// RFC 7518 §3.3: RSASSA-PKCS1-v1_5. §3.5: RSASSA-PSS with MGF1 on the same hash and a salt as long
// as the hash output, so the salt length is fixed rather than read from the signature.
const PKCS1 = { padding: constants.RSA_PKCS1_PADDING } as const;
const PSS = { padding: constants.RSA_PKCS1_PSS_PADDING, saltLength: constants.RSA_PSS_SALTLEN_DIGEST } as const;
// R || S as it stands in the token; node would otherwise expect DER, which RFC 7518 §3.4 does not allow.
const P1363 = { dsaEncoding: 'ieee-p1363' } as const;

const SCHEMES: Readonly<Record<SigningAlgorithm, SignatureScheme>> = {
  // P-256: 2 × 32 octets; P-384: 2 × 48; P-521: 2 × 66 (521 bits rounded up to whole octets)
  ES256: { hash: 'sha256', options: P1363, ecSignatureBytes: 64 },
  ES384: { hash: 'sha384', options: P1363, ecSignatureBytes: 96 },
  ES512: { hash: 'sha512', options: P1363, ecSignatureBytes: 132 },
  RS256: { hash: 'sha256', options: PKCS1 },
  RS384: { hash: 'sha384', options: PKCS1 },
  RS512: { hash: 'sha512', options: PKCS1 },
  PS256: { hash: 'sha256', options: PSS },
  PS384: { hash: 'sha384', options: PSS },
  PS512: { hash: 'sha512', options: PSS },
};

/**
 * True when `signature` is `alg`'s signature by `key` over `signingInput` (the token's first two
 * segments as received, RFC 7515 §5.2 step 8). Never rejects: an error from node, such as a
 * signature that does not fit the key, is a signature that does not verify.
 */
export function verifyJwsSignature(
  alg: SigningAlgorithm,
  signingInput: Buffer,
  signature: Buffer,
  key: KeyObject,
): Promise<boolean> {
  const scheme = SCHEMES[alg];
  // A DER signature, or R || S of another curve, is refused here rather than left to node's reading.
  if (scheme.ecSignatureBytes !== undefined && signature.length !== scheme.ecSignatureBytes) {
    return Promise.resolve(false);
  }
  return new Promise((resolve) => {
    try {
      verify(scheme.hash, signingInput, { key, ...scheme.options }, signature, (error, valid) => {
        resolve(error === null && valid);
      });
    } catch {
      resolve(false);
    }
  });
}
