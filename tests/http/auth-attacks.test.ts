import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SPEC_JWKS, SPEC_PAYLOAD, SPEC_TOKEN } from '../fixtures/security/spec-jwt-example.js';
import {
  claims,
  DISCOVERY_AUD,
  EHR_ES384,
  EHR_ISS,
  EHR_RS384,
  ehrClient,
  fakeFetch,
  NOW_S,
  PUBLIC_BASE,
  SIGN_AUD,
  SIGN_PATH,
  THEATRES_ES384,
} from '../security/support/fixtures.js';
import { startJwksServer, type JwksServer } from '../security/support/jwks-server.js';
import { makeKey, signToken, signWith } from '../security/support/keys.js';
import { buildProductionApp, type ProductionApp } from '../security/support/production-app.js';
import { orderSignRequest } from './larkspur-fixtures.js';

/**
 * CDS Hooks 2.0 §Trusting CDS Clients and cds-hooks.md §12 item 2: every forged, stale, replayed or
 * misdirected token gets 401 with no detail, and the protected handler never runs (the gather and
 * feedback spies stay empty and the summary line names no route).
 */
const INVALID = { code: 'CDS_ERR_AUTH_INVALID_TOKEN', message: 'The credentials were not accepted.' };
const MISSING = { code: 'CDS_ERR_AUTH_MISSING', message: 'Authentication is required.' };
// RFC 6750 §3: error="invalid_token" for a bad token; no error code when there are no credentials
const INVALID_CHALLENGE = 'Bearer realm="cds-services", error="invalid_token"';
const MISSING_CHALLENGE = 'Bearer realm="cds-services"';
const FEEDBACK_PATH = `${SIGN_PATH}/feedback`;
const ATTACKER_JKU_PATH = '/attacker-jwks.json';

let attackerJwks: JwksServer;
const attackerKey = makeKey('ES384', EHR_ES384.kid);

beforeAll(async () => {
  attackerJwks = await startJwksServer([attackerKey.publicJwk]);
});

afterAll(async () => {
  await attackerJwks.close();
});

/** Proof the call stopped at authentication: nothing gathered or recorded, no route reached. */
function expectHandlerNotRun(built: ProductionApp): void {
  expect(built.gathered).toStrictEqual([]);
  expect(built.recorded).toStrictEqual([]);
  expect(built.log.lines().map((line) => line['route'])).toStrictEqual(['unmatched']);
}

async function callService(built: ProductionApp, authorization: string | undefined, headers: Record<string, string> = {}) {
  let call = request(built.app).post(SIGN_PATH).set(headers);
  if (authorization !== undefined) call = call.set('Authorization', authorization);
  return call.send(orderSignRequest());
}

const publicPem = EHR_RS384.publicKey.export({ format: 'pem', type: 'spki' }) as string;
const serviceClaims = (overrides: Record<string, unknown> = {}) => claims(SIGN_AUD, overrides);

