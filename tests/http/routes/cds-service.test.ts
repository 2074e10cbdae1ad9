import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { PREFETCH_KEYS } from '../../../src/cds/services.js';
import { expectConformant } from '../../helpers/card-conformance.js';
import { startFhirServer, type FhirTestServer } from '../fhir-test-server.js';
import {
  copd,
  context,
  encounter,
  fhirAuthorization,
  fullPrefetch,
  paco2,
  patient,
  PATIENT_ID,
  ph,
  respRate,
  searchset,
  spo2,
  TOKEN,
  orderSignRequest,
} from '../larkspur-fixtures.js';
import { buildTestApp } from '../test-app.js';

const SIGN = '/cds-services/oxygen-order-sign';
const SELECT = '/cds-services/oxygen-order-select';

const outcomeDetails = {
  coding: [{ system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/error-code', code: 'CDS_ERR_PREFETCH_UNAVAILABLE' }],
  text: 'Required FHIR data was neither prefetched nor obtainable from the FHIR server.',
};

/** The lines of one request's summary, read back from the memory log. */
function summaryLines(lines: Record<string, unknown>[]): Record<string, unknown>[] {
  return lines.filter((line) => line['msg'] === 'hook call' || line['msg'] === 'request');
}

let fhir: FhirTestServer;
let conditionsDelayMs: number | undefined;

beforeAll(async () => {
  fhir = await startFhirServer((received, origin) => {
    const url = new URL(received.url, origin);
    const path = url.pathname.replace(/^\/fhir\//, '');
    if (path === `Patient/${PATIENT_ID}`) return { status: 200, body: patient };
    if (path === `Encounter/${context.encounterId}`) return { status: 200, body: encounter };
    if (path === 'Observation' && url.searchParams.get('page') === '2') {
      return { status: 200, body: searchset([respRate, paco2, ph]) };
    }
    if (path === 'Observation') {
      return { status: 200, body: searchset([spo2], [{ relation: 'next', url: `${origin}/fhir/Observation?page=2` }]) };
    }
    if (path === 'Condition') {
      return conditionsDelayMs === undefined
        ? { status: 200, body: searchset([copd]) }
        : { status: 200, body: searchset([copd]), delayMs: conditionsDelayMs };
    }
    if (path === 'MedicationRequest' || path === 'ServiceRequest') return { status: 200, body: searchset([]) };
    return { status: 404, body: { resourceType: 'OperationOutcome', issue: [] } };
  });
});

afterAll(async () => {
  await fhir.close();
});

beforeEach(() => {
  fhir.requests.length = 0;
  conditionsDelayMs = undefined;
});

function expectedPath(key: keyof typeof PREFETCH_KEYS): string {
  return `/fhir/${PREFETCH_KEYS[key].template
    .replace('{{context.patientId}}', PATIENT_ID)
    .replace('{{context.encounterId}}', context.encounterId)}`;
}

describe('POST /cds-services/{id}', () => {
  it('answers a complete order-sign call with conformant cards and no FHIR call', async () => {
    const { app, log } = await buildTestApp();
    const response = await request(app).post(SIGN).send(orderSignRequest());
    expect(response.status).toBe(200);
    expectConformant(response.body);
    const cards = (response.body as { cards: { summary: string }[] }).cards;
    expect(cards.length).toBeGreaterThan(0);
    const [line] = summaryLines(log.lines());
    expect(line).toMatchObject({
      msg: 'hook call',
      route: 'service',
      status: 200,
      serviceId: 'oxygen-order-sign',
      hook: 'order-sign',
      hookInstance: 'd1577c69-dfbe-44ad-ba6d-3e05e953b2ea',
      policyId: 'based-on-bts-2017',
      policyVersion: '1.0.0',
      cardCount: cards.length,
      fhirFallback: { used: false, keysFetched: [], keysFailed: [], keysIncomplete: [] },
      missingKeys: [],
    });
    // BTS 2017 Table 4: COPD puts the patient at risk of hypercapnic respiratory failure, so the
    // 94-98 % target on this order draws the 88-92 % advice.
    expect(line?.['ruleIds']).toContain('target-above-hypercapnic-range');
    // BTS/ICS 2016: pH 7.33 < 7.35 with PaCO2 7.1 kPa > 6.5 kPa is acute hypercapnic acidosis.
    expect(line?.['ruleIds']).toContain('acute-hypercapnic-acidosis');
  });

  it('answers an unknown service id with 404 CDS_ERR_SERVICE_NOT_FOUND', async () => {
    const { app } = await buildTestApp();
    const response = await request(app).post('/cds-services/oxygen-order-review').send(orderSignRequest());
    // CDS Hooks 2.0 §HTTP status codes (sensible addition): 404 for an unknown id
    expect(response.status).toBe(404);
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_SERVICE_NOT_FOUND',
      message: 'No CDS service has that id; GET /cds-services lists them.',
    });
  });

  it('answers a hook the id is not registered for with 400 CDS_ERR_HOOK_NOT_SUPPORTED', async () => {
    const { app } = await buildTestApp();
    const response = await request(app).post(SELECT).send(orderSignRequest());
    expect(response.status).toBe(400);
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_HOOK_NOT_SUPPORTED',
      message: 'This CDS service is not registered for that hook.',
      supportedHooks: ['order-select'],
    });
  });

  it.each(['hookInstance', 'context'])('answers a body without %s with 400 naming the field', async (field) => {
    const { app } = await buildTestApp();
    const body = orderSignRequest();
    delete body[field];
    const response = await request(app).post(SIGN).send(body);
    // CDS Hooks 2.0 §Calling a CDS Service: hook, hookInstance and context are REQUIRED
    expect(response.status).toBe(400);
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_REQUEST_INVALID',
      message: 'The request does not have the shape CDS Hooks 2.0 requires; see issues.',
      issues: [{ path: field, message: expect.any(String) }],
    });
  });

  it('answers a context without patientId with 400 naming context.patientId', async () => {
    const { app } = await buildTestApp();
    const body = orderSignRequest();
    delete (body['context'] as Record<string, unknown>)['patientId'];
    const response = await request(app).post(SIGN).send(body);
    // Hook Library STU1 order-sign: patientId is REQUIRED
    expect(response.status).toBe(400);
    expect((response.body as { issues: { path: string }[] }).issues.map((i) => i.path)).toStrictEqual([
      'context.patientId',
    ]);
  });

  it('answers fhirAuthorization without fhirServer with 400 naming fhirServer', async () => {
    const { app } = await buildTestApp();
    const response = await request(app).post(SIGN).send(orderSignRequest({ fhirAuthorization }));
    // CDS Hooks 2.0 §Calling a CDS Service: fhirServer is REQUIRED when fhirAuthorization is present
    expect(response.status).toBe(400);
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_REQUEST_INVALID',
      message: 'The request does not have the shape CDS Hooks 2.0 requires; see issues.',
      issues: [{ path: 'fhirServer', message: 'is required when fhirAuthorization is present' }],
    });
    expect(response.text).not.toContain(TOKEN);
  });

  it('answers 412 with an OperationOutcome when required prefetch is absent and there is no FHIR server', async () => {
    const { app, log } = await buildTestApp();
    const { observations: _dropped, ...prefetch } = fullPrefetch;
    const response = await request(app).post(SIGN).send(orderSignRequest({ prefetch }));
    // CDS Hooks 2.0 §Prefetch Template: required data unobtainable -> SHALL return 412;
    // CDS Hooks 3.0 ballot: OperationOutcome body, severity error, code processing
    expect(response.status).toBe(412);
    expect(response.headers['content-type']).toBe('application/fhir+json; charset=utf-8');
    expect(response.body).toStrictEqual({
      resourceType: 'OperationOutcome',
      issue: [
        {
          severity: 'error',
          code: 'processing',
          details: outcomeDetails,
          diagnostics:
            "Prefetch key 'observations': was not prefetched, and the request gave no FHIR server access (fhirServer with fhirAuthorization)",
        },
      ],
    });
    expect(summaryLines(log.lines())[0]).toMatchObject({
      status: 412,
      errorCode: 'CDS_ERR_PREFETCH_UNAVAILABLE',
      serviceId: 'oxygen-order-sign',
      hookInstance: 'd1577c69-dfbe-44ad-ba6d-3e05e953b2ea',
      cardCount: 0,
      unavailableKeys: ['observations'],
    });
  });

  it('treats a null prefetch value as no data and still answers 200', async () => {
    const { app, log } = await buildTestApp();
    const response = await request(app)
      .post(SIGN)
      .send(orderSignRequest({ prefetch: { ...fullPrefetch, conditions: null, observations: null } }));
    // CDS Hooks 2.0 §Prefetch Template: null means the client looked and found nothing
    expect(response.status).toBe(200);
    expectConformant(response.body);
    const line = summaryLines(log.lines())[0];
    // No observations at all: the card says no recent SpO2 could be checked, and nothing is "missing".
    expect(line?.['ruleIds']).toContain('no-recent-spo2');
    expect(line?.['ruleIds']).not.toContain('target-above-hypercapnic-range');
    expect(line?.['missingKeys']).toStrictEqual([]);
  });

  it('fetches from the FHIR server, with the bearer token, what prefetch did not supply', async () => {
    const { app, log } = await buildTestApp();
    const response = await request(app)
      .post(SIGN)
      .send(orderSignRequest({ prefetch: undefined, fhirServer: fhir.baseUrl, fhirAuthorization }));
    expect(response.status).toBe(200);
    expectConformant(response.body);
    // CDS Hooks 2.0 §FHIR Resource Access: Authorization: Bearer <access_token> (RFC 6750 §2.1)
    expect(new Set(fhir.requests.map((r) => r.headers.authorization))).toStrictEqual(new Set([`Bearer ${TOKEN}`]));
    expect(fhir.requests.map((r) => r.url).sort()).toStrictEqual(
      [
        expectedPath('patient'),
        expectedPath('observations'),
        '/fhir/Observation?page=2',
        expectedPath('conditions'),
        expectedPath('encounter'),
        expectedPath('medicationRequests'),
        expectedPath('serviceRequests'),
      ].sort(),
    );
    expect(summaryLines(log.lines())[0]?.['fhirFallback']).toStrictEqual({
      used: true,
      keysFetched: ['patient', 'observations', 'conditions', 'encounter', 'medicationRequests', 'serviceRequests'],
      keysFailed: [],
      keysIncomplete: [],
    });
    expect(log.text()).not.toContain(TOKEN);
  });

  it('fetches a key whose prefetch value is an OperationOutcome', async () => {
    const { app } = await buildTestApp();
    const failed = { resourceType: 'OperationOutcome', issue: [{ severity: 'error', code: 'transient' }] };
    const response = await request(app)
      .post(SIGN)
      .send(orderSignRequest({ prefetch: { ...fullPrefetch, conditions: failed }, fhirServer: fhir.baseUrl, fhirAuthorization }));
    expect(response.status).toBe(200);
    expect(fhir.requests.map((r) => r.url)).toStrictEqual([expectedPath('conditions')]);
  });

  describe('edge cases', () => {
    it('answers 412 naming the key when the FHIR server does not answer in time', async () => {
      conditionsDelayMs = 3000;
      const { app } = await buildTestApp({}, { fhir: { callTimeoutMs: 150, budgetMs: 500, maxResponseBytes: 1_048_576, maxPages: 5 } });
      const { conditions: _dropped, ...prefetch } = fullPrefetch;
      const response = await request(app)
        .post(SIGN)
        .send(orderSignRequest({ prefetch, fhirServer: fhir.baseUrl, fhirAuthorization }));
      expect(response.status).toBe(412);
      expect(response.body).toStrictEqual({
        resourceType: 'OperationOutcome',
        issue: [
          {
            severity: 'error',
            code: 'processing',
            details: outcomeDetails,
            diagnostics: "Prefetch key 'conditions': was not prefetched, and the FHIR server did not answer in time",
          },
        ],
      });
    });

    it('goes on without optional keys and names them in the log line', async () => {
      const { app, log } = await buildTestApp();
      const { medicationRequests: _m, serviceRequests: _s, ...prefetch } = fullPrefetch;
      const response = await request(app).post(SIGN).send(orderSignRequest({ prefetch }));
      expect(response.status).toBe(200);
      expect(summaryLines(log.lines())[0]?.['missingKeys']).toStrictEqual(['medicationRequests', 'serviceRequests']);
    });

    it('answers an order-select call on the order-select service', async () => {
      const { app } = await buildTestApp();
      const body = orderSignRequest({ hook: 'order-select' });
      (body['context'] as Record<string, unknown>)['selections'] = ['ServiceRequest/lb-o2-0417'];
      const response = await request(app).post(SELECT).send(body);
      expect(response.status).toBe(200);
      expectConformant(response.body);
    });

    it('answers a selection that points at no draft order with 400 naming it', async () => {
      const { app } = await buildTestApp();
      const body = orderSignRequest({ hook: 'order-select' });
      (body['context'] as Record<string, unknown>)['selections'] = ['ServiceRequest/lb-o2-9999'];
      const response = await request(app).post(SELECT).send(body);
      // Hook Library STU1 order-select: each selection points into draftOrders
      expect(response.status).toBe(400);
      expect((response.body as { issues: { path: string }[] }).issues.map((i) => i.path)).toStrictEqual([
        'context.selections.0',
      ]);
    });
  });
});
