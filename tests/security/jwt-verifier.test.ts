import { constants, sign, type KeyObject } from 'node:crypto';
import jwt from 'jsonwebtoken';
import { describe, expect, it } from 'vitest';
import { MAX_TOKEN_LENGTH } from '../../src/security/jwt-verifier.js';
import { SPEC_JWKS, SPEC_PAYLOAD, SPEC_TOKEN } from '../fixtures/security/spec-jwt-example.js';
import {
  claims,
  DISCOVERY_AUD,
  EHR_ES384,
  EHR_ISS,
  EHR_JKU,
  EHR_RS384,
  ehrClient,
  fakeFetch,
  NOW_S,
  SIGN_AUD,
  THEATRES_ES384,
  theatresClient,
  trustOf,
} from './support/fixtures.js';
import { makeKey, signToken, signWith, type TestAlg, type TestKey } from './support/keys.js';
import { testVerifier as verifier } from './support/test-verifier.js';

const trust = trustOf([ehrClient(), theatresClient()]);

async function reasonFor(token: string, aud = SIGN_AUD, using = verifier(trust)): Promise<string> {
  const outcome = await using(token, aud);
  return outcome.kind === 'refused' ? outcome.reason : 'verified';
}

describe('createJwtVerifier', () => {
  describe('acceptance', () => {
    it.each([
      // CDS Hooks 2.0 §JWT signing algorithm: ES384 and RS384 RECOMMENDED
      ['ES384', EHR_ES384],
      ['RS384', EHR_RS384],
    ])('accepts a %s token from a trusted client', async (_alg, key) => {
      const outcome = await verifier(trust)(signToken(key, claims(SIGN_AUD, { tenant: 'north-campus' })), SIGN_AUD);
      expect(outcome.kind === 'verified' ? [outcome.client.iss, outcome.alg, outcome.claims.tenant] : outcome).toStrictEqual([
        EHR_ISS,
        key.alg,
        'north-campus',
      ]);
    });

    it.each([
      // RFC 7519 §4.1.3: aud as a string, or an array containing this endpoint
      ['a string', SIGN_AUD],
      ['an array', [DISCOVERY_AUD, SIGN_AUD]],
    ])('accepts aud as %s', async (_name, aud) => {
      expect(await reasonFor(signToken(EHR_ES384, claims(aud)))).toBe('verified');
    });

    it.each(['ES384', 'RS384'] as const)('accepts a %s token signed by jsonwebtoken, as a Node client would sign it', async (alg) => {
      const key = alg === 'ES384' ? EHR_ES384 : EHR_RS384;
      const token = jwt.sign(claims(SIGN_AUD), key.privateKey, { algorithm: alg, keyid: key.kid, header: { alg, typ: 'JWT' } });
      expect(await reasonFor(token)).toBe('verified');
    });

    it('verifies the specification example token with the specification JWKS, at a time before its exp', async () => {
      // CDS Hooks 2.0 §Trusting CDS Clients › Example: ES384, kid example-kid, jku .../jwk_uri.
      // The token lives 3.5 years (iat 1311280970, exp 1422568860), so the lifetime limit is lifted here.
      const specTrust = trustOf([
        { iss: SPEC_PAYLOAD.iss, jwks: SPEC_JWKS, jkuAllowlist: ['https://fhir-ehr.example.com/jwk_uri'], fhirServers: [] },
      ]);
      const served = fakeFetch({ 'https://fhir-ehr.example.com/jwk_uri': SPEC_JWKS });
      const check = verifier(specTrust, {
        fetch: served.fetch,
        clock: () => new Date((SPEC_PAYLOAD.exp - 60) * 1000),
        limits: { clockSkewS: 60, maxLifetimeS: SPEC_PAYLOAD.exp - SPEC_PAYLOAD.iat },
      });
      const outcome = await check(SPEC_TOKEN, SPEC_PAYLOAD.aud);
      expect(outcome.kind === 'verified' ? outcome.claims : outcome).toStrictEqual({
        expS: 1422568860,
        iatS: 1311280970,
        jti: 'ee22b021-e1b7-4611-ba5b-8eec6a33ac1e',
        tenant: '2ddd6c3a-8e9a-44c6-a305-52111ad302a2',
      });
      // the allowlisted jku was the key source
      expect(served.asked).toStrictEqual(['https://fhir-ehr.example.com/jwk_uri']);
    });

    it('accepts ES256 and PS256 only for a client that opts in', async () => {
      const es256 = makeKey('ES256', 'lbgh-es256');
      const ps256 = makeKey('PS256', 'lbgh-ps256');
      const keys = { keys: [es256.publicJwk, ps256.publicJwk] };
      const optIn = trustOf([ehrClient({ jwks: keys, algorithms: ['ES256', 'PS256'] })]);
      expect(await reasonFor(signToken(es256, claims(SIGN_AUD)), SIGN_AUD, verifier(optIn))).toBe('verified');
      expect(await reasonFor(signToken(ps256, claims(SIGN_AUD)), SIGN_AUD, verifier(optIn))).toBe('verified');
      // CDS Hooks 2.0 §JWT signing algorithm: beyond ES384/RS384 is the client agreement's choice
      const es256Default = trustOf([ehrClient({ jwks: { keys: [{ ...es256.publicJwk, alg: undefined }] }, algorithms: ['ES256'] })]);
      expect(await reasonFor(signToken(es256, claims(SIGN_AUD)), SIGN_AUD, verifier(es256Default))).toBe('verified');
    });
  });

  describe('refusals', () => {
    const publicPem = EHR_RS384.publicKey.export({ format: 'pem', type: 'spki' });
    it.each<[string, () => string, string]>([
      ['a token that is not a JWS', () => 'not-a-jwt', 'malformed'],
      // CDS Hooks 2.0 §JWT signing algorithm: none SHALL NOT be used
      ['alg none', () => signWith('none', { alg: 'none', typ: 'JWT', kid: EHR_ES384.kid }, claims(SIGN_AUD), undefined), 'alg-not-allowed'],
      // CDS Hooks 2.0: no symmetric algorithm SHALL be used
      ['HS256 with a shared secret', () => signWith('HS256', { alg: 'HS256', typ: 'JWT', kid: EHR_ES384.kid }, claims(SIGN_AUD), 'larkspur-secret'), 'alg-not-allowed'],
      // The algorithm-confusion attack: HMAC keyed with the client's published RSA public key
      ['HS256 keyed with the public key (alg confusion)', () => signWith('HS256', { alg: 'HS256', typ: 'JWT', kid: EHR_RS384.kid }, claims(SIGN_AUD), publicPem), 'alg-not-allowed'],
      ['an algorithm the client has not opted into', () => signToken(makeKey('ES256', EHR_ES384.kid), claims(SIGN_AUD)), 'alg-not-allowed'],
      // CDS Hooks 2.0 §Trusting CDS Clients: typ REQUIRED, fixed JWT
      ['typ missing', () => signToken(EHR_ES384, claims(SIGN_AUD), { typ: undefined }), 'typ-invalid'],
      ['typ at+jwt', () => signToken(EHR_ES384, claims(SIGN_AUD), { typ: 'at+jwt' }), 'typ-invalid'],
      // CDS Hooks 2.0: kid REQUIRED
      ['kid missing', () => signToken(EHR_ES384, claims(SIGN_AUD), { kid: undefined }), 'kid-missing'],
      // RFC 7515 §4.1.11: unknown crit extensions make the JWS invalid
      ['a crit header', () => signToken(EHR_ES384, claims(SIGN_AUD), { crit: ['exp'] }), 'crit-unsupported'],
      ['an iss not on the list', () => signToken(EHR_ES384, claims(SIGN_AUD, { iss: 'https://ehr.attacker.example' })), 'iss-untrusted'],
      ['no iss', () => signToken(EHR_ES384, claims(SIGN_AUD, { iss: undefined })), 'iss-untrusted'],
      // CDS Hooks 2.0: only a jku allowlisted for that iss is fetched; any other is ignored, and the
      // attacker's key is then checked against this issuer's configured keys by kid
      ['an attacker’s key behind a jku not on the allowlist', () => signToken(makeKey('ES384', 'attacker-1'), claims(SIGN_AUD), { jku: 'https://attacker.example/jwks.json' }), 'kid-unknown'],
      ['an attacker’s key under this issuer’s kid, behind a jku not on the allowlist', () => signToken(THEATRES_ES384, claims(SIGN_AUD), { kid: EHR_ES384.kid, jku: 'https://attacker.example/jwks.json' }), 'signature-invalid'],
      ['an unknown kid', () => signToken(makeKey('ES384', 'lbgh-unknown'), claims(SIGN_AUD)), 'kid-unknown'],
      ['a key of another trusted issuer', () => signToken(THEATRES_ES384, claims(SIGN_AUD)), 'kid-unknown'],
      ['another issuer’s key under this issuer’s kid', () => signToken(THEATRES_ES384, claims(SIGN_AUD), { kid: EHR_ES384.kid }), 'signature-invalid'],
      ['an RS384 header naming an EC key', () => signWith('RS384', { alg: 'RS384', typ: 'JWT', kid: EHR_ES384.kid }, claims(SIGN_AUD), EHR_RS384.privateKey), 'key-unsuitable'],
      ['a tampered payload', () => tamperPayload(signToken(EHR_ES384, claims(SIGN_AUD))), 'signature-invalid'],
      ['a tampered signature', () => tamperSignature(signToken(EHR_ES384, claims(SIGN_AUD))), 'signature-invalid'],
      ['another service as aud', () => signToken(EHR_ES384, claims('https://cds.larkspur-bay.example/cds-services/oxygen-order-select')), 'aud-mismatch'],
      ['the discovery URL as aud on a service call', () => signToken(EHR_ES384, claims(DISCOVERY_AUD)), 'aud-mismatch'],
      ['another host as aud', () => signToken(EHR_ES384, claims('https://cds.attacker.example/cds-services/oxygen-order-sign')), 'aud-mismatch'],
      ['an expired token', () => signToken(EHR_ES384, claims(SIGN_AUD, { iat: NOW_S - 900, exp: NOW_S - 600 })), 'expired'],
      ['iat in the future', () => signToken(EHR_ES384, claims(SIGN_AUD, { iat: NOW_S + 600, exp: NOW_S + 900 })), 'iat-in-future'],
      ['a lifetime over an hour', () => signToken(EHR_ES384, claims(SIGN_AUD, { iat: NOW_S - 5, exp: NOW_S + 7200 })), 'lifetime-too-long'],
      ['no jti', () => signToken(EHR_ES384, claims(SIGN_AUD, { jti: undefined })), 'jti-missing'],
    ])('refuses %s', async (_name, token, reason) => {
      expect(await reasonFor(token())).toBe(reason);
    });

    it('refuses the specification example token as expired at today’s date', async () => {
      // CDS Hooks 2.0 example: exp 1422568860 (2015-01-29); signature valid, so only expiry fails
      const specTrust = trustOf([{ iss: SPEC_PAYLOAD.iss, jwks: SPEC_JWKS, jkuAllowlist: ['https://fhir-ehr.example.com/jwk_uri'], fhirServers: [] }]);
      const served = fakeFetch({ 'https://fhir-ehr.example.com/jwk_uri': SPEC_JWKS });
      expect(await reasonFor(SPEC_TOKEN, SPEC_PAYLOAD.aud, verifier(specTrust, { fetch: served.fetch }))).toBe('expired');
    });

    it('refuses a replayed jti', async () => {
      const check = verifier(trust);
      const token = signToken(EHR_ES384, claims(SIGN_AUD));
      expect(await reasonFor(token, SIGN_AUD, check)).toBe('verified');
      expect(await reasonFor(token, SIGN_AUD, check)).toBe('jti-replayed');
    });

    it('refuses the tenant a client is not listed for', async () => {
      const tenanted = trustOf([ehrClient({ tenants: ['north-campus'] })]);
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD, { tenant: 'south-campus' })), SIGN_AUD, verifier(tenanted))).toBe('tenant-not-allowed');
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD)), SIGN_AUD, verifier(tenanted))).toBe('tenant-not-allowed');
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD, { tenant: 'north-campus' })), SIGN_AUD, verifier(tenanted))).toBe('verified');
    });
  });

  describe('the token format (RFC 7515 §7.1, compact serialization)', () => {
    const head = b64({ alg: 'ES384', typ: 'JWT', kid: EHR_ES384.kid });
    const body = b64(claims(SIGN_AUD));
    it.each([
      ['two segments', `${head}.${body}`],
      ['four segments', `${head}.${body}.AA.AA`],
      // RFC 7515 §2: base64url without padding
      ['padding', `${head}=.${body}.AA`],
      ['standard base64 characters', `${head}.${body}.A+/A`],
      ['whitespace', ` ${head}.${body}.AA`],
      ['a detached payload (RFC 7515 Appendix F)', `${head}..AA`],
      ['a header that is not JSON', `bm90IGpzb24.${body}.AA`],
      ['a header that is null', `${b64(null)}.${body}.AA`],
      ['a header that is an array', `${b64(['ES384'])}.${body}.AA`],
      // RFC 7519 §7.2 step 10: the claims set must be a JSON object
      ['a payload that is an array', `${head}.${b64(['iss'])}.AA`],
      ['a payload that is a JSON string', `${head}.${b64('iss')}.AA`],
      ['a payload that is null', `${head}.${b64(null)}.AA`],
      ['a payload that is not JSON', `${head}.${Buffer.from('not json').toString('base64url')}.AA`],
      ['an empty header', `.${body}.AA`],
      // RFC 7515 §5.2 step 4: the header is UTF-8; invalid bytes are not replaced and read on
      ['a header that is not UTF-8', `${Buffer.concat([Buffer.from('{"alg":"ES384","typ":"JWT","kid":"'), Buffer.from([0xff]), Buffer.from('"}')]).toString('base64url')}.${body}.AA`],
      // RFC 8259 §8.1: JSON text is not sent with a byte-order mark
      ['a header with a byte-order mark', `${Buffer.from(`\uFEFF${JSON.stringify({ alg: 'ES384', typ: 'JWT', kid: EHR_ES384.kid })}`).toString('base64url')}.${body}.AA`],
    ])('refuses a token with %s as malformed', async (_name, token) => {
      expect(await reasonFor(token)).toBe('malformed');
    });

    it('refuses a token longer than the cap as malformed, even when its signature is good', async () => {
      const long = signToken(EHR_ES384, claims(SIGN_AUD, { pad: 'x'.repeat(MAX_TOKEN_LENGTH) }));
      expect(long.length).toBeGreaterThan(MAX_TOKEN_LENGTH);
      expect(await reasonFor(long)).toBe('malformed');
    });

    it('refuses a segment whose last character carries spare bits, so the signature checked is the one received', async () => {
      // RFC 4648 §3.5: the pad bits are zero in the canonical encoding. A 64-byte ES256 signature is
      // 86 characters with 4 spare bits; setting one gives other text for the same bytes.
      const es256 = makeKey('ES256', 'lbgh-es256-spare');
      const optIn = trustOf([ehrClient({ jwks: { keys: [es256.publicJwk] }, algorithms: ['ES256'] })]);
      const token = signToken(es256, claims(SIGN_AUD));
      const [input, sig = ''] = [token.slice(0, token.lastIndexOf('.')), token.slice(token.lastIndexOf('.') + 1)];
      expect(sig.length).toBe(86);
      const spare = withSpareBitSet(sig);
      expect(Buffer.from(spare, 'base64url')).toStrictEqual(Buffer.from(sig, 'base64url'));
      expect(await reasonFor(`${input}.${sig}`, SIGN_AUD, verifier(optIn))).toBe('verified');
      expect(await reasonFor(`${input}.${spare}`, SIGN_AUD, verifier(optIn))).toBe('malformed');
    });

    it('refuses a header or payload segment that is not the canonical encoding of its bytes', async () => {
      // a length that is not a multiple of 3 bytes leaves spare bits in the last character
      const canonical = Buffer.from(JSON.stringify(claims(SIGN_AUD, { pad: 'x' }))).toString('base64url');
      expect(canonical.length % 4).not.toBe(0);
      const altered = withSpareBitSet(canonical);
      expect(Buffer.from(altered, 'base64url')).toStrictEqual(Buffer.from(canonical, 'base64url'));
      expect(await reasonFor(`${head}.${altered}.AA`)).toBe('malformed');
    });

    it('names an unsigned token (empty signature, RFC 7519 §6.1) by its algorithm', async () => {
      expect(await reasonFor(`${b64({ alg: 'none', typ: 'JWT', kid: EHR_ES384.kid })}.${body}.`)).toBe('alg-not-allowed');
    });
  });

  describe('signatures (RFC 7518 §3.3-3.5), checked on the thread pool', () => {
    // RFC 7518 §3.1: each of these algorithms, for a client that names it
    it.each(['ES256', 'ES512', 'RS256', 'RS512', 'PS384', 'PS512'] as const)('accepts %s for a client that opts in', async (alg: TestAlg) => {
      const key = makeKey(alg, `lbgh-${alg.toLowerCase()}`);
      const optIn = trustOf([ehrClient({ jwks: { keys: [key.publicJwk] }, algorithms: [alg] })]);
      expect(await reasonFor(signToken(key, claims(SIGN_AUD)), SIGN_AUD, verifier(optIn))).toBe('verified');
    });

    it('refuses an ES384 signature in DER form (RFC 7518 §3.4 requires the 96-byte R||S form)', async () => {
      const input = `${b64({ alg: 'ES384', typ: 'JWT', kid: EHR_ES384.kid })}.${b64(claims(SIGN_AUD))}`;
      const der = sign('sha384', Buffer.from(input), EHR_ES384.privateKey);
      expect(der.length).not.toBe(96);
      expect(await reasonFor(`${input}.${der.toString('base64url')}`)).toBe('signature-invalid');
    });

    it('refuses an empty signature on a token whose algorithm needs one', async () => {
      const input = `${b64({ alg: 'ES384', typ: 'JWT', kid: EHR_ES384.kid })}.${b64(claims(SIGN_AUD))}`;
      expect(await reasonFor(`${input}.`)).toBe('signature-invalid');
      const rsInput = `${b64({ alg: 'RS384', typ: 'JWT', kid: EHR_RS384.kid })}.${b64(claims(SIGN_AUD))}`;
      expect(await reasonFor(`${rsInput}.`)).toBe('signature-invalid');
    });

    it('refuses an ES384 signature of another curve’s size, and an RSA signature longer than the key', async () => {
      // RFC 7518 §3.4: R || S is exactly 96 octets for P-384; RFC 8017 §8.2.2: k octets for RSA
      const input = `${b64({ alg: 'ES384', typ: 'JWT', kid: EHR_ES384.kid })}.${b64(claims(SIGN_AUD))}`;
      const good = sign('sha384', Buffer.from(input), { key: EHR_ES384.privateKey, dsaEncoding: 'ieee-p1363' });
      expect(await reasonFor(`${input}.${good.toString('base64url')}`)).toBe('verified');
      expect(await reasonFor(`${input}.${Buffer.concat([good, Buffer.alloc(36)]).toString('base64url')}`)).toBe('signature-invalid');
      expect(await reasonFor(`${input}.${good.subarray(0, 64).toString('base64url')}`)).toBe('signature-invalid');
      const rs = signToken(EHR_RS384, claims(SIGN_AUD));
      expect(await reasonFor(`${rs}AAAA`)).toBe('signature-invalid');
    });

    it('refuses an RS256 signature offered as PS256, and the reverse', async () => {
      // RFC 7518 §3.3 and §3.5: PKCS #1 v1.5 and PSS are different schemes over the same key
      const rsa = makeKey('RS256', 'lbgh-rsa-both');
      const both = trustOf([ehrClient({ jwks: { keys: [{ ...rsa.publicJwk, alg: undefined }] }, algorithms: ['RS256', 'PS256'] })]);
      const asPss = signWith('RS256', { alg: 'PS256', typ: 'JWT', kid: rsa.kid }, claims(SIGN_AUD), rsa.privateKey);
      const asPkcs1 = signWith('PS256', { alg: 'RS256', typ: 'JWT', kid: rsa.kid }, claims(SIGN_AUD), rsa.privateKey);
      expect(await reasonFor(asPss, SIGN_AUD, verifier(both))).toBe('signature-invalid');
      expect(await reasonFor(asPkcs1, SIGN_AUD, verifier(both))).toBe('signature-invalid');
    });

    it('tries each suitable key that shares a kid (RFC 7517 §4.5) and accepts the one that verifies', async () => {
      // a fetched set may hold two keys under one kid (the trust file refuses that)
      const first = makeKey('ES384', 'lbgh-shared');
      const second = makeKey('ES384', 'lbgh-shared');
      const served = fakeFetch({ [EHR_JKU]: { keys: [first.publicJwk, second.publicJwk] } });
      const check = verifier(trust, { fetch: served.fetch });
      expect(await reasonFor(signToken(second, claims(SIGN_AUD), { jku: EHR_JKU }), SIGN_AUD, check)).toBe('verified');
      expect(await reasonFor(signToken(first, claims(SIGN_AUD), { jku: EHR_JKU }), SIGN_AUD, check)).toBe('verified');
      expect(await reasonFor(signToken(makeKey('ES384', 'lbgh-shared'), claims(SIGN_AUD), { jku: EHR_JKU }), SIGN_AUD, check)).toBe('signature-invalid');
    });
  });

  describe('time, with the skew (RFC 7519 §4.1.4, §4.1.5)', () => {
    it.each<[string, Record<string, unknown>, string]>([
      // RFC 7519 §4.1.4: the current time MUST be before exp, with a small leeway (60 s here)
      ['exp just inside the leeway', { iat: NOW_S - 300, exp: NOW_S - 59 }, 'verified'],
      ['exp at the end of the leeway', { iat: NOW_S - 300, exp: NOW_S - 60 }, 'expired'],
      // RFC 7519 §4.1.5: not before nbf, with the same leeway
      ['nbf at the end of the leeway', { nbf: NOW_S + 60 }, 'verified'],
      ['nbf past the leeway', { nbf: NOW_S + 61 }, 'nbf-in-future'],
      ['nbf that is not a number', { nbf: 'soon' }, 'nbf-in-future'],
      ['nbf null', { nbf: null }, 'nbf-in-future'],
      // RFC 7519 §2: NumericDate values may be non-integer
      ['non-integer NumericDates', { iat: NOW_S - 0.5, exp: NOW_S + 10.25 }, 'verified'],
      // RFC 7519 makes exp and iat optional; CDS Hooks 2.0 §Trusting CDS Clients requires both
      ['no exp', { exp: undefined }, 'exp-missing'],
      ['exp as a string', { exp: String(NOW_S + 60) }, 'exp-missing'],
      ['no iat', { iat: undefined }, 'iat-missing'],
      // common practice: reject an iat past the leeway
      ['iat at the end of the leeway', { iat: NOW_S + 60, exp: NOW_S + 120 }, 'verified'],
      ['iat past the leeway', { iat: NOW_S + 61, exp: NOW_S + 120 }, 'iat-in-future'],
      ['exp before iat', { iat: NOW_S + 30, exp: NOW_S + 20 }, 'lifetime-invalid'],
      // CDS Hooks best practices: at most 1 h, however recent iat is
      ['a lifetime of exactly an hour', { iat: NOW_S - 10, exp: NOW_S - 10 + 3600 }, 'verified'],
      ['a lifetime a second over an hour', { iat: NOW_S - 10, exp: NOW_S - 10 + 3601 }, 'lifetime-too-long'],
    ])('%s: %s', async (_name, change, reason) => {
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD, change)))).toBe(reason);
    });
  });

  describe('where a general JWT library would accept more', () => {
    it.each<[string, Record<string, unknown>]>([
      // RFC 7515 §4.1.11: an extension not understood MUST make the JWS invalid (jsonwebtoken ignores crit)
      ['crit naming b64 (RFC 7797)', { b64: false, crit: ['b64'] }],
      ['an empty crit', { crit: [] }],
      ['crit naming a private extension', { 'urn:larkspur:x': 1, crit: ['urn:larkspur:x'] }],
    ])('refuses %s, signed correctly', async (_name, header) => {
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD), header))).toBe('crit-unsupported');
    });

    it('never checks a signature over an unencoded payload (b64 false without crit)', async () => {
      const header = b64({ alg: 'ES384', typ: 'JWT', kid: EHR_ES384.kid, b64: false });
      const payload = JSON.stringify(claims(SIGN_AUD));
      const overRaw = signRaw(EHR_ES384, `${header}.${payload}`);
      expect(await reasonFor(`${header}.${Buffer.from(payload).toString('base64url')}.${overRaw}`)).toBe('signature-invalid');
    });

    it('reads duplicate header names as the last one, for the key choice and the signature alike', async () => {
      // RFC 7515 §5.2: a parser may use the lexically last duplicate; the key choice and the signature use one reading
      const lastIsEs384 = `{"alg":"none","typ":"JWT","kid":"${EHR_ES384.kid}","alg":"ES384"}`;
      expect(await reasonFor(rawToken(EHR_ES384, lastIsEs384, claims(SIGN_AUD)))).toBe('verified');
      const lastIsNone = `{"alg":"ES384","typ":"JWT","kid":"${EHR_ES384.kid}","alg":"none"}`;
      expect(await reasonFor(rawToken(EHR_ES384, lastIsNone, claims(SIGN_AUD)))).toBe('alg-not-allowed');
      const lastKidUnknown = `{"alg":"ES384","typ":"JWT","kid":"${EHR_ES384.kid}","kid":"lbgh-not-a-key"}`;
      expect(await reasonFor(rawToken(EHR_ES384, lastKidUnknown, claims(SIGN_AUD)))).toBe('kid-unknown');
    });

    it('reads a duplicate iss as the last one, so the key is always that issuer’s', async () => {
      const payload = `{"iss":"${EHR_ISS}","aud":"${SIGN_AUD}","iat":${NOW_S - 5},"exp":${NOW_S + 295},"jti":"lbgh-dup-iss","iss":"https://theatres.larkspur-bay.example"}`;
      const header = JSON.stringify({ alg: 'ES384', typ: 'JWT', kid: EHR_ES384.kid });
      // the EHR's key under the theatres' iss: the theatres have no key of that kid
      expect(await reasonFor(rawToken(EHR_ES384, header, payload))).toBe('kid-unknown');
    });

    it('refuses an aud array with a member that is not a string, which jsonwebtoken’s audience option passes', async () => {
      expect(await reasonFor(signToken(EHR_ES384, claims([SIGN_AUD, 5])))).toBe('aud-mismatch');
    });

    it('accepts aud spelt with another host case, the default port or a trailing slash, which jsonwebtoken’s option refuses', async () => {
      // docs/security.md step 8: compared after URL normalisation
      expect(await reasonFor(signToken(EHR_ES384, claims('https://CDS.larkspur-bay.example:443/cds-services/oxygen-order-sign/')))).toBe('verified');
    });
  });

  describe('edge cases', () => {
    it('never fetches a jku that is not allowlisted, and checks the token against the configured keys by kid', async () => {
      const attacker = makeKey('ES384', EHR_ES384.kid);
      const served = fakeFetch({ 'https://attacker.example/jwks.json': { keys: [attacker.publicJwk] } });
      const check = verifier(trust, { fetch: served.fetch });
      // the client's own key: accepted, as an EHR that puts its own jku in every header expects
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD), { jku: 'https://attacker.example/jwks.json' }), SIGN_AUD, check)).toBe('verified');
      // a key published only at the unlisted jku: the configured key of that kid does not verify it
      expect(await reasonFor(signToken(attacker, claims(SIGN_AUD), { jku: 'https://attacker.example/jwks.json' }), SIGN_AUD, check)).toBe('signature-invalid');
      // a jku that is not even a URL is ignored the same way
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD), { jku: 'not a url' }), SIGN_AUD, check)).toBe('verified');
      expect(served.asked).toStrictEqual([]);
    });

    it('fetches only the configured key set URL when the jku is not allowlisted', async () => {
      const keysUrl = 'https://ehr.larkspur-bay.example/keys';
      const remote = trustOf([ehrClient({ jwks: undefined, jwksUrl: keysUrl })]);
      const served = fakeFetch({ [keysUrl]: { keys: [EHR_ES384.publicJwk] }, 'https://attacker.example/jwks.json': { keys: [] } });
      const token = signToken(EHR_ES384, claims(SIGN_AUD), { jku: 'https://attacker.example/jwks.json' });
      expect(await reasonFor(token, SIGN_AUD, verifier(remote, { fetch: served.fetch }))).toBe('verified');
      expect(served.asked).toStrictEqual([keysUrl]);
    });

    it('takes keys from an allowlisted jku, not from the static set', async () => {
      const rotated = makeKey('ES384', 'lbgh-ehr-es384-2026');
      const served = fakeFetch({ [EHR_JKU]: { keys: [rotated.publicJwk] } });
      const token = signToken(rotated, claims(SIGN_AUD), { jku: EHR_JKU });
      expect(await reasonFor(token, SIGN_AUD, verifier(trust, { fetch: served.fetch }))).toBe('verified');
      expect(served.asked).toStrictEqual([EHR_JKU]);
    });

    it('reports keys it could not fetch as jwks-unavailable', async () => {
      const remote = trustOf([ehrClient({ jwks: undefined, jwksUrl: 'https://ehr.larkspur-bay.example/keys' })]);
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD)), SIGN_AUD, verifier(remote))).toBe('jwks-unavailable');
    });

    it('does not burn a jti on a token it refuses for another reason', async () => {
      const check = verifier(trust);
      const jti = 'lbgh-jti-reused-after-refusal';
      expect(await reasonFor(signToken(EHR_ES384, claims(DISCOVERY_AUD, { jti })), SIGN_AUD, check)).toBe('aud-mismatch');
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD, { jti })), SIGN_AUD, check)).toBe('verified');
    });

    it('keeps jti per issuer, so two clients may use the same id', async () => {
      const check = verifier(trust);
      const jti = 'lbgh-shared-jti';
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD, { jti })), SIGN_AUD, check)).toBe('verified');
      expect(await reasonFor(signToken(THEATRES_ES384, claims(SIGN_AUD, { jti, iss: 'https://theatres.larkspur-bay.example' })), SIGN_AUD, check)).toBe('verified');
    });

    it('labels a refusal with the token identifiers only', async () => {
      const outcome = await verifier(trust)(signToken(EHR_ES384, claims(DISCOVERY_AUD, { jti: 'lbgh-jti-7', tenant: 'north-campus' })), SIGN_AUD);
      expect(outcome).toStrictEqual({
        kind: 'refused',
        reason: 'aud-mismatch',
        labels: { iss: EHR_ISS, kid: EHR_ES384.kid, jti: 'lbgh-jti-7', tenant: 'north-campus' },
      });
    });

    it('accepts typ in the forms RFC 7515 §4.1.9 makes equivalent', async () => {
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD), { typ: 'jwt' }))).toBe('verified');
      expect(await reasonFor(signToken(EHR_ES384, claims(SIGN_AUD), { typ: 'application/jwt' }))).toBe('verified');
    });
  });
});

