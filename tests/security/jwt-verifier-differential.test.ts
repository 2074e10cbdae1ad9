import { constants, randomUUID, sign } from 'node:crypto';
import fc from 'fast-check';
import jwt from 'jsonwebtoken';
import { describe, expect, it } from 'vitest';
import type { VerifyFailure, VerifyOutcome, VerifyToken } from '../../src/security/jwt-verifier.js';
import { EHR_ISS, ehrClient, NOW_S, SIGN_AUD, THEATRES_ISS, trustOf } from './support/fixtures.js';
import { makeKey, signWith, type TestAlg, type TestKey } from './support/keys.js';
import { LIMITS, testVerifier } from './support/test-verifier.js';

/**
 * The verifier against jsonwebtoken 9, the library that checked signatures, `nbf` and `exp` here
 * before issue 9: on generated valid and tampered tokens for every algorithm, both must reach the
 * same verdict. jsonwebtoken is the reference; it is given what the verifier had always given it
 * (the client's algorithms, its issuer, the clock and the skew) and the key the header's kid names.
 */

const ALGS: readonly TestAlg[] = ['ES256', 'ES384', 'ES512', 'RS256', 'RS384', 'RS512', 'PS256', 'PS384', 'PS512'];

const TRUSTED = new Map(ALGS.map((alg) => [alg, makeKey(alg, `lbgh-diff-${alg.toLowerCase()}`)] as const));
// Key pairs nobody trusts, used under a trusted kid (the swapped-key forgery)
const STRANGERS = new Map(ALGS.map((alg) => [alg, makeKey(alg, `lbgh-diff-${alg.toLowerCase()}`)] as const));

function keyFor(keys: ReadonlyMap<TestAlg, TestKey>, alg: TestAlg): TestKey {
  const key = keys.get(alg);
  if (key === undefined) {
    throw new Error(`no test key for ${alg}`);
  }
  return key;
}

// RSA keys go in without a JWK `alg`, so a header naming another RS or PS algorithm reaches the
// signature check (RFC 7517 §4.4: alg is optional) instead of stopping at key-unsuitable.
const trust = trustOf([
  ehrClient({
    jwks: {
      keys: ALGS.map((alg) => {
        const { publicJwk } = keyFor(TRUSTED, alg);
        return alg.startsWith('ES') ? publicJwk : { ...publicJwk, alg: undefined };
      }),
    },
    algorithms: ALGS,
  }),
]);

const freshVerifier = (): VerifyToken => testVerifier(trust);

/** Verdicts both sides can name. `before-signature` is the verifier's alone: see agreement below. */
type Verdict = 'accept' | 'signature' | 'expired' | 'not-before' | 'exp-not-a-number' | 'before-signature' | `unexpected: ${string}`;

/** jsonwebtoken's answer, by its error classes and (for plain JsonWebTokenErrors) its messages. */
function jsonwebtokenVerdict(token: string, headerKid: TestKey): Verdict {
  try {
    jwt.verify(token, headerKid.publicKey, {
      algorithms: [...ALGS],
      issuer: EHR_ISS,
      clockTimestamp: NOW_S,
      clockTolerance: LIMITS.clockSkewS,
    });
    return 'accept';
  } catch (error) {
    if (error instanceof jwt.TokenExpiredError) {
      return 'expired';
    }
    if (error instanceof jwt.NotBeforeError) {
      return 'not-before';
    }
    if (!(error instanceof jwt.JsonWebTokenError)) {
      // thrown by jwa and ecdsa-sig-formatter on a signature of the wrong form, or by jsonwebtoken's
      // key check on a key of the wrong type: either way the signature is not verified
      return 'signature';
    }
    const message = error.message;
    if (message === 'invalid signature' || message === 'jwt signature is required') {
      return 'signature';
    }
    if (message === 'invalid nbf value') {
      return 'not-before';
    }
    if (message === 'invalid exp value') {
      return 'exp-not-a-number';
    }
    if (message === 'invalid algorithm' || message.startsWith('jwt issuer invalid')) {
      return 'before-signature';
    }
    return `unexpected: ${message}`;
  }
}

