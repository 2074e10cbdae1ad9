import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startFhirServer, type FhirTestServer } from './fhir-test-server.js';
import {
  copd,
  encounter,
  fhirAuthorization,
  patient,
  PATIENT_FAMILY_NAME,
  PATIENT_ID,
  orderSignRequest,
  searchset,
  spo2,
  TOKEN,
} from './larkspur-fixtures.js';
import { buildTestApp } from './test-app.js';

const MRN = 'LB-MRN-880417';

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

describe('request logging', () => {
  it('writes one line per request carrying no token, patient id, name or MRN', async () => {
    const { app, log } = await buildTestApp();
    await request(app)
      .post('/cds-services/oxygen-order-sign')
      .set('Authorization', `Bearer ${TOKEN}`)
      .set('Cookie', `session=${TOKEN}`)
      .send(orderSignRequest({ prefetch: undefined, fhirServer: fhir.baseUrl, fhirAuthorization }));
    await request(app)
      .post(`/cds-services/oxygen-order-sign?patient=${PATIENT_ID}`)
      .set('Authorization', `Bearer ${TOKEN}`)
      .send({ hook: 'order-sign', context: { patientId: PATIENT_ID } });
    await request(app).get(`/Patient/${PATIENT_ID}`);
    const lines = log.lines();
    expect(lines.map((line) => [line['route'], line['status']])).toStrictEqual([
      ['service', 200],
      ['service', 400],
      ['unmatched', 404],
    ]);
    for (const secret of [TOKEN, PATIENT_ID, PATIENT_FAMILY_NAME, MRN, 'Edwin', '1951-09-30']) {
      expect(log.text()).not.toContain(secret);
    }
    expect(fhir.requests.length).toBeGreaterThan(0);
  });
});
