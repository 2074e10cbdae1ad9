import { describe, expect, it } from 'vitest';
import {
  DEFAULT_ALGORITHMS,
  isSigningAlgorithm,
  keySuitsAlgorithm,
  refusedAlgorithmReason,
  SIGNING_ALGORITHMS,
  type KeyShape,
  type SigningAlgorithm,
} from '../../src/security/algorithms.js';

describe('signing algorithms', () => {
  it('defaults to ES384 and RS384', () => {
    // CDS Hooks 2.0 §JWT signing algorithm: ES384 and RS384 are RECOMMENDED
    expect(DEFAULT_ALGORITHMS).toStrictEqual(['ES384', 'RS384']);
  });

  it('offers only asymmetric algorithms', () => {
    // CDS Hooks 2.0 §JWT signing algorithm: no symmetric algorithm, never none; RFC 7518 §3.1 names
    expect(SIGNING_ALGORITHMS).toStrictEqual(['ES256', 'ES384', 'ES512', 'RS256', 'RS384', 'RS512', 'PS256', 'PS384', 'PS512']);
    for (const refused of ['none', 'HS256', 'HS384', 'HS512']) {
      expect(isSigningAlgorithm(refused)).toBe(false);
    }
  });

  it.each([
    ['none', "'none' (unsigned tokens) is never accepted (CDS Hooks 2.0 §JWT signing algorithm)"],
    ['NONE', "'none' (unsigned tokens) is never accepted (CDS Hooks 2.0 §JWT signing algorithm)"],
    ['HS256', "'HS256' is symmetric and is never accepted (CDS Hooks 2.0 §JWT signing algorithm)"],
    ['HS512', "'HS512' is symmetric and is never accepted (CDS Hooks 2.0 §JWT signing algorithm)"],
    ['EdDSA', "'EdDSA' is not supported; use one of ES256, ES384, ES512, RS256, RS384, RS512, PS256, PS384, PS512"],
  ])('explains why %s is refused', (alg, reason) => {
    expect(refusedAlgorithmReason(alg)).toBe(reason);
  });

  it('has no refusal for an algorithm it supports', () => {
    expect(refusedAlgorithmReason('PS256')).toBeUndefined();
  });

  describe('key suitability', () => {
    const ec384: KeyShape = { kty: 'EC', crv: 'P-384', modulusBits: undefined, alg: undefined };
    const rsa2048: KeyShape = { kty: 'RSA', crv: undefined, modulusBits: 2048, alg: undefined };
    it.each<[string, KeyShape, SigningAlgorithm, boolean]>([
      // RFC 7518 §3.4: ES384 uses P-384 and SHA-384
      ['P-384 for ES384', ec384, 'ES384', true],
      ['P-384 for ES256', ec384, 'ES256', false],
      ['P-384 for RS384', ec384, 'RS384', false],
      // RFC 7518 §3.3, §3.5: RSA keys of 2048 bits or more, for RS and PS alike
      ['RSA 2048 for RS384', rsa2048, 'RS384', true],
      ['RSA 2048 for PS512', rsa2048, 'PS512', true],
      ['RSA 1024 for RS256', { ...rsa2048, modulusBits: 1024 }, 'RS256', false],
      ['RSA 2048 for ES384', rsa2048, 'ES384', false],
      // RFC 7517 §4.4: a key that names its alg is for that alg only
      ['RSA declaring RS256, for RS384', { ...rsa2048, alg: 'RS256' }, 'RS384', false],
      ['P-384 declaring ES384, for ES384', { ...ec384, alg: 'ES384' }, 'ES384', true],
    ])('%s: %s', (_name, key, alg, suits) => {
      expect(keySuitsAlgorithm(key, alg)).toBe(suits);
    });
  });
});
