import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { HSTS_MAX_AGE_SECONDS } from '../../src/http/security-headers.js';
import { orderSignRequest } from './larkspur-fixtures.js';
import { buildTestApp } from './test-app.js';
import { SECURITY_HEADERS } from './support/security-headers.js';

/** Security headers on every response the app writes, success or error alike (support/security-headers.ts). */

type Call = (app: Parameters<typeof request>[0]) => request.Test;

const SERVICE = '/cds-services/oxygen-order-sign';
const CALLS: readonly (readonly [string, number, Call])[] = [
  ['discovery', 200, (app) => request(app).get('/cds-services')],
  ['a hook call', 200, (app) => request(app).post(SERVICE).send(orderSignRequest())],
  ['feedback', 200, (app) =>
    request(app)
      .post(`${SERVICE}/feedback`)
      .send({ feedback: [{ card: 'c-1', outcome: 'overridden', outcomeTimestamp: '2025-03-14T09:00:00Z' }] })],
  ['liveness', 200, (app) => request(app).get('/healthz')],
  ['a preflight', 204, (app) => request(app).options(SERVICE).set('Origin', 'https://ehr.larkspur-bay.example')],
  ['an invalid request', 400, (app) => request(app).post(SERVICE).send({ hook: 'order-sign' })],
  ['malformed JSON', 400, (app) => request(app).post(SERVICE).set('Content-Type', 'application/json').send('{')],
  ['an unknown path', 404, (app) => request(app).get('/nowhere')],
  ['a 412', 412, (app) => request(app).post(SERVICE).send(orderSignRequest({ prefetch: {} }))],
  ['a 415', 415, (app) => request(app).post(SERVICE).set('Content-Type', 'text/plain').send('x')],
];

describe('security headers', () => {
  it.each(CALLS)('are on %s (status %i)', async (_name, status, call) => {
    const { app } = await buildTestApp();
    const response = await call(app);
    expect(response.status).toBe(status);
    for (const [name, value] of Object.entries(SECURITY_HEADERS)) {
      expect(response.headers[name], name).toBe(value);
    }
    expect(response.headers['strict-transport-security']).toBeUndefined();
    // CORS is untouched (cors.ts): CDS Hooks 2.0 §Security › CORS
    expect(response.headers['access-control-allow-origin']).toBe('*');
  });

  describe('edge cases', () => {
    it('adds Strict-Transport-Security only when the service is reached over HTTPS only', async () => {
      const { app } = await buildTestApp({}, { behindTls: true });
      const response = await request(app).get('/cds-services');
      // RFC 6797 §6.1: max-age in seconds; one year is common practice
      expect(response.headers['strict-transport-security']).toBe(`max-age=${HSTS_MAX_AGE_SECONDS}`);
      expect(HSTS_MAX_AGE_SECONDS).toBe(365 * 24 * 60 * 60);
    });

    it('does not announce the framework', async () => {
      const { app } = await buildTestApp();
      const response = await request(app).get('/cds-services');
      expect(response.headers['x-powered-by']).toBeUndefined();
    });
  });
});
