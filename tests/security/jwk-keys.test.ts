import { generateKeyPairSync } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { buildKeySet, preparePublicJwk, readJwkSet } from '../../src/security/jwk-keys.js';
import { SPEC_JWKS, SPEC_PRIVATE_JWK } from '../fixtures/security/spec-jwt-example.js';
import { makeKey } from './support/keys.js';

function problemOf(jwk: unknown): string | undefined {
  const outcome = preparePublicJwk(jwk);
  return outcome.kind === 'refused' ? outcome.problem : undefined;
}

describe('preparePublicJwk', () => {
  it('builds the KeyObject of the specification example key once', () => {
    // CDS Hooks 2.0 §Trusting CDS Clients › Example: EC P-384 key, kid example-kid, alg ES384
    const outcome = preparePublicJwk(SPEC_JWKS.keys[0]);
    if (outcome.kind !== 'ok') throw new Error(outcome.problem);
    expect({ ...outcome.key, keyObject: undefined }).toStrictEqual({
      kid: 'example-kid',
      kty: 'EC',
      crv: 'P-384',
      modulusBits: undefined,
      alg: 'ES384',
      keyObject: undefined,
    });
    expect(outcome.key.keyObject.type).toBe('public');
    expect(outcome.key.keyObject.asymmetricKeyDetails).toStrictEqual({ namedCurve: 'secp384r1' });
  });

  it('reads an RSA key and its size', () => {
    const outcome = preparePublicJwk(makeKey('RS384', 'lbgh-rsa').publicJwk);
    expect(outcome.kind === 'ok' ? [outcome.key.kty, outcome.key.modulusBits, outcome.key.alg] : outcome).toStrictEqual([
      'RSA',
      2048,
      'RS384',
    ]);
  });

  it.each<[string, unknown, string]>([
    // RFC 7518 §6.2.2.1: d is the EC private key; a trust file holds public keys only
    ['the spec private JWK', SPEC_PRIVATE_JWK, "holds private key material ('d'); give public keys only"],
    // RFC 7518 §6.4: kty oct is a symmetric key; CDS Hooks 2.0 forbids symmetric algorithms
    ['a symmetric key', { kty: 'oct', k: 'bGFya3NwdXI', kid: 'hmac' }, "is a symmetric key (kty 'oct'), which is never accepted"],
    ['an OKP key', { kty: 'OKP', crv: 'Ed25519', x: 'AA', kid: 'ed' }, "must have kty 'EC' or 'RSA'"],
    ['a key without kid', { ...SPEC_JWKS.keys[0], kid: undefined }, "must have a non-empty 'kid' (tokens name their key by kid)"],
    // common practice: kids are compared as exact strings, and printable ASCII has one spelling
    ['a kid beyond ASCII', { ...SPEC_JWKS.keys[0], kid: 'lbgh-clé' }, "must have a 'kid' of printable ASCII characters"],
    ['a kid with a control character', { ...SPEC_JWKS.keys[0], kid: 'lbgh\n1' }, "must have a 'kid' of printable ASCII characters"],
    // RFC 7517 §4.2, §4.3: use and key_ops restrict what a key is for
    ['an encryption key', { ...SPEC_JWKS.keys[0], use: 'enc' }, "has 'use' other than 'sig'"],
    ['a key for signing only', { ...SPEC_JWKS.keys[0], key_ops: ['sign'] }, "has 'key_ops' without 'verify'"],
    ['a key for HS256', { ...SPEC_JWKS.keys[0], alg: 'HS256' }, "has 'alg' other than one of ES256, ES384, ES512, RS256, RS384, RS512, PS256, PS384, PS512"],
    ['a secp256k1 key', { ...SPEC_JWKS.keys[0], crv: 'secp256k1' }, "must have crv 'P-256', 'P-384' or 'P-521'"],
    ['an EC key without y', { ...SPEC_JWKS.keys[0], y: undefined }, "must have string 'x' and 'y'"],
    ['a point off the curve', { ...SPEC_JWKS.keys[0], y: SPEC_JWKS.keys[0].x }, 'is not a valid public key'],
    ['a P-384 key that says ES256', { ...SPEC_JWKS.keys[0], alg: 'ES256' }, "does not fit its 'alg' (RFC 7518 §3.4)"],
    ['not an object', 'example-kid', 'must be a JWK object'],
  ])('refuses %s', (_name, jwk, problem) => {
    expect(problemOf(jwk)).toBe(problem);
  });

  it('refuses an RSA key shorter than 2048 bits', () => {
    // RFC 7518 §3.3: a key of size 2048 bits or larger MUST be used
    const { publicKey } = generateKeyPairSync('rsa', { modulusLength: 1024 });
    expect(problemOf({ ...publicKey.export({ format: 'jwk' }), kid: 'short' })).toBe(
      'is an RSA key shorter than 2048 bits (RFC 7518 §3.3)',
    );
  });

  describe('edge cases', () => {
    it('ignores members it does not know (RFC 7517 §4)', () => {
      expect(preparePublicJwk({ ...SPEC_JWKS.keys[0], x5t: 'bGFya3NwdXI', ext: true }).kind).toBe('ok');
    });

    it('groups keys by kid, keeping two that share one', () => {
      const a = makeKey('ES384', 'shared');
      const b = makeKey('ES256', 'shared');
      const prepared = [a, b].map((k) => preparePublicJwk(k.publicJwk)).flatMap((o) => (o.kind === 'ok' ? [o.key] : []));
      expect(buildKeySet(prepared).get('shared')?.map((k) => k.crv)).toStrictEqual(['P-384', 'P-256']);
    });

    it('reads a fetched JWK Set, skipping entries it cannot use', () => {
      const set = readJwkSet({ keys: [SPEC_JWKS.keys[0], SPEC_PRIVATE_JWK, { kty: 'oct', k: 'AA', kid: 'h' }] });
      expect(set === undefined ? undefined : [[...set.keys.keys()], set.skipped]).toStrictEqual([['example-kid'], 2]);
    });

    it.each([null, [], { keys: 'none' }, { key: [] }])('finds no JWK Set in %j', (json) => {
      expect(readJwkSet(json)).toBeUndefined();
    });
  });
});
