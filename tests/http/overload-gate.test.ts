import { connect, type Socket } from 'node:net';
import express, { type Response } from 'express';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { allowEveryRequest, requireAuthentication } from '../../src/http/auth.js';
import { jsonErrorHandler } from '../../src/http/error-handler.js';
import { createEvaluationGate, RETRY_AFTER_SECONDS, type GateLimits } from '../../src/http/overload.js';
import { requestContext, type WaitClock } from '../../src/http/request-context.js';
import { securityHeaderSetter } from '../../src/http/security-headers.js';
import { createLogger } from '../../src/log/logger.js';
import { createMemoryLog } from '../log/memory-log.js';
import { listenApp, type AppServer } from './support/app-server.js';
import { call, type CallerAnswer } from './support/many-callers.js';
import { SECURITY_HEADERS } from './support/security-headers.js';

/**
 * The gate's decisions, one at a time, on a bare app: the gate with the request context, demo
 * authentication and the JSON error writer, in front of a handler the test holds open or makes answer
 * with more bytes than a socket that does not read can take. The clock and the loop delay are the
 * test's own values (a call's `?waitMs=` moves the clock between authentication and admission, as a
 * queue on the thread pool would), so every decision is deterministic;
 * tests/http/load-shedding.test.ts drives the real gauge.
 */

const CLIENT_A = '127.0.0.2'; // demo mode: a client is its address (src/http/client-key.ts)
const CLIENT_B = '127.0.0.1';

/** Far more than a loopback socket buffers for a client that does not read (common practice: a few MiB). */
const UNREADABLE_BYTES = 32 * 1024 * 1024;
const UNREADABLE = Buffer.alloc(UNREADABLE_BYTES, 0x20);

