import { connect, type Socket } from 'node:net';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { ENV_DEFAULTS } from '../../src/config/env-config.js';
import { RETRY_AFTER_SECONDS } from '../../src/http/overload.js';
import { fhirAuthorization, orderSignRequest } from './larkspur-fixtures.js';
import { listenApp, type AppServer } from './support/app-server.js';
import { startFaultFhirServer, type FaultFhirServer } from './support/fault-fhir-server.js';
import { call, type CallerAnswer } from './support/many-callers.js';
import { buildTestApp, TEST_CONFIG } from './test-app.js';

/**
 * Each client holds only its share of the evaluation slots (`OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT`,
 * at the project defaults: 8 of 16), so one careless or hostile client cannot starve another. In the
 * demo a client is its address (src/http/client-key.ts): client A calls from 127.0.0.2, client B from
 * 127.0.0.1. Outcomes only: who got 200, who 429, and what was still held.
 */

const SERVICE = '/cds-services/oxygen-order-sign';
const CLIENT_A = '127.0.0.2';
const CLIENT_B = '127.0.0.1';
const CALLS_FROM_A = 20; // issue 9: 20 non-reading sockets, 20 calls whose FHIR server hangs
const SHARE = ENV_DEFAULTS.OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT;

let server: AppServer | undefined;
let fhir: FaultFhirServer | undefined;
const sockets: Socket[] = [];

afterEach(async () => {
  for (const socket of sockets.splice(0)) socket.destroy();
  await server?.close();
  await fhir?.close();
  server = undefined;
  fhir = undefined;
});

describe("one client's share of the evaluation slots", () => {
  it("leaves room for another client while 20 of its calls hang on a FHIR server that never answers", async () => {
    fhir = await startFaultFhirServer({ slowMs: 60_000 });
    // Deadlines far past the test, so A's calls stay held until the FHIR server is closed below.
    const built = await buildTestApp(
      {},
      { fhir: { ...TEST_CONFIG.fhir, callTimeoutMs: 300_000, budgetMs: 300_000 } },
    );
    server = await listenApp(built.app);
    const url = `${server.url}${SERVICE}`;
    // No prefetch, so the fallback reads the FHIR server, whose Observation search never answers.
    const hanging = orderSignRequest({ prefetch: {}, fhirServer: fhir.baseUrl('hang', 'Observation'), fhirAuthorization });
    const hangsSeen = (): number => fhir?.requests.filter((r) => r.url.includes('/f/hang/Observation/')).length ?? 0;

    const fromA: CallerAnswer[] = [];
    const callsFromA = Array.from({ length: CALLS_FROM_A }, () =>
      call(url, hanging, CLIENT_A).then((answer) => {
        fromA.push(answer);
        return answer;
      }),
    );
    // A's share is inside, waiting on the FHIR server; the rest of A's calls came straight back.
    await vi.waitFor(() => expect([hangsSeen() > 0, fromA.length]).toStrictEqual([true, CALLS_FROM_A - SHARE]), {
      timeout: 60_000,
    });
    for (const answer of fromA) {
      // RFC 6585 §4: 429 Too Many Requests; RFC 9110 §10.2.3: Retry-After in seconds
      expect([answer.status, answer.retryAfter, answer.body]).toStrictEqual([
        429,
        String(RETRY_AFTER_SECONDS),
        {
          code: 'CDS_ERR_CLIENT_BUSY',
          message:
            'This client has as many hook calls being checked at once as the service takes from one client; retry after the Retry-After delay.',
        },
      ]);
    }

    const fromB = await call(url, orderSignRequest(), CLIENT_B);
    expect(fromB.status).toBe(200);
    expect(fromA).toHaveLength(CALLS_FROM_A - SHARE); // while A's share was still held

    // The FHIR server goes away: A's held calls end as the fallback says (required data not had: 412).
    await fhir.close();
    fhir = undefined;
    const all = await Promise.all(callsFromA);
    expect(all.filter((answer) => answer.status === 412)).toHaveLength(SHARE);
  }, 120_000);

  it('leaves room for another client while 20 of its sockets never read their answers', async () => {
    const built = await buildTestApp();
    server = await listenApp(built.app);
    const { hostname, port } = new URL(server.url);
    const body = JSON.stringify(orderSignRequest());
    for (let i = 0; i < CALLS_FROM_A; i += 1) {
      const socket = connect({ host: hostname, port: Number(port), localAddress: CLIENT_A });
      socket.pause(); // never reads a byte of the answer
      sockets.push(socket);
      socket.write(
        `POST ${SERVICE} HTTP/1.1\r\nHost: ${hostname}\r\nContent-Type: application/json\r\n` +
          `Content-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`,
      );
    }
    // Every one of A's calls was answered (its summary line is written once the answer is handed over).
    await vi.waitFor(
      () => expect(built.log.lines().filter((line) => line['route'] === 'service')).toHaveLength(CALLS_FROM_A),
      { timeout: 60_000 },
    );
    expect(sockets.filter((socket) => socket.destroyed)).toStrictEqual([]); // and none of A's sockets read or closed

    expect((await call(`${server.url}${SERVICE}`, orderSignRequest(), CLIENT_B)).status).toBe(200);
    // A's unread answers hold none of its own share either.
    expect((await call(`${server.url}${SERVICE}`, orderSignRequest(), CLIENT_A)).status).toBe(200);
  }, 120_000);
});
