import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { SPEC_JWKS, SPEC_PAYLOAD, SPEC_TOKEN } from '../fixtures/security/spec-jwt-example.js';
import { DEFAULT_KID_REFRESHES_PER_INTERVAL } from '../../src/security/jwks-store.js';
import {
  claims,
  DISCOVERY_AUD,
  EHR_ES384,
  EHR_ISS,
  EHR_RS384,
  ehrClient,
  fakeFetch,
  NOW,
  PUBLIC_BASE,
  SIGN_AUD,
  SIGN_PATH,
} from '../security/support/fixtures.js';
import { startJwksServer, type JwksServer } from '../security/support/jwks-server.js';
import { makeKey, signToken } from '../security/support/keys.js';
import { buildProductionApp } from '../security/support/production-app.js';
import { orderSignRequest } from './larkspur-fixtures.js';
import { buildTestApp } from './test-app.js';

/**
 * What a trusted CDS client gets: CDS Hooks 2.0 §Trusting CDS Clients with ES384 or RS384, aud as a
 * string or an array, keys from a JWKS URL (cached, refreshed on rotation), and the same cards the
 * demo gives for the same request.
 */
let jwks: JwksServer;
const ROTATED = makeKey('ES384', 'lbgh-ehr-es384-2026');

beforeAll(async () => {
  jwks = await startJwksServer();
});

beforeEach(() => {
  jwks.hits.length = 0;
  jwks.setKeys([EHR_ES384.publicJwk]);
});

afterAll(async () => {
  await jwks.close();
});

const bearer = (token: string): string => `Bearer ${token}`;

// Invented card and suggestion ids, as our cards would carry them.
const ACCEPTED = {
  card: '0a7c0cf8-4f5c-5c7e-9d51-6f1e0b3c2a11',
  outcome: 'accepted',
  acceptedSuggestions: [{ id: '5e2d9b61-8a3f-5b27-a0c4-91d2e6f7a8b3' }],
  outcomeTimestamp: '2025-03-14T09:01:12Z',
};

