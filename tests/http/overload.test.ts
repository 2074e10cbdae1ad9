import { afterEach, describe, expect, it, vi } from 'vitest';
import { createGatherer, type Gather } from '../../src/http/gather-data.js';
import { RETRY_AFTER_SECONDS } from '../../src/http/overload.js';
import { orderSignRequest } from './larkspur-fixtures.js';
import { get, listenApp, post, type Answer, type AppServer } from './support/app-server.js';
import { buildTestApp, TEST_CONFIG } from './test-app.js';

/**
 * The cap on hook calls evaluated at once (`OXYGEN_CHECKER_MAX_CONCURRENT`). Deterministic: the gather step
 * is held open by the test, so exactly `CAP` calls are in flight when the extra ones arrive. Past the
 * cap: 503 with Retry-After (RFC 9110 §15.6.4, §10.2.3), before any work is done.
 */

const CAP = 3;
const EXTRA = 4;
const SERVICE = '/cds-services/oxygen-order-sign';

interface HeldGather {
  readonly gather: Gather;
  /** Resolves once `count` calls are inside gather. */
  readonly entered: (count: number) => Promise<void>;
  readonly calls: () => number;
  readonly release: () => void;
}

function holdingGather(): HeldGather {
  const real = createGatherer({ fetch: globalThis.fetch, limits: TEST_CONFIG.fhir });
  let calls = 0;
  let release: () => void = () => undefined;
  const held = new Promise<void>((resolve) => {
    release = resolve;
  });
  const waiters: { count: number; resolve: () => void }[] = [];
  const gather: Gather = async (request, templates) => {
    calls += 1;
    for (const waiter of waiters.filter((w) => calls >= w.count)) waiter.resolve();
    await held;
    return real(request, templates);
  };
  return {
    gather,
    calls: () => calls,
    release: () => release(),
    entered: (count) =>
      new Promise((resolve) => {
        if (calls >= count) resolve();
        else waiters.push({ count, resolve });
      }),
  };
}

let server: AppServer | undefined;

afterEach(async () => {
  await server?.close();
  server = undefined;
});

async function start(held: HeldGather) {
  const built = await buildTestApp({ gather: held.gather }, { maxConcurrentEvaluations: CAP });
  server = await listenApp(built.app);
  return { url: server.url, log: built.log };
}

describe('the concurrent evaluation cap', () => {
  it('answers 503 with Retry-After past the cap, then serves again once calls finish', async () => {
    const held = holdingGather();
    const { url, log } = await start(held);
    const admitted = Array.from({ length: CAP }, () => post(`${url}${SERVICE}`, orderSignRequest()));
    await held.entered(CAP);

    const refused: Answer[] = await Promise.all(
      Array.from({ length: EXTRA }, () => post(`${url}${SERVICE}`, orderSignRequest())),
    );
    for (const answer of refused) {
      expect(answer.status).toBe(503);
      expect(answer.headers.get('retry-after')).toBe(String(RETRY_AFTER_SECONDS));
      expect(answer.body).toStrictEqual({
        code: 'CDS_ERR_OVERLOADED',
        message: 'The service is checking as many orders as it can at once; retry after the Retry-After delay.',
      });
    }
    expect(held.calls()).toBe(CAP); // the refused calls did no work

    // Discovery and liveness are not evaluations and stay open.
    expect((await get(`${url}/cds-services`)).status).toBe(200);
    expect((await get(`${url}/healthz`)).status).toBe(200);

    held.release();
    for (const answer of await Promise.all(admitted)) expect(answer.status).toBe(200);
    const again = await Promise.all(Array.from({ length: CAP }, () => post(`${url}${SERVICE}`, orderSignRequest())));
    expect(again.map((answer) => answer.status)).toStrictEqual(Array.from({ length: CAP }, () => 200));

    const refusals = log.lines().filter((line) => line['errorCode'] === 'CDS_ERR_OVERLOADED');
    expect(refusals.map((line) => [line['route'], line['status']])).toStrictEqual(
      Array.from({ length: EXTRA }, () => ['service', 503]),
    );
  });

  describe('edge cases', () => {
    it('gives the slot back when the caller hangs up mid-call', async () => {
      const held = holdingGather();
      const { url, log } = await start(held);
      const hangUps = Array.from({ length: CAP }, () => new AbortController());
      const abandoned = hangUps.map((controller) =>
        fetch(`${url}${SERVICE}`, {
          method: 'POST',
          headers: { 'Content-Type': 'application/json' },
          body: JSON.stringify(orderSignRequest()),
          signal: controller.signal,
        }).catch(() => 'hung up'),
      );
      await held.entered(CAP);
      for (const controller of hangUps) controller.abort();
      expect(await Promise.all(abandoned)).toStrictEqual(Array.from({ length: CAP }, () => 'hung up'));
      // The summary line is written on the same `close` event that gives the slot back.
      await vi.waitFor(() => expect(log.lines().filter((line) => line['route'] === 'service')).toHaveLength(CAP));

      const next = post(`${url}${SERVICE}`, orderSignRequest());
      await held.entered(CAP + 1);
      held.release();
      expect((await next).status).toBe(200);
    });
  });
});
