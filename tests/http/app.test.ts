import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { discoveryResponse } from '../../src/cds/services.js';
import { createApp } from '../../src/http/app.js';
import { allowEveryRequest } from '../../src/http/auth.js';
import { createPolicyHolder, snapshotOf } from '../../src/live-policy/policy-snapshot.js';
import { createLogger } from '../../src/log/logger.js';
import { expectConformant } from '../helpers/card-conformance.js';
import { openTempStore, testPatientKey } from '../helpers/temp-store.js';
import { createMemoryLog } from '../log/memory-log.js';
import { NOW, orderSignRequest, PATIENT_FAMILY_NAME, PATIENT_ID, TOKEN } from './larkspur-fixtures.js';
import { buildTestApp, loadBundledFiles, TEST_CONFIG } from './test-app.js';

const SERVICE = '/cds-services/oxygen-order-sign';

describe('createApp', () => {
  it('refuses to build when a registered rule has no card template', async () => {
    const files = await loadBundledFiles();
    const templates = new Map(files.templates);
    templates.delete('spo2-below-target');
    expect(() =>
      createApp(TEST_CONFIG, {
        policy: createPolicyHolder(snapshotOf({ ...files, templates }, NOW)),
        logger: createLogger({ level: 'silent', destination: createMemoryLog().stream }),
        clock: () => NOW,
        fetch: globalThis.fetch,
        authenticate: allowEveryRequest,
        store: openTempStore().store,
        patientKey: testPatientKey,
      }),
    ).toThrow('createApp: no card template for rule(s) spo2-below-target');
  });
});

describe('GET /cds-services', () => {
  it('answers 200 with the three services in the shape discovery requires', async () => {
    const { app } = await buildTestApp();
    const response = await request(app).get('/cds-services');
    expect(response.status).toBe(200);
    expect(response.headers['content-type']).toBe('application/json; charset=utf-8');
    // CDS Hooks 2.0 §Discovery › Response: { services: [...] }, each with hook, description and id
    // (required), title (recommended), prefetch and usageRequirements (optional)
    const body = response.body as { services: Record<string, unknown>[] };
    expect(Object.keys(body)).toStrictEqual(['services']);
    expect(body.services.map((s) => [s['id'], s['hook']])).toStrictEqual([
      ['oxygen-order-sign', 'order-sign'],
      ['oxygen-order-select', 'order-select'],
      ['oxygen-titration-review', 'patient-view'],
    ]);
    for (const service of body.services) {
      expect(Object.keys(service).sort()).toStrictEqual(
        ['description', 'hook', 'id', 'prefetch', 'title', 'usageRequirements'],
      );
      // patient-view also asks for DeviceRequests: its active oxygen order may be one (cds-hooks.md §4b).
      const deviceRequests = service['hook'] === 'patient-view' ? ['deviceRequests'] : [];
      expect(Object.keys(service['prefetch'] as object).sort()).toStrictEqual(
        ['conditions', ...deviceRequests, 'encounter', 'medicationRequests', 'observations', 'patient', 'serviceRequests'],
      );
      // CDS Hooks 2.0 §Prefetch Template: an instance read with a context token
      expect((service['prefetch'] as Record<string, string>)['patient']).toBe('Patient/{{context.patientId}}');
    }
    expect(body).toStrictEqual(discoveryResponse());
  });
});

describe('GET /healthz', () => {
  it('answers 200 with a liveness body and nothing else', async () => {
    const { app } = await buildTestApp();
    const response = await request(app).get('/healthz');
    expect(response.status).toBe(200);
    expect(response.body).toStrictEqual({ status: 'ok' });
  });
});

