import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { buildTestApp } from './test-app.js';

const ORIGIN = 'https://ehr.larkspur-bay.example';

describe('CORS', () => {
  it.each([
    ['/cds-services', 'GET'],
    ['/cds-services/oxygen-order-sign', 'POST'],
    ['/cds-services/oxygen-order-sign/feedback', 'POST'],
  ])('answers a preflight on %s with 204 and the allowed methods and headers', async (path, method) => {
    const { app } = await buildTestApp();
    const response = await request(app)
      .options(path)
      .set('Origin', ORIGIN)
      .set('Access-Control-Request-Method', method)
      .set('Access-Control-Request-Headers', 'authorization, content-type');
    expect(response.status).toBe(204);
    // CDS Hooks 2.0 §Security › Cross-Origin Resource Sharing: preflight on all three routes with
    // these methods and headers; origin * without credentials in the demo
    expect(response.headers['access-control-allow-methods']).toBe('GET, POST, OPTIONS');
    expect(response.headers['access-control-allow-headers']).toBe('Authorization, Content-Type');
    expect(response.headers['access-control-allow-origin']).toBe('*');
    expect(response.headers['access-control-allow-credentials']).toBeUndefined();
    expect(response.text).toBe('');
  });

  it('lets a browser read error responses too', async () => {
    const { app } = await buildTestApp();
    const response = await request(app).post('/cds-services/no-such-service').set('Origin', ORIGIN).send({});
    expect(response.status).toBe(404);
    expect(response.headers['access-control-allow-origin']).toBe('*');
  });

  describe('edge cases', () => {
    it('with an allowlist, echoes an allowed origin and varies on Origin', async () => {
      const { app } = await buildTestApp({}, { corsOrigins: [ORIGIN] });
      const response = await request(app).get('/cds-services').set('Origin', ORIGIN);
      expect(response.headers['access-control-allow-origin']).toBe(ORIGIN);
      expect(response.headers['vary']).toBe('Origin');
    });

    it('with an allowlist, gives no Allow-Origin to another origin', async () => {
      const { app } = await buildTestApp({}, { corsOrigins: [ORIGIN] });
      const response = await request(app)
        .options('/cds-services')
        .set('Origin', 'https://elsewhere.example')
        .set('Access-Control-Request-Method', 'GET');
      expect(response.headers['access-control-allow-origin']).toBeUndefined();
    });

    it('does not answer a preflight on an unknown path', async () => {
      const { app } = await buildTestApp();
      const response = await request(app).options('/admin').set('Origin', ORIGIN);
      expect(response.status).toBe(404);
    });
  });
});
