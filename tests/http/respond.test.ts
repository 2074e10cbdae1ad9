import express from 'express';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { jsonErrorHandler } from '../../src/http/error-handler.js';
import { AppError } from '../../src/http/errors.js';
import { route, type RouteHandler } from '../../src/http/respond.js';
import { startRequest } from '../../src/http/request-start.js';
import { createPolicyHolder } from '../../src/live-policy/policy-snapshot.js';
import { createLogger } from '../../src/log/logger.js';
import { createMemoryLog } from '../log/memory-log.js';
import { bundledSnapshot } from './test-app.js';

/**
 * route() sends what a handler returns, synchronously or through a promise, and hands whatever goes
 * wrong (a throw, a rejection, a failure while sending) to the one JSON error middleware.
 */
async function appWith(handler: RouteHandler) {
  const log = createMemoryLog();
  const logger = createLogger({ level: 'info', destination: log.stream });
  const app = express();
  app.use(
    startRequest({
      securityHeaders: { strictTransportSecurity: false },
      logger,
      newRequestId: () => 'req-1',
      policy: createPolicyHolder(await bundledSnapshot()),
      corsOrigins: '*',
    }),
  );
  app.get('/probe', route('probe', handler));
  app.use(jsonErrorHandler(logger));
  return { app, log };
}

const answered = { status: 201, body: { answered: true }, headers: { 'X-Probe': 'yes' } };

describe('route', () => {
  it.each([
    ['a plain value', (): typeof answered => answered],
    ['a promise', (): Promise<typeof answered> => Promise.resolve(answered)],
  ])('sends the result a handler returns as %s, with the headers every request gets', async (_kind, handler) => {
    const { app, log } = await appWith(handler);
    const response = await request(app).get('/probe');
    expect(response.status).toBe(201);
    expect(response.body).toStrictEqual({ answered: true });
    expect(response.headers['x-probe']).toBe('yes');
    expect(response.headers['x-request-id']).toBe('req-1');
    expect(response.headers['x-content-type-options']).toBe('nosniff');
    expect(response.headers['access-control-allow-origin']).toBe('*');
    await new Promise((resolve) => setImmediate(resolve));
    expect(log.lines().map((line) => [line['route'], line['status']])).toStrictEqual([['probe', 201]]);
  });

  it.each([
    ['throws', (): never => {
      throw new AppError('CDS_ERR_SERVICE_NOT_FOUND');
    }],
    ['rejects', (): Promise<never> => Promise.reject(new AppError('CDS_ERR_SERVICE_NOT_FOUND'))],
  ])('answers the catalogue error when the handler %s', async (_kind, handler) => {
    const { app } = await appWith(handler);
    const response = await request(app).get('/probe');
    expect(response.status).toBe(404);
    expect(response.body).toMatchObject({ code: 'CDS_ERR_SERVICE_NOT_FOUND' });
  });

  it('answers a generic 500 without the message when sending the result fails', async () => {
    const unsendable = { status: 200, body: { loop: 1n } };
    const { app, log } = await appWith(() => Promise.resolve(unsendable));
    const response = await request(app).get('/probe');
    expect(response.status).toBe(500);
    expect(response.body).toMatchObject({ code: 'CDS_ERR_INTERNAL' });
    expect(JSON.stringify(response.body)).not.toContain('BigInt');
    await new Promise((resolve) => setImmediate(resolve));
    expect(log.lines().some((line) => line['msg'] === 'internal error')).toBe(true);
  });
});