describe('errors', () => {
  it('answers malformed JSON with 400 CDS_ERR_REQUEST_MALFORMED_JSON', async () => {
    const { app } = await buildTestApp();
    const response = await request(app)
      .post(SERVICE)
      .set('Content-Type', 'application/json')
      .send('{"hook": "order-sign", ');
    expect(response.status).toBe(400);
    expect(response.headers['content-type']).toBe('application/json; charset=utf-8');
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_REQUEST_MALFORMED_JSON',
      message: 'The request body could not be read as JSON.',
    });
  });

  it('answers a body over the limit with 413 CDS_ERR_PAYLOAD_TOO_LARGE', async () => {
    const { app } = await buildTestApp({}, { bodyLimitBytes: 2048 });
    const body = orderSignRequest({ extension: { 'org.example.padding': 'x'.repeat(4096) } });
    const response = await request(app).post(SERVICE).send(body);
    // RFC 9110 §15.5.14: 413 Content Too Large
    expect(response.status).toBe(413);
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_PAYLOAD_TOO_LARGE',
      message: 'The request body is larger than this service accepts.',
    });
  });

  it('answers a body that is not JSON with 415 CDS_ERR_UNSUPPORTED_MEDIA_TYPE', async () => {
    const { app } = await buildTestApp();
    const response = await request(app).post(SERVICE).set('Content-Type', 'text/plain').send('hook=order-sign');
    // RFC 9110 §15.5.16: 415 Unsupported Media Type
    expect(response.status).toBe(415);
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_UNSUPPORTED_MEDIA_TYPE',
      message: 'Send the request body as JSON (Content-Type: application/json, UTF-8).',
    });
  });

  it('answers a JSON body in a charset other than UTF-8 with 415', async () => {
    const { app } = await buildTestApp();
    const response = await request(app)
      .post(SERVICE)
      .set('Content-Type', 'application/json; charset=iso-8859-1')
      .send(JSON.stringify(orderSignRequest()));
    expect(response.status).toBe(415);
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_UNSUPPORTED_MEDIA_TYPE',
      message: 'Send the request body as JSON (Content-Type: application/json, UTF-8).',
    });
  });

  it.each([
    ['GET', '/nowhere'],
    ['GET', '/cds-services/oxygen-order-sign'],
    ['DELETE', '/cds-services'],
    ['POST', '/cds-services/oxygen-order-sign/feedback/extra'],
  ])('answers %s %s with 404 CDS_ERR_NOT_FOUND in JSON', async (method, path) => {
    const { app } = await buildTestApp();
    const response = await request(app)[method.toLowerCase() as 'get' | 'delete' | 'post'](path);
    expect(response.status).toBe(404);
    expect(response.headers['content-type']).toBe('application/json; charset=utf-8');
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_NOT_FOUND',
      message: 'There is nothing at this path for this method.',
    });
  });

  it('answers an unexpected failure with a generic 500 carrying only the request id', async () => {
    const { app, log } = await buildTestApp({
      gather: () => Promise.reject(new Error(`failed for ${PATIENT_FAMILY_NAME} ${PATIENT_ID} ${TOKEN}`)),
    });
    const response = await request(app).post(SERVICE).send(orderSignRequest());
    expect(response.status).toBe(500);
    expect(response.headers['content-type']).toBe('application/json; charset=utf-8');
    expect(response.headers['x-request-id']).toBe('req-1');
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_INTERNAL',
      message: 'The service failed unexpectedly; quote the request id when reporting it.',
      requestId: 'req-1',
    });
    for (const secret of [PATIENT_FAMILY_NAME, PATIENT_ID, TOKEN]) {
      expect(response.text).not.toContain(secret);
      expect(log.text()).not.toContain(secret);
    }
    expect(log.lines().map((line) => [line['msg'], line['requestId'], line['level']])).toStrictEqual([
      ['internal error', 'req-1', 50],
      ['request', 'req-1', 50],
    ]);
  });

  describe('edge cases', () => {
    it('answers a path segment that cannot be percent-decoded with 404, not 500', async () => {
      const { app } = await buildTestApp();
      const response = await request(app).post('/cds-services/%E0%A4%A').send(orderSignRequest());
      expect(response.status).toBe(404);
      expect(response.body).toStrictEqual({
        code: 'CDS_ERR_NOT_FOUND',
        message: 'There is nothing at this path for this method.',
      });
    });

    it('answers a top-level JSON string with 400, not 500', async () => {
      const { app } = await buildTestApp();
      const response = await request(app).post(SERVICE).set('Content-Type', 'application/json').send('"order-sign"');
      expect(response.status).toBe(400);
      expect(response.body).toStrictEqual({
        code: 'CDS_ERR_REQUEST_MALFORMED_JSON',
        message: 'The request body could not be read as JSON.',
      });
    });

    it('answers a POST with no body with 400 naming the missing body', async () => {
      const { app } = await buildTestApp();
      const response = await request(app).post(SERVICE);
      expect(response.status).toBe(400);
      expect((response.body as { code: string }).code).toBe('CDS_ERR_REQUEST_INVALID');
      expect((response.body as { issues: { path: string }[] }).issues.map((i) => i.path)).toStrictEqual(['(root)']);
    });

    it('accepts application/fhir+json as JSON', async () => {
      const { app } = await buildTestApp();
      const response = await request(app)
        .post(SERVICE)
        .set('Content-Type', 'application/fhir+json')
        .send(JSON.stringify(orderSignRequest()));
      expect(response.status).toBe(200);
      expectConformant(response.body);
    });

    it('sends no X-Powered-By header', async () => {
      const { app } = await buildTestApp();
      const response = await request(app).get('/healthz');
      expect(response.headers['x-powered-by']).toBeUndefined();
    });
  });
});
