import { connect, type Socket } from 'node:net';
import express, { type Response } from 'express';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { allowEveryRequest, requireAuthentication } from '../../src/http/auth.js';
import { jsonErrorHandler } from '../../src/http/error-handler.js';
import { createEvaluationGate, RETRY_AFTER_SECONDS, type GateLimits } from '../../src/http/overload.js';
import { requestContext } from '../../src/http/request-context.js';
import { createLogger } from '../../src/log/logger.js';
import { listenApp, type AppServer } from './support/app-server.js';
import { call } from './support/many-callers.js';

/**
 * The gate's decisions, one at a time, on a bare app: the gate with the request context, demo
 * authentication and the JSON error writer, in front of a handler the test holds open or makes answer
 * with more bytes than a socket that does not read can take. The loop delay is the test's own value,
 * so every decision is deterministic; tests/http/load-shedding.test.ts drives the real gauge.
 */

const CLIENT_A = '127.0.0.2'; // demo mode: a client is its address (src/http/client-key.ts)
const CLIENT_B = '127.0.0.1';

/** Far more than a loopback socket buffers for a client that does not read (common practice: a few MiB). */
const UNREADABLE_BYTES = 32 * 1024 * 1024;
const UNREADABLE = Buffer.alloc(UNREADABLE_BYTES, 0x20);

interface GateApp {
  readonly url: string;
  setDelayMs(ms: number): void;
  /** Lets every held call answer. */
  release(): void;
  /** Calls that reached the handler. */
  readonly entered: () => number;
  /** Responses whose handler ended them with the unreadable answer. */
  readonly unread: Response[];
  readonly inFlight: () => number;
  /** The reasons the gate reported for its refusals, in order (what the metrics count). */
  readonly refusals: readonly string[];
}

let server: AppServer | undefined;
const sockets: Socket[] = [];

afterEach(async () => {
  for (const socket of sockets.splice(0)) socket.destroy();
  await server?.close();
  server = undefined;
});

async function gateApp(limits: GateLimits): Promise<GateApp> {
  let delayMs = 0;
  let entered = 0;
  const unread: Response[] = [];
  let releaseHeld: () => void = () => undefined;
  let held = new Promise<void>((resolve) => {
    releaseHeld = resolve;
  });
  const refusals: string[] = [];
  const gate = createEvaluationGate(limits, { loopDelayMs: () => delayMs, onRefused: (reason) => refusals.push(reason) });
  const app = express();
  const logger = createLogger({ level: 'silent' });
  let ids = 0;
  const beginContext = requestContext(logger, () => `req-${++ids}`);
  app.use((req, res, next) => {
    beginContext(req, res);
    next();
  });
  app.post('/call', gate.shed);
  app.use(requireAuthentication(allowEveryRequest));
  app.post('/call', gate.admit, async (req, res) => {
    entered += 1;
    if (req.query['answer'] === 'unreadable') {
      res.status(200).type('text/plain').end(UNREADABLE);
      unread.push(res);
      return;
    }
    if (req.query['answer'] === 'held') {
      await held;
    }
    res.status(200).json({ ok: true });
  });
  app.use(jsonErrorHandler(logger));
  server = await listenApp(app);
  return {
    url: server.url,
    setDelayMs: (ms) => {
      delayMs = ms;
    },
    release: () => {
      releaseHeld();
      held = Promise.resolve();
    },
    entered: () => entered,
    unread,
    inFlight: gate.inFlight,
    refusals,
  };
}

/** A call whose caller sends it and never reads a byte of the answer. */
function callWithoutReading(url: string, localAddress: string): void {
  const { hostname, port } = new URL(url);
  const socket = connect({ host: hostname, port: Number(port), localAddress });
  socket.pause();
  sockets.push(socket);
  socket.write(`POST /call?answer=unreadable HTTP/1.1\r\nHost: ${hostname}\r\nContent-Length: 0\r\n\r\n`);
}

const OVERLOADED = {
  code: 'CDS_ERR_OVERLOADED',
  message: 'The service is checking as many orders as it can at once; retry after the Retry-After delay.',
};
const CLIENT_BUSY = {
  code: 'CDS_ERR_CLIENT_BUSY',
  message:
    'This client has as many hook calls being checked at once as the service takes from one client; retry after the Retry-After delay.',
};