const VERIFIER_VERDICTS: ReadonlyMap<VerifyFailure, Verdict> = new Map<VerifyFailure, Verdict>([
  ['signature-invalid', 'signature'],
  ['expired', 'expired'],
  ['nbf-in-future', 'not-before'],
  ['exp-missing', 'exp-not-a-number'],
  // checked before any key is touched (docs/security.md, "What is checked on every call")
  ['iss-untrusted', 'before-signature'],
  ['alg-not-allowed', 'before-signature'],
  ['key-unsuitable', 'before-signature'],
]);

function verifierVerdict(outcome: VerifyOutcome): Verdict {
  if (outcome.kind === 'verified') {
    return 'accept';
  }
  return VERIFIER_VERDICTS.get(outcome.reason) ?? `unexpected: ${outcome.reason}`;
}

/**
 * The verifier checks the issuer and the algorithm before the signature, jsonwebtoken after it; so
 * when the verifier refuses there, jsonwebtoken must refuse too, for whichever reason it meets first.
 * Every other verdict must be the same.
 */
function agree(ours: Verdict, reference: Verdict): boolean {
  return ours === 'before-signature' ? reference !== 'accept' && !reference.startsWith('unexpected') : ours === reference;
}

type Tamper =
  | { readonly kind: 'none' }
  | { readonly kind: 'flip'; readonly index: number; readonly mask: number }
  | { readonly kind: 'truncate'; readonly bytes: number }
  | { readonly kind: 'extend'; readonly extra: Uint8Array }
  | { readonly kind: 'der' }
  /** A PSS signature whose salt is not the hash's length (RFC 7518 §3.5 fixes it) */
  | { readonly kind: 'pss-salt'; readonly saltBytes: number }
  | { readonly kind: 'other-payload' }
  | { readonly kind: 'stranger-key' };

interface Case {
  readonly alg: TestAlg;
  /** The header's alg: the key's own, another of ours, or one never accepted. */
  readonly headerAlg: TestAlg | 'HS256' | 'none';
  /** Sign with the header's algorithm where the key can make it (RSA for RS and PS), else the key's. */
  readonly signAsHeader: boolean;
  readonly iss: unknown;
  /** undefined: not in the token */
  readonly nbf: unknown;
  readonly exp: unknown;
  readonly tamper: Tamper;
}

const skewOffsetS = fc.oneof(fc.constant(0), fc.integer({ min: -2000, max: 2000 }).map((ms) => ms / 1000));
const notANumber = fc.constantFrom<unknown>('soon', String(NOW_S + 100), null, true, [NOW_S + 100], {});

