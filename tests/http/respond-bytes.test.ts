import { connect, type AddressInfo } from 'node:net';
import express, { type Express } from 'express';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { HttpResult } from '../../src/http/errors.js';
import { sendResult } from '../../src/http/respond.js';
import { securityHeaderSetter } from '../../src/http/security-headers.js';

/**
 * The one writer (src/http/respond.ts) writes a POST's JSON answer itself rather than through
 * express's `res.json`. Clients must not see the difference: for every kind of answer the service
 * gives (statuses from the error catalogue, extra headers such as Retry-After, non-ASCII text, empty
 * and nested bodies) and every method, the bytes on the wire equal those of `res.status().json()` in
 * the same app with the same headers set first (RFC 9110 §8.6 Content-Length; RFC 8259 JSON text).
 */

const RESULTS: Readonly<Record<string, HttpResult>> = {
  ok: { status: 200, body: { cards: [{ summary: 'SpO2 target 88–92 % (BTS 2017)', indicator: 'warning' }] } },
  empty: { status: 200, body: {} },
  list: { status: 200, body: [1, 'two', null, { three: [3] }] },
  invalid: { status: 400, body: { error: 'CDS_ERR_REQUEST_INVALID', issues: [{ path: 'context', message: 'Required' }] } },
  busy: { status: 503, body: { error: 'CDS_ERR_OVERLOADED' }, headers: { 'Retry-After': '1' } },
  large: { status: 413, body: { text: 'é'.repeat(3000) } },
  nothing: { status: 204, body: null },
};

function appWith(write: (res: express.Response, result: HttpResult) => void): Express {
  const app = express();
  app.disable('x-powered-by');
  app.set('etag', false);
  const setHeaders = securityHeaderSetter({ strictTransportSecurity: true });
  app.all('/:name', (req, res) => {
    setHeaders(res);
    res.setHeader('X-Request-Id', 'req-1');
    write(res, RESULTS[String(req.params['name'])] as HttpResult);
  });
  return app;
}

const viaExpress = appWith((res, result) => {
  for (const [name, value] of Object.entries(result.headers ?? {})) {
    res.setHeader(name, value);
  }
  res.status(result.status).json(result.body);
});
const viaWriter = appWith(sendResult);

/** The raw answer, Date line dropped (the only part that depends on when it was sent). */
function rawAnswer(port: number, text: string): Promise<string> {
  return new Promise((resolve, reject) => {
    const socket = connect(port, '127.0.0.1');
    const chunks: Buffer[] = [];
    socket.on('data', (chunk: Buffer) => chunks.push(chunk));
    socket.on('end', () => resolve(Buffer.concat(chunks).toString('latin1').replace(/\r\nDate: [^\r]*/, '')));
    socket.on('error', reject);
    socket.end(text);
  });
}

const servers: { close: () => void; port: number }[] = [];
beforeAll(async () => {
  for (const app of [viaExpress, viaWriter]) {
    const server = app.listen(0, '127.0.0.1');
    await new Promise((resolve) => server.once('listening', resolve));
    servers.push({ close: () => server.close(), port: (server.address() as AddressInfo).port });
  }
});
afterAll(() => {
  for (const server of servers) {
    server.close();
  }
});

describe('sendResult', () => {
  const requests = Object.keys(RESULTS).flatMap((name) => [
    [`POST ${name}`, `POST /${name} HTTP/1.1\r\nHost: x\r\nConnection: close\r\nContent-Length: 2\r\n\r\n{}`],
    [`GET ${name}`, `GET /${name} HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n`],
    [`HEAD ${name}`, `HEAD /${name} HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n`],
    [`GET ${name}, If-None-Match: *`, `GET /${name} HTTP/1.1\r\nHost: x\r\nIf-None-Match: *\r\nConnection: close\r\n\r\n`],
  ]);

  it.each(requests)('%s: the same bytes as express res.json', async (_label, text) => {
    const [expressPort, writerPort] = servers.map((server) => server.port) as [number, number];
    const expected = await rawAnswer(expressPort, text);
    expect(expected).toMatch(/^HTTP\/1\.1 \d{3} /);
    expect(await rawAnswer(writerPort, text)).toBe(expected);
  });
});
