import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { claims, DISCOVERY_AUD, EHR_ES384, ehrClient, NOW_S, SIGN_AUD, SIGN_PATH } from '../security/support/fixtures.js';
import { signToken } from '../security/support/keys.js';
import { buildProductionApp } from '../security/support/production-app.js';
import { startFhirServer, type FhirTestServer } from './fhir-test-server.js';
import { copd, encounter, fhirAuthorization, orderSignRequest, patient, searchset, spo2, TOKEN } from './larkspur-fixtures.js';

/**
 * CDS Hooks best practices (cds-hooks.md §7): never log whole JWTs or FHIR tokens; iss, tenant and
 * jti may be logged. Every line is read back from a memory stream.
 */
let fhir: FhirTestServer;

beforeAll(async () => {
  fhir = await startFhirServer((received) => {
    if (received.url.includes('/Patient/')) return { status: 200, body: patient };
    if (received.url.includes('/Encounter/')) return { status: 200, body: encounter };
    if (received.url.includes('/Observation')) return { status: 200, body: searchset([spo2]) };
    if (received.url.includes('/Condition')) return { status: 200, body: searchset([copd]) };
    return { status: 200, body: searchset([]) };
  });
});

afterAll(async () => {
  await fhir.close();
});

describe('log redaction with authentication on', () => {
  it('never writes a bearer token, its signature or the fhirAuthorization token to the log', async () => {
    const built = await buildProductionApp({ requireHttps: false, clients: [ehrClient({ fhirServers: [fhir.baseUrl] })] });
    const good = signToken(EHR_ES384, claims(SIGN_AUD, { tenant: 'north-campus' }));
    const expired = signToken(EHR_ES384, claims(SIGN_AUD, { iat: NOW_S - 900, exp: NOW_S - 600 }));
    const misdirected = signToken(EHR_ES384, claims(DISCOVERY_AUD));
    const garbage = 'lbgh-not-a-jwt-but-secret-looking';
    const body = orderSignRequest({ prefetch: undefined, fhirServer: fhir.baseUrl, fhirAuthorization });
    const statuses = [
      (await request(built.app).post(SIGN_PATH).set('Authorization', `Bearer ${good}`).send(body)).status,
      (await request(built.app).post(SIGN_PATH).set('Authorization', `Bearer ${good}`).send(body)).status,
      (await request(built.app).post(SIGN_PATH).set('Authorization', `Bearer ${expired}`).send(body)).status,
      (await request(built.app).post(SIGN_PATH).set('Authorization', `Bearer ${misdirected}`).send(body)).status,
      (await request(built.app).post(SIGN_PATH).set('Authorization', `Bearer ${garbage}`).send(body)).status,
      (await request(built.app).post(SIGN_PATH).set('Authorization', `Bearer ${garbage} ${TOKEN}`).send(body)).status,
    ];
    expect(statuses).toStrictEqual([200, 401, 401, 401, 401, 401]);
    expect(fhir.requests.length).toBeGreaterThan(0);
    const text = built.log.text();
    for (const token of [good, expired, misdirected]) {
      const [head = '', payload = '', signature = ''] = token.split('.');
      for (const part of [token, head, payload, signature]) {
        expect(text).not.toContain(part);
      }
    }
    expect(text).not.toContain(garbage);
    expect(text).not.toContain(TOKEN);
    // what is logged instead: the reason codes, one line a request
    expect(built.log.lines().map((line) => line['authRefused'] ?? line['status'])).toStrictEqual([
      200,
      'jti-replayed',
      'expired',
      'aud-mismatch',
      'malformed',
      'malformed',
    ]);
  });
});