const caseArb: fc.Arbitrary<Case> = fc.constantFrom(...ALGS).chain((alg) =>
  fc.record({
    alg: fc.constant(alg),
    headerAlg: fc.oneof(
      { weight: 6, arbitrary: fc.constant(alg) },
      { weight: 2, arbitrary: fc.constantFrom(...ALGS) },
      { weight: 1, arbitrary: fc.constantFrom<'HS256' | 'none'>('HS256', 'none') },
    ),
    signAsHeader: fc.boolean(),
    iss: fc.oneof(
      { weight: 6, arbitrary: fc.constant<unknown>(EHR_ISS) },
      { weight: 1, arbitrary: fc.constantFrom<unknown>(undefined, 42, THEATRES_ISS, 'https://ehr.attacker.example', `${EHR_ISS}/`, EHR_ISS.toUpperCase()) },
    ),
    nbf: fc.oneof(
      { weight: 4, arbitrary: fc.constant<unknown>(undefined) },
      { weight: 1, arbitrary: fc.constant<unknown>(NOW_S - 100) },
      // RFC 7519 §4.1.5: around now + leeway
      { weight: 2, arbitrary: skewOffsetS.map<unknown>((d) => NOW_S + LIMITS.clockSkewS + d) },
      { weight: 1, arbitrary: notANumber },
    ),
    exp: fc.oneof(
      { weight: 3, arbitrary: fc.integer({ min: 1, max: 3500 }).map<unknown>((s) => NOW_S + s) },
      // RFC 7519 §4.1.4: around now - leeway
      { weight: 3, arbitrary: skewOffsetS.map<unknown>((d) => NOW_S - LIMITS.clockSkewS + d) },
      { weight: 1, arbitrary: notANumber },
    ),
    tamper: fc.oneof(
      { weight: 5, arbitrary: fc.constant<Tamper>({ kind: 'none' }) },
      { weight: 2, arbitrary: fc.record({ kind: fc.constant('flip' as const), index: fc.nat(), mask: fc.integer({ min: 1, max: 255 }) }) },
      { weight: 1, arbitrary: fc.record({ kind: fc.constant('truncate' as const), bytes: fc.integer({ min: 1, max: 600 }) }) },
      { weight: 1, arbitrary: fc.record({ kind: fc.constant('extend' as const), extra: fc.uint8Array({ minLength: 1, maxLength: 8 }) }) },
      ...(alg.startsWith('ES') ? [{ weight: 1, arbitrary: fc.constant<Tamper>({ kind: 'der' }) }] : []),
      ...(alg.startsWith('PS')
        ? [{ weight: 1, arbitrary: fc.record({ kind: fc.constant('pss-salt' as const), saltBytes: fc.constantFrom(0, 16, 100) }) }]
        : []),
      { weight: 1, arbitrary: fc.constant<Tamper>({ kind: 'other-payload' }) },
      { weight: 1, arbitrary: fc.constant<Tamper>({ kind: 'stranger-key' }) },
    ),
  }),
);

function payloadOf(c: Case): Record<string, unknown> {
  // iat kept valid (not in the future, lifetime within the cap), so only what jsonwebtoken also
  // checks can differ
  const iat = typeof c.exp === 'number' ? Math.min(NOW_S - 5, c.exp - 300) : NOW_S - 5;
  const payload: Record<string, unknown> = { aud: SIGN_AUD, iat, exp: c.exp, jti: randomUUID() };
  if (c.iss !== undefined) {
    payload['iss'] = c.iss;
  }
  if (c.nbf !== undefined) {
    payload['nbf'] = c.nbf;
  }
  return payload;
}

function tokenFor(c: Case): string {
  const trusted = keyFor(TRUSTED, c.alg);
  const signer = c.tamper.kind === 'stranger-key' ? keyFor(STRANGERS, c.alg) : trusted;
  const rsaHeader = c.headerAlg.startsWith('RS') || c.headerAlg.startsWith('PS');
  const scheme = c.signAsHeader && rsaHeader && !c.alg.startsWith('ES') ? (c.headerAlg as TestAlg) : c.alg;
  const header = { alg: c.headerAlg, typ: 'JWT', kid: trusted.kid };
  const token = signWith(scheme, header, payloadOf(c), signer.privateKey);
  const [head = '', body = '', sig = ''] = token.split('.');
  const signature = Buffer.from(sig, 'base64url');
  const withSignature = (bytes: Buffer): string => `${head}.${body}.${bytes.toString('base64url')}`;
  switch (c.tamper.kind) {
    case 'none':
    case 'stranger-key':
      return token;
    case 'flip': {
      const flipped = Buffer.from(signature);
      const at = c.tamper.index % flipped.length;
      flipped[at] = (flipped[at] ?? 0) ^ c.tamper.mask;
      return withSignature(flipped);
    }
    case 'truncate':
      return withSignature(signature.subarray(0, Math.max(0, signature.length - c.tamper.bytes)));
    case 'extend':
      return withSignature(Buffer.concat([signature, c.tamper.extra]));
    case 'der': {
      // RFC 7518 §3.4 wants R || S; this is the same signature in ASN.1 DER, as OpenSSL makes it
      const hash = `sha${c.alg.slice(2)}`;
      return withSignature(sign(hash, Buffer.from(`${head}.${body}`), { key: signer.privateKey, dsaEncoding: 'der' }));
    }
    case 'pss-salt': {
      const hash = `sha${c.alg.slice(2)}`;
      const options = { key: signer.privateKey, padding: constants.RSA_PKCS1_PSS_PADDING, saltLength: c.tamper.saltBytes };
      return withSignature(sign(hash, Buffer.from(`${head}.${body}`), options));
    }
    case 'other-payload': {
      const other = Buffer.from(JSON.stringify({ ...payloadOf(c), tenant: 'forged' })).toString('base64url');
      return `${head}.${other}.${sig}`;
    }
  }
}

