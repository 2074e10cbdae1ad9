import { connect } from 'node:net';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseEnvConfig } from '../../src/config/env-config.js';
import { serverTimeoutOptions } from '../../src/http/connection-timeouts.js';
import { createLogger } from '../../src/log/logger.js';
import { startServer, type StartedServer } from '../../src/server.js';
import { makeTempDataDir } from '../helpers/temp-store.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
let started: StartedServer;

beforeAll(async () => {
  const result = await startServer(
    {
      PORT: '0',
      OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(),
      // One second each, so the test runs in a few; the defaults are in env-config.ts.
      OXYGEN_CHECKER_REQUEST_TIMEOUT_MS: '1000',
      OXYGEN_CHECKER_HEADERS_TIMEOUT_MS: '1000',
      OXYGEN_CHECKER_SOCKET_IDLE_TIMEOUT_MS: '1000',
    },
    ROOT,
    createLogger({ level: 'silent' }),
  );
  if (result.kind !== 'started') throw new Error(result.problems);
  started = result.started;
});

afterAll(async () => {
  await started.close();
});

/**
 * Opens a socket, writes `head`, then one byte of `trickle` every 100 ms until the server answers or
 * closes; resolves with what came back. Never asserts on how fast: only that it ends at all.
 */
function trickle(head: string, body: string): Promise<string> {
  const { hostname, port } = new URL(started.url);
  return new Promise((resolve, reject) => {
    const socket = connect(Number(port), hostname);
    let received = '';
    let sent = 0;
    const timer = setInterval(() => {
      if (sent < body.length && socket.writable) socket.write(body.charAt(sent++));
    }, 100);
    const finish = (): void => {
      clearInterval(timer);
      resolve(received);
    };
    socket.on('data', (chunk: Buffer) => {
      received += chunk.toString('latin1');
    });
    socket.on('close', finish);
    socket.on('error', (error: NodeJS.ErrnoException) => {
      if (error.code === 'ECONNRESET' || error.code === 'EPIPE') finish();
      else reject(error);
    });
    socket.write(head);
  });
}

describe('a client that trickles its request', () => {
  it('gets a 408 in JSON once the request timeout passes (body trickled)', async () => {
    const body = JSON.stringify({ hook: 'order-sign', padding: 'x'.repeat(400) });
    const received = await trickle(
      `POST /cds-services/oxygen-order-check HTTP/1.1\r\nHost: localhost\r\nContent-Type: application/json\r\nContent-Length: ${body.length}\r\n\r\n`,
      body,
    );
    // The whole body would take 40 s at this pace; the server cut it short, with an answer, because
    // express had not yet begun a response (RFC 9110 §15.5.9: 408 Request Timeout).
    expect(received).toMatch(/^HTTP\/1\.1 408 /);
    expect(received).toContain('"code":"CDS_ERR_REQUEST_TIMEOUT"');
    expect(received.toLowerCase()).toContain('x-content-type-options: nosniff');
  }, 8000);

  it('gets a 408 in JSON once the headers timeout passes (headers trickled)', async () => {
    const received = await trickle('GET /healthz HTTP/1.1\r\n', `Host: localhost\r\nX-Slow: ${'y'.repeat(400)}\r\n\r\n`);
    expect(received).toMatch(/^HTTP\/1\.1 408 /);
    expect(received).toContain('"code":"CDS_ERR_REQUEST_TIMEOUT"');
  }, 8000);
});

describe('timeout settings', () => {
  it('are refused when the headers timeout is above the request timeout', () => {
    const parsed = parseEnvConfig({ OXYGEN_CHECKER_REQUEST_TIMEOUT_MS: '2000', OXYGEN_CHECKER_HEADERS_TIMEOUT_MS: '3000' }, ROOT);
    expect(parsed).toMatchObject({
      kind: 'invalid',
      problems: [{ variable: 'OXYGEN_CHECKER_HEADERS_TIMEOUT_MS', message: 'must not be above OXYGEN_CHECKER_REQUEST_TIMEOUT_MS' }],
    });
  });

  it('default to finite values well under Node’s 300 s request timeout', () => {
    const parsed = parseEnvConfig({}, ROOT);
    if (parsed.kind !== 'ok') throw new Error('default configuration refused');
    const { requestTimeoutMs, headersTimeoutMs, keepAliveTimeoutMs, socketIdleTimeoutMs } = parsed.config.timeouts;
    // Node 20 docs, server.requestTimeout: default 300000
    expect(requestTimeoutMs).toBeLessThan(300_000);
    expect(headersTimeoutMs).toBeLessThanOrEqual(requestTimeoutMs);
    expect(keepAliveTimeoutMs).toBeGreaterThan(0);
    // Above the FHIR budget, so a slow fallback is never taken for an idle client.
    expect(socketIdleTimeoutMs).toBeGreaterThan(parsed.config.fhir.budgetMs);
  });

  it.each([
    [1000, 1000, 250],
    [10_000, 5_000, 1000],
    [100, 100, 50],
  ])('sweep for deadlines %i/%i ms every %i ms, so a deadline is not overshot by Node’s 30 s default', (request, headers, interval) => {
    const options = serverTimeoutOptions({
      requestTimeoutMs: request,
      headersTimeoutMs: headers,
      keepAliveTimeoutMs: 5000,
      socketIdleTimeoutMs: 30_000,
    });
    expect(options).toStrictEqual({ requestTimeout: request, headersTimeout: headers, keepAliveTimeout: 5000, connectionsCheckingInterval: interval });
  });
});
