import type { Request } from 'express';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { allowEveryRequest, type AuthResult } from '../../src/http/auth.js';
import type { Gather } from '../../src/http/gather-data.js';
import { orderSignRequest } from './larkspur-fixtures.js';
import { buildTestApp } from './test-app.js';

/** An authenticator that refuses every request for `reason`, counting how often it was asked. */
function refusing(reason: 'missing' | 'invalid-token') {
  const seen: string[] = [];
  return {
    seen,
    authenticate: (req: Request): Promise<AuthResult> => {
      seen.push(`${req.method} ${req.originalUrl}`);
      return Promise.resolve({ kind: 'denied', reason, cause: new Error('signature check failed') });
    },
  };
}

/** A gather step that records whether the handler got that far. */
function watchedGather() {
  const calls: unknown[] = [];
  const gather: Gather = (req) => {
    calls.push(req);
    return Promise.reject(new Error('must not be reached'));
  };
  return { calls, gather };
}

describe('authentication seam', () => {
  it('refuses a request without credentials with 401 and a bare Bearer challenge', async () => {
    const auth = refusing('missing');
    const watched = watchedGather();
    const { app } = await buildTestApp({ authenticate: auth.authenticate, gather: watched.gather });
    const response = await request(app).post('/cds-services/oxygen-order-sign').send(orderSignRequest());
    // RFC 6750 §3: no error code when the request carries no authentication
    expect(response.status).toBe(401);
    expect(response.headers['www-authenticate']).toBe('Bearer realm="cds-services"');
    expect(response.body).toStrictEqual({ code: 'CDS_ERR_AUTH_MISSING', message: 'Authentication is required.' });
    expect(watched.calls).toStrictEqual([]);
  });

  it('refuses a bad token with 401 invalid_token and no detail', async () => {
    const auth = refusing('invalid-token');
    const { app } = await buildTestApp({ authenticate: auth.authenticate });
    const response = await request(app).get('/cds-services').set('Authorization', 'Bearer not-a-jwt');
    // RFC 6750 §3.1 invalid_token; CDS Hooks best practices: 401 with no detail
    expect(response.status).toBe(401);
    expect(response.headers['www-authenticate']).toBe('Bearer realm="cds-services", error="invalid_token"');
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_AUTH_INVALID_TOKEN',
      message: 'The credentials were not accepted.',
    });
    expect(response.text).not.toContain('signature');
  });

  it('guards discovery, service calls and feedback', async () => {
    const auth = refusing('missing');
    const { app } = await buildTestApp({ authenticate: auth.authenticate });
    await request(app).get('/cds-services');
    await request(app).post('/cds-services/oxygen-order-sign').send(orderSignRequest());
    await request(app).post('/cds-services/oxygen-order-sign/feedback').send({ feedback: [] });
    expect(auth.seen).toStrictEqual([
      'GET /cds-services',
      'POST /cds-services/oxygen-order-sign',
      'POST /cds-services/oxygen-order-sign/feedback',
    ]);
  });

  describe('edge cases', () => {
    it('answers preflights and liveness without asking the authenticator', async () => {
      const auth = refusing('missing');
      const { app } = await buildTestApp({ authenticate: auth.authenticate });
      const preflight = await request(app)
        .options('/cds-services/oxygen-order-sign')
        .set('Origin', 'https://ehr.larkspur-bay.example')
        .set('Access-Control-Request-Method', 'POST');
      const health = await request(app).get('/healthz');
      expect([preflight.status, health.status]).toStrictEqual([204, 200]);
      expect(auth.seen).toStrictEqual([]);
    });

    it('lets every request through in demo mode', async () => {
      expect(await allowEveryRequest({} as Request)).toStrictEqual({
        kind: 'allowed',
        client: 'demo',
        iss: 'urn:oxygen-order-checker:demo-client',
        fhirServers: { kind: 'loopback-only' },
      });
    });
  });
});