describe('trusted CDS clients', () => {
  it.each([
    // CDS Hooks 2.0 §JWT signing algorithm: ES384 and RS384 RECOMMENDED
    ['ES384', EHR_ES384],
    ['RS384', EHR_RS384],
  ])('get the same cards as the demo for the same request (%s)', async (_alg, key) => {
    const demo = await buildTestApp();
    const expected = await request(demo.app).post(SIGN_PATH).send(orderSignRequest());
    const built = await buildProductionApp();
    const response = await request(built.app)
      .post(SIGN_PATH)
      .set('Authorization', bearer(signToken(key, claims(SIGN_AUD))))
      .send(orderSignRequest());
    expect(response.status).toBe(200);
    expect(expected.body.cards.length).toBeGreaterThan(0);
    expect(response.body).toStrictEqual(expected.body);
  });

  it.each([
    // RFC 7519 §4.1.3; CDS Hooks 2.0: either form may be used
    ['a string', SIGN_AUD],
    ['a one-element array', [SIGN_AUD]],
    ['an array naming another audience too', [DISCOVERY_AUD, SIGN_AUD]],
  ])('accept aud as %s', async (_name, aud) => {
    const built = await buildProductionApp();
    const response = await request(built.app).post(SIGN_PATH).set('Authorization', bearer(signToken(EHR_ES384, claims(aud)))).send(orderSignRequest());
    expect(response.status).toBe(200);
  });

  it('reach discovery and feedback with the audience of each endpoint', async () => {
    // CDS Hooks 2.0 §Trusting CDS Clients › aud examples; cds-hooks.md §7 for the feedback URL
    const built = await buildProductionApp();
    const discovery = await request(built.app).get('/cds-services').set('Authorization', bearer(signToken(EHR_ES384, claims(DISCOVERY_AUD))));
    const feedback = await request(built.app)
      .post(`${SIGN_PATH}/feedback`)
      .set('Authorization', bearer(signToken(EHR_ES384, claims(`${SIGN_AUD}/feedback`))))
      .send({ feedback: [ACCEPTED] });
    expect([discovery.status, feedback.status]).toStrictEqual([200, 200]);
    expect(discovery.body.services.map((s: { id: string }) => s.id)).toStrictEqual(['oxygen-order-sign', 'oxygen-order-select', 'oxygen-titration-review']);
    expect(built.recorded.map((entry) => entry.outcome)).toStrictEqual(['accepted']);
  });

  it('pass the specification example token when the clock is set before its exp', async () => {
    // CDS Hooks 2.0 §Trusting CDS Clients › Example. Its aud names some-service, which this service
    // does not have: a 404 (not a 401) shows the token itself was accepted.
    const built = await buildProductionApp({
      publicBase: 'https://cds.example.org',
      clients: [{ iss: SPEC_PAYLOAD.iss, jwks: SPEC_JWKS, jkuAllowlist: ['https://fhir-ehr.example.com/jwk_uri'], fhirServers: [] }],
      jwksFetch: fakeFetch({ 'https://fhir-ehr.example.com/jwk_uri': SPEC_JWKS }).fetch,
      clock: () => new Date((SPEC_PAYLOAD.exp - 30) * 1000),
      // the example token lives 3.5 years; lift the 1 h limit for this one check
      limits: { clockSkewS: 60, maxLifetimeS: SPEC_PAYLOAD.exp - SPEC_PAYLOAD.iat },
    });
    const response = await request(built.app).post('/cds-services/some-service').set('Authorization', bearer(SPEC_TOKEN)).send(orderSignRequest());
    expect([response.status, response.body.code]).toStrictEqual([404, 'CDS_ERR_SERVICE_NOT_FOUND']);
  });

  it('are not refused because of the Host header a proxy passes on', async () => {
    const built = await buildProductionApp();
    const response = await request(built.app)
      .post(SIGN_PATH)
      .set('Host', '10.20.0.4:8080')
      .set('Authorization', bearer(signToken(EHR_ES384, claims(SIGN_AUD))))
      .send(orderSignRequest());
    expect(response.status).toBe(200);
  });

  describe('keys from a JWKS URL', () => {
    const remoteClient = () => ehrClient({ jwks: undefined, jwksUrl: jwks.url, jkuAllowlist: [] });

    it('fetch the set once for many calls', async () => {
      const built = await buildProductionApp({ requireHttps: false, clients: [remoteClient()] });
      for (let i = 0; i < 4; i += 1) {
        const response = await request(built.app).get('/cds-services').set('Authorization', bearer(signToken(EHR_ES384, claims(DISCOVERY_AUD))));
        expect(response.status).toBe(200);
      }
      expect(jwks.hits).toStrictEqual(['/jwks.json']);
    });

    it('refresh on an unknown kid, so a rotated key works at once, with a bounded number of refreshes per issuer', async () => {
      let now = NOW.getTime();
      const clock = () => new Date(now);
      const built = await buildProductionApp({ requireHttps: false, clients: [remoteClient()], clock });
      const call = (key: typeof EHR_ES384) =>
        request(built.app)
          .get('/cds-services')
          .set('Authorization', bearer(signToken(key, claims(DISCOVERY_AUD, { iat: now / 1000 - 5, exp: now / 1000 + 295 }))));
      expect((await call(EHR_ES384)).status).toBe(200);
      // key rotation: the client publishes the new key beside the old one and starts using it
      jwks.setKeys([EHR_ES384.publicJwk, ROTATED.publicJwk]);
      expect((await call(ROTATED)).status).toBe(200);
      expect((await call(EHR_ES384)).status).toBe(200);
      expect(jwks.hits.length).toBe(2);
      // made-up kids: each unseen kid may trigger a refresh, at most DEFAULT_KID_REFRESHES_PER_INTERVAL
      // per issuer per minute (OXYGEN_CHECKER_JWKS_REFRESH_MIN_INTERVAL_S), the rotation's included,
      // so a junk kid sent just before a rotation cannot hold the new key off (src/security/jwks-store.ts)
      for (let n = 1; n < DEFAULT_KID_REFRESHES_PER_INTERVAL; n += 1) {
        expect((await call(makeKey('ES384', `lbgh-made-up-${String(n)}`))).status).toBe(401);
      }
      expect(jwks.hits.length).toBe(1 + DEFAULT_KID_REFRESHES_PER_INTERVAL);
      // the allowance is spent, and a kid a fetch found absent is not looked for again
      expect((await call(makeKey('ES384', 'lbgh-made-up-spent'))).status).toBe(401);
      expect((await call(makeKey('ES384', 'lbgh-made-up-1'))).status).toBe(401);
      expect(jwks.hits.length).toBe(1 + DEFAULT_KID_REFRESHES_PER_INTERVAL);
      now += 60_000;
      expect((await call(makeKey('ES384', 'lbgh-made-up-next-minute'))).status).toBe(401);
      expect(jwks.hits.length).toBe(2 + DEFAULT_KID_REFRESHES_PER_INTERVAL);
      // the old key retired: after the TTL the set is fetched again and the old kid is gone
      jwks.setKeys([ROTATED.publicJwk]);
      now += 300_000;
      expect((await call(ROTATED)).status).toBe(200);
      const afterTtl = jwks.hits.length;
      expect(afterTtl).toBe(3 + DEFAULT_KID_REFRESHES_PER_INTERVAL);
      expect((await call(EHR_ES384)).status).toBe(401);
      expect((await call(EHR_ES384)).status).toBe(401);
      // at most one refresh for the retired kid, then it is remembered as absent
      expect(jwks.hits.length).toBeLessThanOrEqual(afterTtl + 1);
    });

    it('honour an allowlisted jku for a client with a static set', async () => {
      const built = await buildProductionApp({ requireHttps: false, clients: [ehrClient({ jkuAllowlist: [jwks.url] })] });
      jwks.setKeys([ROTATED.publicJwk]);
      const response = await request(built.app)
        .get('/cds-services')
        .set('Authorization', bearer(signToken(ROTATED, claims(DISCOVERY_AUD), { jku: jwks.url })));
      expect(response.status).toBe(200);
      expect(jwks.hits).toStrictEqual(['/jwks.json']);
    });
  });

  describe('edge cases', () => {
    it('log the caller on refusals only by iss, kid, jti and reason', async () => {
      const built = await buildProductionApp();
      await request(built.app).get('/cds-services').set('Authorization', bearer(signToken(EHR_ES384, claims(SIGN_AUD, { jti: 'lbgh-jti-0042' }))));
      const line = built.log.lines()[0] ?? {};
      expect(Object.keys(line).filter((key) => ['authRefused', 'iss', 'kid', 'jti', 'tenant'].includes(key)).sort()).toStrictEqual([
        'authRefused',
        'iss',
        'jti',
        'kid',
      ]);
      expect([line['authRefused'], line['iss'], line['kid'], line['jti'], line['level']]).toStrictEqual([
        'aud-mismatch',
        EHR_ISS,
        EHR_ES384.kid,
        'lbgh-jti-0042',
        40, // pino warn: a refused call is worth the operator's attention
      ]);
    });

    it('accept a public base with a path prefix', async () => {
      const built = await buildProductionApp({ publicBase: `${PUBLIC_BASE}/oxygen` });
      const ok = await request(built.app).get('/cds-services').set('Authorization', bearer(signToken(EHR_ES384, claims(`${PUBLIC_BASE}/oxygen/cds-services`))));
      const without = await request(built.app).get('/cds-services').set('Authorization', bearer(signToken(EHR_ES384, claims(DISCOVERY_AUD))));
      expect([ok.status, without.status]).toStrictEqual([200, 401]);
    });
  });
});