describe('the verifier and jsonwebtoken 9 on generated tokens', () => {
  it('reach the same verdict on valid and tampered tokens for ES256-512, RS256-512 and PS256-512', async () => {
    const seen = new Set<string>();
    await fc.assert(
      fc.asyncProperty(caseArb, async (c) => {
        const token = tokenFor(c);
        const reference = jsonwebtokenVerdict(token, keyFor(TRUSTED, c.alg));
        const ours = verifierVerdict(await freshVerifier()(token, SIGN_AUD));
        seen.add(ours);
        seen.add(`${c.alg} ${ours}`);
        expect({ ours, reference, agrees: agree(ours, reference) }).toMatchObject({ agrees: true });
      }),
      { numRuns: 700 },
    );
    // the generator reached every verdict, and acceptance and forgery for every algorithm
    for (const verdict of ['accept', 'signature', 'expired', 'not-before', 'exp-not-a-number', 'before-signature']) {
      expect(seen).toContain(verdict);
    }
    for (const alg of ALGS) {
      expect(seen).toContain(`${alg} accept`);
      expect(seen).toContain(`${alg} signature`);
    }
  });

  describe('edge cases', () => {
    it.each<[string, Case, Verdict]>([
      // RFC 7519 §4.1.4 with a 60 s leeway: refused from now = exp + leeway on
      ['exp at the end of the leeway', { ...plain('ES384'), exp: NOW_S - 60 }, 'expired'],
      ['exp a millisecond inside it', { ...plain('ES384'), exp: NOW_S - 60 + 0.001 }, 'accept'],
      // RFC 7519 §4.1.5: nbf up to now + leeway is taken
      ['nbf at the end of the leeway', { ...plain('PS512'), nbf: NOW_S + 60 }, 'accept'],
      ['nbf a millisecond past it', { ...plain('PS512'), nbf: NOW_S + 60 + 0.001 }, 'not-before'],
      // RFC 7518 §3.4: R || S only
      ['an ES512 signature in DER', { ...plain('ES512'), tamper: { kind: 'der' } }, 'signature'],
      // RFC 7518 §3.3 and §3.5: PKCS #1 v1.5 and PSS are different schemes over one key
      ['an RS256 signature under a PS256 header', { ...plain('RS256'), headerAlg: 'PS256' }, 'signature'],
      ['a PS384 signature under a PS384 header, made with an RS-published key', { ...plain('RS384'), headerAlg: 'PS384', signAsHeader: true }, 'accept'],
      ['a key nobody trusts, under a trusted kid', { ...plain('RS512'), tamper: { kind: 'stranger-key' } }, 'signature'],
      ['a PS256 signature with no salt', { ...plain('PS256'), tamper: { kind: 'pss-salt', saltBytes: 0 } }, 'signature'],
    ])('%s: both say %s', async (_name, c, verdict) => {
      const token = tokenFor(c);
      expect(jsonwebtokenVerdict(token, keyFor(TRUSTED, c.alg))).toBe(verdict);
      expect(verifierVerdict(await freshVerifier()(token, SIGN_AUD))).toBe(verdict);
    });
  });
});

function plain(alg: TestAlg): Case {
  return { alg, headerAlg: alg, signAsHeader: false, iss: EHR_ISS, nbf: undefined, exp: NOW_S + 295, tamper: { kind: 'none' } };
}