describe('the evaluation gate', () => {
  it('refuses with 503 and Retry-After while work waits longer than the limit and a call is in flight', async () => {
    const gate = await gateApp({ maxConcurrent: 100, maxConcurrentPerClient: 100, maxLoopDelayMs: 100 });
    const inside = call(`${gate.url}/call?answer=held`, {});
    await vi.waitFor(() => expect(gate.entered()).toBe(1));

    gate.setDelayMs(101); // just past the limit
    const refused = await call(`${gate.url}/call`, {});
    expect([refused.status, refused.retryAfter, refused.body]).toStrictEqual([503, String(RETRY_AFTER_SECONDS), OVERLOADED]);
    expect(gate.entered()).toBe(1); // the refused call did no work
    expect(gate.refusals).toStrictEqual(['loop-delay']);

    gate.setDelayMs(100); // at the limit: still admitted
    gate.release();
    expect((await call(`${gate.url}/call`, {})).status).toBe(200);
    expect((await inside).status).toBe(200);
  });

  it("refuses a client past its share with 429 while another client's call goes through", async () => {
    const gate = await gateApp({ maxConcurrent: 10, maxConcurrentPerClient: 2, maxLoopDelayMs: 100 });
    const held = [call(`${gate.url}/call?answer=held`, {}, CLIENT_A), call(`${gate.url}/call?answer=held`, {}, CLIENT_A)];
    await vi.waitFor(() => expect(gate.entered()).toBe(2));

    const third = await call(`${gate.url}/call`, {}, CLIENT_A);
    // RFC 6585 §4: 429 Too Many Requests; RFC 9110 §10.2.3: Retry-After in seconds
    expect([third.status, third.retryAfter, third.body]).toStrictEqual([429, String(RETRY_AFTER_SECONDS), CLIENT_BUSY]);
    expect(gate.refusals).toStrictEqual(['client-share']);
    const other = call(`${gate.url}/call?answer=held`, {}, CLIENT_B);
    await vi.waitFor(() => expect(gate.entered()).toBe(3));

    gate.release();
    expect((await Promise.all([...held, other])).map((answer) => answer.status)).toStrictEqual([200, 200, 200]);
    expect(gate.inFlight()).toBe(0);
  });

  it('refuses with 503 once every shared slot is taken, whoever holds them', async () => {
    const gate = await gateApp({ maxConcurrent: 2, maxConcurrentPerClient: 2, maxLoopDelayMs: 100 });
    const held = [call(`${gate.url}/call?answer=held`, {}, CLIENT_A), call(`${gate.url}/call?answer=held`, {}, CLIENT_B)];
    await vi.waitFor(() => expect(gate.entered()).toBe(2));
    const refused = await call(`${gate.url}/call`, {}, CLIENT_B);
    expect([refused.status, refused.body]).toStrictEqual([503, OVERLOADED]);
    expect(gate.refusals).toStrictEqual(['shared-cap']);
    gate.release();
    expect((await Promise.all(held)).map((answer) => answer.status)).toStrictEqual([200, 200]);
  });

  it('gives the slot back once the answer is handed over, though the caller never reads it', async () => {
    const gate = await gateApp({ maxConcurrent: 10, maxConcurrentPerClient: 2, maxLoopDelayMs: 100 });
    callWithoutReading(gate.url, CLIENT_A);
    callWithoutReading(gate.url, CLIENT_A);
    await vi.waitFor(() => expect(gate.unread).toHaveLength(2));
    // The answers are stuck: neither has reached the kernel whole, so neither response has finished.
    expect(gate.unread.map((res) => res.writableFinished)).toStrictEqual([false, false]);

    expect(gate.inFlight()).toBe(0);
    expect((await call(`${gate.url}/call`, {}, CLIENT_A)).status).toBe(200);
  });

  describe('edge cases', () => {
    it('lets a call through while none is in flight, however late the loop runs', async () => {
      const gate = await gateApp({ maxConcurrent: 10, maxConcurrentPerClient: 10, maxLoopDelayMs: 100 });
      gate.setDelayMs(10_000);
      expect((await call(`${gate.url}/call`, {})).status).toBe(200);
    });

    it('gives the slot back when the caller hangs up before the answer', async () => {
      const gate = await gateApp({ maxConcurrent: 1, maxConcurrentPerClient: 1, maxLoopDelayMs: 100 });
      const hangUp = new AbortController();
      const abandoned = fetch(`${gate.url}/call?answer=held`, { method: 'POST', signal: hangUp.signal }).catch(() => 'hung up');
      await vi.waitFor(() => expect(gate.entered()).toBe(1));
      hangUp.abort();
      expect(await abandoned).toBe('hung up');
      await vi.waitFor(() => expect(gate.inFlight()).toBe(0));
      gate.release();
      expect((await call(`${gate.url}/call`, {})).status).toBe(200);
    });
  });
});