describe('authentication attacks on a service call', () => {
  it.each<[string, () => string, string]>([
    ['a malformed token', () => 'not.a.jwt', 'malformed'],
    // CDS Hooks 2.0 §JWT signing algorithm: none SHALL NOT be used
    ['alg none', () => signWith('none', { alg: 'none', typ: 'JWT', kid: EHR_ES384.kid }, serviceClaims(), undefined), 'alg-not-allowed'],
    // CDS Hooks 2.0 §JWT signing algorithm: no symmetric algorithm
    ['HS256', () => signWith('HS256', { alg: 'HS256', typ: 'JWT', kid: EHR_ES384.kid }, serviceClaims(), 'larkspur-shared-secret'), 'alg-not-allowed'],
    // the classic confusion: HMAC keyed with the client's published RSA public key
    ['HS256 signed with the public key', () => signWith('HS256', { alg: 'HS256', typ: 'JWT', kid: EHR_RS384.kid }, serviceClaims(), publicPem), 'alg-not-allowed'],
    ['an unknown kid', () => signToken(makeKey('ES384', 'lbgh-not-published'), serviceClaims()), 'kid-unknown'],
    // CDS Hooks 2.0: aud is the URL of the endpoint invoked
    ['the aud of another service', () => signToken(EHR_ES384, claims(`${PUBLIC_BASE}/cds-services/oxygen-order-select`)), 'aud-mismatch'],
    ['the discovery URL as aud on a service call', () => signToken(EHR_ES384, claims(DISCOVERY_AUD)), 'aud-mismatch'],
    ['the aud of another host', () => signToken(EHR_ES384, claims(`https://cds.attacker.example${SIGN_PATH}`)), 'aud-mismatch'],
    // RFC 7519 §4.1.4
    ['an expired token', () => signToken(EHR_ES384, serviceClaims({ iat: NOW_S - 1200, exp: NOW_S - 900 })), 'expired'],
    ['iat in the future', () => signToken(EHR_ES384, serviceClaims({ iat: NOW_S + 600, exp: NOW_S + 900 })), 'iat-in-future'],
    // CDS Hooks best practices: JWT lifetime at most 1 h
    ['a lifetime of two hours', () => signToken(EHR_ES384, serviceClaims({ iat: NOW_S - 5, exp: NOW_S + 7195 })), 'lifetime-too-long'],
    // CDS Hooks 2.0: jti REQUIRED
    ['no jti', () => signToken(EHR_ES384, serviceClaims({ jti: undefined })), 'jti-missing'],
    ['an iss not allowlisted', () => signToken(EHR_ES384, serviceClaims({ iss: 'https://ehr.attacker.example' })), 'iss-untrusted'],
    // CDS Hooks 2.0: typ REQUIRED, JWT
    ['a wrong typ', () => signToken(EHR_ES384, serviceClaims(), { typ: 'JOSE+JSON' }), 'typ-invalid'],
    ['a key of another issuer', () => signToken(THEATRES_ES384, serviceClaims()), 'kid-unknown'],
    ['another issuer’s key under this issuer’s kid', () => signToken(THEATRES_ES384, serviceClaims(), { kid: EHR_ES384.kid }), 'signature-invalid'],
    ['a tampered signature', () => flipSignatureBit(signToken(EHR_ES384, serviceClaims())), 'signature-invalid'],
    ['a payload swapped under a genuine signature', () => swapPayload(signToken(EHR_ES384, serviceClaims()), serviceClaims({ tenant: 'forged' })), 'signature-invalid'],
  ])('refuses %s with 401 and never runs the handler', async (_name, token, reason) => {
    const built = await buildProductionApp();
    const response = await callService(built, `Bearer ${token()}`);
    expect(response.status).toBe(401);
    expect(response.headers['www-authenticate']).toBe(INVALID_CHALLENGE);
    expect(response.body).toStrictEqual(INVALID);
    expectHandlerNotRun(built);
    expect(built.log.lines()[0]?.['authRefused']).toBe(reason);
  });

  it('refuses the specification example token: valid signature, expired in 2015', async () => {
    // CDS Hooks 2.0 §Trusting CDS Clients › Example: exp 1422568860
    const built = await buildProductionApp({
      publicBase: 'https://cds.example.org',
      clients: [{ iss: SPEC_PAYLOAD.iss, jwks: SPEC_JWKS, jkuAllowlist: ['https://fhir-ehr.example.com/jwk_uri'], fhirServers: [] }],
      jwksFetch: fakeFetch({ 'https://fhir-ehr.example.com/jwk_uri': SPEC_JWKS }).fetch,
    });
    const response = await request(built.app)
      .post('/cds-services/some-service')
      .set('Authorization', `Bearer ${SPEC_TOKEN}`)
      .send(orderSignRequest());
    expect([response.status, response.headers['www-authenticate'], response.body]).toStrictEqual([401, INVALID_CHALLENGE, INVALID]);
    expect(built.log.lines()[0]).toMatchObject({ authRefused: 'expired', iss: SPEC_PAYLOAD.iss, kid: 'example-kid', jti: SPEC_PAYLOAD.jti });
    expectHandlerNotRun(built);
  });

  it('refuses a replayed jti the second time', async () => {
    const built = await buildProductionApp();
    const token = signToken(EHR_ES384, serviceClaims());
    expect((await callService(built, `Bearer ${token}`)).status).toBe(200);
    const replay = await callService(built, `Bearer ${token}`);
    expect([replay.status, replay.headers['www-authenticate'], replay.body]).toStrictEqual([401, INVALID_CHALLENGE, INVALID]);
    // the first call gathered once; the replay added nothing
    expect(built.gathered.length).toBe(1);
    expect(built.log.lines().map((line) => [line['route'], line['status'], line['authRefused']])).toStrictEqual([
      ['service', 200, undefined],
      ['unmatched', 401, 'jti-replayed'],
    ]);
  });

  it('never fetches a jku that is not allowlisted, and refuses a key published only there', async () => {
    // CDS Hooks 2.0: services SHOULD allowlist jku; fetching any other is SSRF and key substitution.
    // The token is checked against the client's configured keys by kid instead.
    const built = await buildProductionApp({ requireHttps: false });
    const jku = `${attackerJwks.origin}${ATTACKER_JKU_PATH}`;
    const token = signToken(attackerKey, serviceClaims(), { jku });
    const response = await callService(built, `Bearer ${token}`);
    expect([response.status, response.body]).toStrictEqual([401, INVALID]);
    expect(attackerJwks.hits).toStrictEqual([]);
    expect(['kid-unknown', 'signature-invalid']).toContain(built.log.lines()[0]?.['authRefused']);
    expectHandlerNotRun(built);
  });

  it('accepts the client’s own key with a jku that is not allowlisted, without fetching it', async () => {
    // An EHR may put its own jku in every header; its key in the trust file still verifies the token
    const built = await buildProductionApp({ requireHttps: false });
    const jku = `${attackerJwks.origin}${ATTACKER_JKU_PATH}`;
    const response = await callService(built, `Bearer ${signToken(EHR_ES384, serviceClaims(), { jku })}`);
    expect(response.status).toBe(200);
    expect(attackerJwks.hits).toStrictEqual([]);
  });

  it('refuses a tenant the client is not listed for', async () => {
    const built = await buildProductionApp({ clients: [ehrClient({ tenants: ['north-campus'] })] });
    const response = await callService(built, `Bearer ${signToken(EHR_ES384, serviceClaims({ tenant: 'south-campus' }))}`);
    expect([response.status, response.body]).toStrictEqual([401, INVALID]);
    expect(built.log.lines()[0]).toMatchObject({ authRefused: 'tenant-not-allowed', tenant: 'south-campus' });
    expectHandlerNotRun(built);
  });

  it('is not fooled by Host or X-Forwarded headers naming the host a token was made for', async () => {
    // cds-hooks.md §7: build aud from the configured external base URL, not from Host headers
    const built = await buildProductionApp();
    const token = signToken(EHR_ES384, claims(`https://cds.attacker.example${SIGN_PATH}`));
    const response = await callService(built, `Bearer ${token}`, {
      Host: 'cds.attacker.example',
      'X-Forwarded-Host': 'cds.attacker.example',
      'X-Forwarded-Proto': 'https',
    });
    expect([response.status, response.body]).toStrictEqual([401, INVALID]);
    expect(built.log.lines()[0]?.['authRefused']).toBe('aud-mismatch');
    expectHandlerNotRun(built);
  });

  describe('missing or unusable credentials', () => {
    it.each([
      ['no Authorization header', undefined],
      // RFC 6750 §3.1: another scheme counts as no credentials
      ['a Basic header', 'Basic ZWhyOmxhcmtzcHVy'],
    ])('answers %s with the bare challenge', async (_name, authorization) => {
      const built = await buildProductionApp();
      const response = await callService(built, authorization);
      expect([response.status, response.headers['www-authenticate'], response.body]).toStrictEqual([401, MISSING_CHALLENGE, MISSING]);
      expect(built.log.lines()[0]?.['authRefused']).toBe('no-bearer-token');
      expectHandlerNotRun(built);
    });

    it.each([
      ['an empty Bearer header', 'Bearer '],
      ['a token with spaces', 'Bearer abc def'],
      ['a token with quotes', 'Bearer "eyJ"'],
    ])('answers %s as an invalid token', async (_name, authorization) => {
      const built = await buildProductionApp();
      const response = await callService(built, authorization);
      expect([response.status, response.headers['www-authenticate'], response.body]).toStrictEqual([401, INVALID_CHALLENGE, INVALID]);
      expectHandlerNotRun(built);
    });
  });

  describe('edge cases', () => {
    it('guards discovery and feedback the same way', async () => {
      const built = await buildProductionApp();
      // a service-call token is refused on discovery and on feedback: aud names another endpoint
      const serviceToken = `Bearer ${signToken(EHR_ES384, serviceClaims())}`;
      const discovery = await request(built.app).get('/cds-services').set('Authorization', serviceToken);
      const feedback = await request(built.app)
        .post(FEEDBACK_PATH)
        .set('Authorization', `Bearer ${signToken(EHR_ES384, serviceClaims())}`)
        .send({ feedback: [{ card: '0a7c0cf8-4f5c-5c7e-9d51-6f1e0b3c2a11', outcome: 'accepted', acceptedSuggestions: [], outcomeTimestamp: '2025-03-14T09:01:12Z' }] });
      const bare = await request(built.app).get('/cds-services');
      expect([discovery.status, feedback.status, bare.status]).toStrictEqual([401, 401, 401]);
      expect(built.recorded).toStrictEqual([]);
      expect(built.log.lines().map((l) => [l['route'], l['authRefused']])).toStrictEqual([
        ['unmatched', 'aud-mismatch'],
        ['unmatched', 'aud-mismatch'],
        ['unmatched', 'no-bearer-token'],
      ]);
    });

    it('refuses a token for this service sent to an unknown path beneath it', async () => {
      const built = await buildProductionApp();
      const response = await request(built.app)
        .post(`${SIGN_PATH}/../oxygen-order-select`)
        .set('Authorization', `Bearer ${signToken(EHR_ES384, claims(`${PUBLIC_BASE}/cds-services/oxygen-order-select`))}`)
        .send(orderSignRequest());
      expect(response.status).toBe(401);
      // the raw path is the audience, so a dot segment matches no token
      expect(built.log.lines()[0]?.['authRefused']).toBe('aud-mismatch');
      expectHandlerNotRun(built);
    });

    it('sends nothing of the token or the reason in the body', async () => {
      const built = await buildProductionApp();
      const token = signToken(EHR_ES384, serviceClaims({ iat: NOW_S - 1200, exp: NOW_S - 900 }));
      const response = await callService(built, `Bearer ${token}`);
      expect(response.text).toBe(JSON.stringify(INVALID));
      expect(response.text).not.toContain(EHR_ISS);
    });
  });
});

function flipSignatureBit(token: string): string {
  const [head, body, sig = ''] = token.split('.');
  const bytes = Buffer.from(sig, 'base64url');
  bytes[0] = (bytes[0] ?? 0) ^ 0x80;
  return `${head}.${body}.${bytes.toString('base64url')}`;
}

function swapPayload(token: string, payload: Record<string, unknown>): string {
  const [head, , sig] = token.split('.');
  return `${head}.${Buffer.from(JSON.stringify(payload)).toString('base64url')}.${sig}`;
}
