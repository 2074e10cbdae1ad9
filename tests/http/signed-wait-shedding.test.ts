import { afterEach, describe, expect, it, vi } from 'vitest';
import { ENV_DEFAULTS } from '../../src/config/env-config.js';
import { createServiceMetrics } from '../../src/http/metrics.js';
import { RETRY_AFTER_SECONDS } from '../../src/http/overload.js';
import type { WaitClock } from '../../src/http/request-context.js';
import { createPolicyHolder } from '../../src/live-policy/policy-snapshot.js';
import { claims, EHR_ES384, SIGN_AUD, SIGN_PATH } from '../security/support/fixtures.js';
import { signToken } from '../security/support/keys.js';
import { buildProductionApp } from '../security/support/production-app.js';
import { orderSignRequest } from './larkspur-fixtures.js';
import { listenApp, type AppServer } from './support/app-server.js';
import { call, type CallerAnswer } from './support/many-callers.js';
import { SECURITY_HEADERS } from './support/security-headers.js';
import { holdThreadPool } from './support/thread-pool-hold.js';
import { bundledSnapshot } from './test-app.js';

/**
 * Signed hook calls that wait after the loop-delay check, as they do under load now that the token's
 * signature is checked on libuv's thread pool (src/security/jws-signature.ts): the app is built as
 * production builds it (trust file, real ES384 tokens, the replay cache in the store), the pool is
 * held busy by the test, and the clock the gate reads is the test's, moved on while the calls sit in
 * the pool's queue. The loop keeps time throughout (its delay reads 0), so `shed` lets every call
 * through; only the wait measured from arrival to admission can refuse them. No figure here depends
 * on the machine's speed.
 */

const LIMIT_MS = ENV_DEFAULTS.OXYGEN_CHECKER_MAX_WAIT_MS;
const HELD_CALLS = 5; // within the refusal limiter's lines per window, so each refusal has its line

let server: AppServer | undefined;

afterEach(async () => {
  await server?.close();
  server = undefined;
});

async function buildSignedApp() {
  let nowMs = 0;
  const clock: WaitClock = { now: () => nowMs, loopDelayMs: () => 0 };
  let authenticating = 0;
  let authenticated = 0;
  // The first call to reach the gather step is held there, so one call is in flight while the others wait.
  let releaseFirst: () => void = () => undefined;
  const firstHeld = new Promise<void>((resolve) => {
    releaseFirst = resolve;
  });
  let gathered = 0;
  const policy = createPolicyHolder(await bundledSnapshot());
  const metrics = createServiceMetrics({ policy });
  const built = await buildProductionApp({
    watchAuthenticate: (authenticate) => async (req) => {
      authenticating += 1;
      const result = await authenticate(req);
      authenticated += 1;
      return result;
    },
    beforeGather: async () => {
      gathered += 1;
      if (gathered === 1) {
        await firstHeld;
      }
    },
    appDeps: { policy, metrics, waitClock: clock },
    appConfig: { maxWaitMs: LIMIT_MS, maxLoopDelayMs: ENV_DEFAULTS.OXYGEN_CHECKER_MAX_LOOP_DELAY_MS },
  });
  server = await listenApp(built.app);
  return {
    url: `${server.url}${SIGN_PATH}`,
    log: built.log,
    metrics,
    advanceMs: (ms: number) => {
      nowMs += ms;
    },
    authenticating: () => authenticating,
    authenticated: () => authenticated,
    gathered: () => gathered,
    releaseFirst: () => releaseFirst(),
  };
}

const signedCall = (url: string): Promise<CallerAnswer> =>
  call(url, orderSignRequest(), '127.0.0.1', { Authorization: `Bearer ${signToken(EHR_ES384, claims(SIGN_AUD))}` });

describe('signed hook calls that wait in the thread pool', () => {
  it('are refused with 503 once they waited past the limit, and every call answered 200 was admitted within it', async () => {
    const app = await buildSignedApp();
    const inside = signedCall(app.url);
    await vi.waitFor(() => expect(app.gathered()).toBe(1));

    const pool = holdThreadPool();
    let held: Promise<CallerAnswer>[];
    try {
      held = Array.from({ length: HELD_CALLS }, () => signedCall(app.url));
      await vi.waitFor(() => expect(app.authenticating()).toBe(1 + HELD_CALLS));
      // A real pause, only to give a check that is not held the chance to finish: none can while the
      // pool is held, however long this is, so the assertion below does not depend on its length.
      await new Promise((resolve) => setTimeout(resolve, 50));
      expect(app.authenticated()).toBe(1); // the held calls' signatures wait in the pool's queue
      app.advanceMs(LIMIT_MS + 1); // just past the limit, while they wait
    } finally {
      await pool.release();
    }

    const refused = await Promise.all(held);
    expect(app.authenticated()).toBe(1 + HELD_CALLS); // each token was checked, then found late
    for (const answer of refused) {
      // RFC 9110 §15.6.4 (503 Service Unavailable) and §10.2.3 (Retry-After in seconds)
      expect([answer.status, answer.retryAfter, answer.body]).toStrictEqual([
        503,
        String(RETRY_AFTER_SECONDS),
        {
          code: 'CDS_ERR_OVERLOADED',
          message: 'The service is checking as many orders as it can at once; retry after the Retry-After delay.',
        },
      ]);
      expect(answer.headers['content-type']).toBe('application/json; charset=utf-8');
      expect(answer.headers).toMatchObject(SECURITY_HEADERS);
    }
    expect(app.gathered()).toBe(1); // the refused calls did no work

    app.releaseFirst();
    expect((await inside).status).toBe(200);
    // With the pool free and the clock still, calls wait nothing and are answered.
    const after = [await signedCall(app.url), await signedCall(app.url)];
    expect(after.map((answer) => answer.status)).toStrictEqual([200, 200]);

    const lines = app.log.lines().filter((line) => line['route'] === 'service');
    expect(
      lines.filter((line) => line['status'] === 503).map((line) => [line['errorCode'], line['overloadReason'], line['waitedMs']]),
    ).toStrictEqual(Array.from({ length: HELD_CALLS }, () => ['CDS_ERR_OVERLOADED', 'waited', LIMIT_MS + 1]));
    // Durations on the test's clock: the first call waited nothing, then its own work (held in gather)
    // spanned the clock's move; the later ones waited nothing and took none of the test's time.
    expect(lines.filter((line) => line['status'] === 200).map((line) => line['durationMs'])).toStrictEqual([LIMIT_MS + 1, 0, 0]);
    expect(await app.metrics.registry.getSingleMetricAsString('oxygen_checker_overload_refusals_total')).toContain(
      `oxygen_checker_overload_refusals_total{reason="waited"} ${HELD_CALLS}`,
    );
    // The three admitted calls had waited nothing on the test's clock.
    const waits = await app.metrics.registry.getSingleMetricAsString('oxygen_checker_hook_wait_seconds');
    expect(waits).toContain('oxygen_checker_hook_wait_seconds_count 3');
    expect(waits).toContain('oxygen_checker_hook_wait_seconds_sum 0');
  });
});
