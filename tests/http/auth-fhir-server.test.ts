import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { claims, EHR_ES384, ehrClient, SIGN_AUD, SIGN_PATH } from '../security/support/fixtures.js';
import { signToken } from '../security/support/keys.js';
import { buildProductionApp } from '../security/support/production-app.js';
import { startFhirServer, type FhirTestServer } from './fhir-test-server.js';
import {
  copd,
  encounter,
  fhirAuthorization,
  fullPrefetch,
  orderSignRequest,
  patient,
  searchset,
  spo2,
  TOKEN,
} from './larkspur-fixtures.js';
import { buildTestApp } from './test-app.js';

/**
 * Outbound safety: a hook request names its own fhirServer, so the service calls it (with the
 * request's fhirAuthorization token) only when the authenticated client may use that server. Two
 * loopback FHIR servers record every hit: the one the client lists, and one it does not.
 */
let listed: FhirTestServer;
let unlisted: FhirTestServer;

function answer(url: string) {
  if (url.includes('/Patient/')) return { status: 200, body: patient };
  if (url.includes('/Encounter/')) return { status: 200, body: encounter };
  if (url.includes('/Observation')) return { status: 200, body: searchset([spo2]) };
  if (url.includes('/Condition')) return { status: 200, body: searchset([copd]) };
  return { status: 200, body: searchset([]) };
}

beforeAll(async () => {
  listed = await startFhirServer((received) => answer(received.url));
  unlisted = await startFhirServer((received) => answer(received.url));
});

beforeEach(() => {
  listed.requests.length = 0;
  unlisted.requests.length = 0;
});

afterAll(async () => {
  await listed.close();
  await unlisted.close();
});

const OUTCOME_DETAILS = {
  coding: [{ system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/error-code', code: 'CDS_ERR_PREFETCH_UNAVAILABLE' }],
  text: 'Required FHIR data was neither prefetched nor obtainable from the FHIR server.',
};

function refusedOutcome(why: string) {
  // CDS Hooks 2.0 §Prefetch Template: required data unobtainable -> 412; OperationOutcome per 3.0 ballot
  return {
    resourceType: 'OperationOutcome',
    issue: ['patient', 'observations', 'conditions'].map((key) => ({
      severity: 'error',
      code: 'processing',
      details: OUTCOME_DETAILS,
      diagnostics: `Prefetch key '${key}': was not prefetched, and the fhirServer in the request is not allowed for this client (${why}), so it was not called`,
    })),
  };
}

const auth = (): string => `Bearer ${signToken(EHR_ES384, claims(SIGN_AUD))}`;

/** The listed server over http is allowed only when https is not required (loopback tests). */
async function appListing(servers: readonly string[], requireHttpsFhirServers: boolean) {
  return buildProductionApp({ requireHttps: false, requireHttpsFhirServers, clients: [ehrClient({ fhirServers: servers })] });
}

describe('fhirServer allowlist', () => {
  it('calls a fhirServer on the client list (the control case)', async () => {
    const built = await appListing([listed.baseUrl], false);
    const response = await request(built.app)
      .post(SIGN_PATH)
      .set('Authorization', auth())
      .send(orderSignRequest({ prefetch: undefined, fhirServer: listed.baseUrl, fhirAuthorization }));
    expect(response.status).toBe(200);
    expect(listed.requests.length).toBeGreaterThan(0);
    // CDS Hooks 2.0 §FHIR Resource Access: the request's own access token goes to its fhirServer
    expect(listed.requests.every((r) => r.headers.authorization === `Bearer ${TOKEN}`)).toBe(true);
  });

  it('never calls a fhirServer the client does not list, and says so in the 412', async () => {
    const built = await appListing([listed.baseUrl], false);
    const response = await request(built.app)
      .post(SIGN_PATH)
      .set('Authorization', auth())
      .send(orderSignRequest({ prefetch: undefined, fhirServer: unlisted.baseUrl, fhirAuthorization }));
    expect(response.status).toBe(412);
    expect(response.body).toStrictEqual(refusedOutcome('it is not on the fhirServers list of this client'));
    expect(unlisted.requests).toStrictEqual([]);
    expect(listed.requests).toStrictEqual([]);
    const line = built.log.lines().find((l) => l['msg'] === 'hook call');
    expect([line?.['fhirServerRefused'], line?.['status'], line?.['level']]).toStrictEqual(['not-listed', 412, 40]);
    expect(built.log.text()).not.toContain(TOKEN);
  });

  it('refuses an http fhirServer in production even when its host and path are listed', async () => {
    // CDS Hooks 2.0 §Security and Safety: HTTPS for all exchanges
    const built = await appListing([listed.baseUrl], true);
    const response = await request(built.app)
      .post(SIGN_PATH)
      .set('Authorization', auth())
      .send(orderSignRequest({ prefetch: undefined, fhirServer: listed.baseUrl, fhirAuthorization }));
    expect(response.status).toBe(412);
    expect(response.body).toStrictEqual(refusedOutcome('it does not use https'));
    expect(listed.requests).toStrictEqual([]);
  });

  it('goes on with prefetch alone when the fhirServer is refused but prefetch is complete', async () => {
    const demo = await buildTestApp();
    const expected = await request(demo.app).post(SIGN_PATH).send(orderSignRequest());
    const built = await appListing([listed.baseUrl], false);
    const response = await request(built.app)
      .post(SIGN_PATH)
      .set('Authorization', auth())
      .send(orderSignRequest({ fhirServer: unlisted.baseUrl, fhirAuthorization }));
    expect(response.status).toBe(200);
    expect(response.body).toStrictEqual(expected.body);
    expect(unlisted.requests).toStrictEqual([]);
    expect(built.log.lines().find((l) => l['msg'] === 'hook call')?.['fhirServerRefused']).toBe('not-listed');
  });

  it('does not follow a prefetch next link to a refused fhirServer', async () => {
    const built = await appListing([listed.baseUrl], false);
    const paged = {
      ...fullPrefetch,
      observations: searchset([spo2], [{ relation: 'next', url: `${unlisted.baseUrl}/Observation?page=2` }]),
    };
    const response = await request(built.app)
      .post(SIGN_PATH)
      .set('Authorization', auth())
      .send(orderSignRequest({ prefetch: paged, fhirServer: unlisted.baseUrl, fhirAuthorization }));
    expect(response.status).toBe(200);
    expect(unlisted.requests).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('lets the demo call only loopback FHIR servers', async () => {
      const asked: string[] = [];
      const recordingFetch = ((input: string | URL | Request) => {
        asked.push(input instanceof Request ? input.url : String(input));
        return Promise.reject(new Error('no network in tests'));
      }) as typeof fetch;
      const { app } = await buildTestApp({ fetch: recordingFetch });
      const response = await request(app)
        .post(SIGN_PATH)
        .send(orderSignRequest({ prefetch: undefined, fhirServer: 'https://fhir.larkspur-bay.example/r4', fhirAuthorization }));
      expect(response.status).toBe(412);
      expect(response.body).toStrictEqual(refusedOutcome('demo mode calls loopback FHIR servers only'));
      expect(asked).toStrictEqual([]);
    });

    it('still calls a loopback FHIR server in the demo', async () => {
      const { app } = await buildTestApp();
      const response = await request(app)
        .post(SIGN_PATH)
        .send(orderSignRequest({ prefetch: undefined, fhirServer: listed.baseUrl, fhirAuthorization }));
      expect(response.status).toBe(200);
      expect(listed.requests.length).toBeGreaterThan(0);
    });
  });
});