function tamperPayload(token: string): string {
  const [head, , sig] = token.split('.');
  const forged = Buffer.from(JSON.stringify(claims(SIGN_AUD, { iss: EHR_ISS, tenant: 'forged' }))).toString('base64url');
  return `${head}.${forged}.${sig}`;
}

function tamperSignature(token: string): string {
  const [head, body, sig = ''] = token.split('.');
  const bytes = Buffer.from(sig, 'base64url');
  bytes[10] = (bytes[10] ?? 0) ^ 0x01;
  return `${head}.${body}.${bytes.toString('base64url')}`;
}

const BASE64URL = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_';

/** The same segment with the lowest bit of its last character set otherwise: a spare bit when the
 * segment's byte count is not a multiple of 3 (RFC 4648 §3.5). */
function withSpareBitSet(segment: string): string {
  const last = BASE64URL.indexOf(segment.slice(-1));
  return segment.slice(0, -1) + BASE64URL.charAt(last ^ 0b1);
}

function b64(part: unknown): string {
  return Buffer.from(JSON.stringify(part)).toString('base64url');
}

/** An ES/RS signature over exactly `input`, whatever the header says. */
function signRaw(key: TestKey, input: string): string {
  const hash = `sha${key.alg.slice(2)}`;
  const privateKey: KeyObject = key.privateKey;
  const signature = key.alg.startsWith('ES')
    ? sign(hash, Buffer.from(input), { key: privateKey, dsaEncoding: 'ieee-p1363' })
    : key.alg.startsWith('PS')
      ? sign(hash, Buffer.from(input), { key: privateKey, padding: constants.RSA_PKCS1_PSS_PADDING, saltLength: constants.RSA_PSS_SALTLEN_DIGEST })
      : sign(hash, Buffer.from(input), privateKey);
  return signature.toString('base64url');
}

/** A token from header and payload text as given, duplicate names and all, signed correctly by `key`. */
function rawToken(key: TestKey, headerJson: string, payload: string | Record<string, unknown>): string {
  const text = typeof payload === 'string' ? payload : JSON.stringify(payload);
  const input = `${Buffer.from(headerJson).toString('base64url')}.${Buffer.from(text).toString('base64url')}`;
  return `${input}.${signRaw(key, input)}`;
}