interface GateApp {
  readonly url: string;
  /** The loop delay the gauge reads, at arrival and at `shed` alike. */
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
  /** How long each admitted call had waited, in order, on the test's clock. */
  readonly admittedWaits: readonly number[];
  /** The summary lines written, in order. */
  readonly lines: () => Record<string, unknown>[];
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
  let nowMs = 1_000;
  const clock: WaitClock = { now: () => nowMs, loopDelayMs: () => delayMs };
  const admittedWaits: number[] = [];
  const gate = createEvaluationGate(limits, {
    clock,
    onRefused: (reason) => refusals.push(reason),
    onAdmitted: (waitedMs) => admittedWaits.push(waitedMs),
  });
  const app = express();
  const log = createMemoryLog();
  const logger = createLogger({ level: 'info', destination: log.stream });
  let ids = 0;
  const beginContext = requestContext(logger, () => `req-${++ids}`, undefined, undefined, clock);
  const setSecurityHeaders = securityHeaderSetter({ strictTransportSecurity: false });
  app.use((req, res, next) => {
    setSecurityHeaders(res);
    beginContext(req, res);
    next();
  });
  app.post('/call', gate.shed);
  app.use(requireAuthentication(allowEveryRequest));
  // Time spent after `shed` and before admission, as a signature check queued on the thread pool spends it.
  app.post('/call', (req, _res, next) => {
    nowMs += Number(req.query['waitMs'] ?? 0);
    next();
  });
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
    admittedWaits,
    lines: log.lines,
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

/** A wait limit no call reaches, for the tests of the other decisions. */
const OFF = 600_000;

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
    const gate = await gateApp({ maxConcurrent: 100, maxConcurrentPerClient: 100, maxLoopDelayMs: 100, maxWaitMs: OFF });
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
    const gate = await gateApp({ maxConcurrent: 10, maxConcurrentPerClient: 2, maxLoopDelayMs: 100, maxWaitMs: OFF });
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
    const gate = await gateApp({ maxConcurrent: 2, maxConcurrentPerClient: 2, maxLoopDelayMs: 100, maxWaitMs: OFF });
    const held = [call(`${gate.url}/call?answer=held`, {}, CLIENT_A), call(`${gate.url}/call?answer=held`, {}, CLIENT_B)];
    await vi.waitFor(() => expect(gate.entered()).toBe(2));
    const refused = await call(`${gate.url}/call`, {}, CLIENT_B);
    expect([refused.status, refused.body]).toStrictEqual([503, OVERLOADED]);
    expect(gate.refusals).toStrictEqual(['shared-cap']);
    gate.release();
    expect((await Promise.all(held)).map((answer) => answer.status)).toStrictEqual([200, 200]);
  });

  it('gives the slot back once the answer is handed over, though the caller never reads it', async () => {
    const gate = await gateApp({ maxConcurrent: 10, maxConcurrentPerClient: 2, maxLoopDelayMs: 100, maxWaitMs: OFF });
    callWithoutReading(gate.url, CLIENT_A);
    callWithoutReading(gate.url, CLIENT_A);
    await vi.waitFor(() => expect(gate.unread).toHaveLength(2));
    // The answers are stuck: neither has reached the kernel whole, so neither response has finished.
    expect(gate.unread.map((res) => res.writableFinished)).toStrictEqual([false, false]);

    expect(gate.inFlight()).toBe(0);
    expect((await call(`${gate.url}/call`, {}, CLIENT_A)).status).toBe(200);
  });

  describe('by the time a call has waited', () => {
    const LIMITS = { maxConcurrent: 100, maxConcurrentPerClient: 100, maxLoopDelayMs: 100, maxWaitMs: 250 };

    /** A gate with one call held inside, so the gate's progress rule (nothing in flight) does not apply. */
    async function withOneInside(): Promise<GateApp & { readonly inside: Promise<CallerAnswer> }> {
      const gate = await gateApp(LIMITS);
      const inside = call(`${gate.url}/call?answer=held`, {});
      await vi.waitFor(() => expect(gate.entered()).toBe(1));
      return { ...gate, inside };
    }

    it('refuses a call that waited just over the limit with 503, Retry-After and the JSON error', async () => {
      const gate = await withOneInside();
      const refused = await call(`${gate.url}/call?waitMs=251`, {});
      // RFC 9110 §15.6.4 (503 Service Unavailable) and §10.2.3 (Retry-After in seconds)
      expect([refused.status, refused.retryAfter, refused.body]).toStrictEqual([503, String(RETRY_AFTER_SECONDS), OVERLOADED]);
      expect(refused.headers['content-type']).toBe('application/json; charset=utf-8');
      expect(refused.headers).toMatchObject(SECURITY_HEADERS);
      expect(gate.entered()).toBe(1); // the refused call did no work
      expect(gate.refusals).toStrictEqual(['waited']);
      // The operator's line names the reason and the wait (docs/deployment.md, "Load shedding").
      await vi.waitFor(() => expect(gate.lines()).toHaveLength(1));
      expect(gate.lines().map((line) => [line['status'], line['errorCode'], line['overloadReason'], line['waitedMs']])).toStrictEqual([
        [503, 'CDS_ERR_OVERLOADED', 'waited', 251],
      ]);
      gate.release();
      expect((await gate.inside).status).toBe(200);
    });

    it('admits a call that waited just under the limit, and one that waited exactly the limit', async () => {
      const gate = await withOneInside();
      expect((await call(`${gate.url}/call?waitMs=249`, {})).status).toBe(200);
      expect((await call(`${gate.url}/call?waitMs=250`, {})).status).toBe(200);
      expect(gate.refusals).toStrictEqual([]);
      // What the wait histogram is told: the held call waited nothing, the others their own waits.
      expect(gate.admittedWaits).toStrictEqual([0, 249, 250]);
      expect(gate.inFlight()).toBe(1); // the held call was in flight throughout
      gate.release();
      expect((await gate.inside).status).toBe(200);
    });

    it("counts the loop's delay when the call arrived as time it waited", async () => {
      const gate = await withOneInside();
      gate.setDelayMs(90); // late, but within maxLoopDelayMs, so `shed` lets both through
      const over = await call(`${gate.url}/call?waitMs=161`, {}); // 90 + 161 = 251
      expect([over.status, over.body]).toStrictEqual([503, OVERLOADED]);
      expect((await call(`${gate.url}/call?waitMs=160`, {})).status).toBe(200); // 90 + 160 = 250
      expect(gate.refusals).toStrictEqual(['waited']);
      gate.release();
      expect((await gate.inside).status).toBe(200);
      await vi.waitFor(() => expect(gate.lines().filter((line) => line['status'] === 503)).toHaveLength(1));
      expect(gate.lines().find((line) => line['status'] === 503)?.['waitedMs']).toBe(251);
    });

    it("refuses a call that waited too long before it counts the client's share", async () => {
      const gate = await gateApp({ ...LIMITS, maxConcurrentPerClient: 1 });
      const inside = call(`${gate.url}/call?answer=held`, {});
      await vi.waitFor(() => expect(gate.entered()).toBe(1));
      // This client's share is full too; the wait is what makes the call late, so it is named.
      const refused = await call(`${gate.url}/call?waitMs=251`, {});
      expect([refused.status, refused.body]).toStrictEqual([503, OVERLOADED]);
      expect(gate.refusals).toStrictEqual(['waited']);
      gate.release();
      expect((await inside).status).toBe(200);
    });

    it('lets a late call through while none is in flight, so the service always makes progress', async () => {
      const gate = await gateApp(LIMITS);
      expect((await call(`${gate.url}/call?waitMs=10000`, {})).status).toBe(200);
      expect(gate.refusals).toStrictEqual([]);
    });
  });

  describe('edge cases', () => {
    it('lets a call through while none is in flight, however late the loop runs', async () => {
      const gate = await gateApp({ maxConcurrent: 10, maxConcurrentPerClient: 10, maxLoopDelayMs: 100, maxWaitMs: OFF });
      gate.setDelayMs(10_000);
      expect((await call(`${gate.url}/call`, {})).status).toBe(200);
    });

    it('gives the slot back when the caller hangs up before the answer', async () => {
      const gate = await gateApp({ maxConcurrent: 1, maxConcurrentPerClient: 1, maxLoopDelayMs: 100, maxWaitMs: OFF });
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
