import { connect } from 'node:net';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { fhirAuthorization, fullPrefetch, orderSignRequest } from './larkspur-fixtures.js';
import { post } from './support/app-server.js';
import { startFaultFhirServer, type FaultFhirServer } from './support/fault-fhir-server.js';
import { killServerProcesses, runServerProcess } from './support/server-process.js';

/**
 * SIGTERM on the real process (`node --import tsx src/server.ts`): it stops accepting connections at
 * once, lets a hook call in flight finish (its FHIR read is held open by the test until after the
 * signal), closes that connection after the answer (RFC 9112 §9.6 `Connection: close`), and exits 0;
 * and a call still open when `OXYGEN_CHECKER_SHUTDOWN_GRACE_MS` runs out is cut so the process still exits.
 */

let fhir: FaultFhirServer;


/** Resolves with the socket error code, or 'connected' when a connection is accepted. */
function tryConnect(url: string): Promise<string> {
  const { hostname, port } = new URL(url);
  return new Promise((resolve) => {
    const socket = connect({ host: hostname, port: Number(port) });
    socket.once('connect', () => {
      socket.destroy();
      resolve('connected');
    });
    socket.once('error', (error: NodeJS.ErrnoException) => resolve(error.code ?? 'error'));
  });
}

/** An order-sign call whose observations the service must read from the held FHIR server. */
function heldCall(): Record<string, unknown> {
  const { observations: _read, ...prefetch } = fullPrefetch;
  return orderSignRequest({ prefetch, fhirServer: fhir.baseUrl('held', 'Observation'), fhirAuthorization });
}

function heldCount(): number {
  return fhir.requests.filter((r) => r.url.includes('/f/held/')).length;
}

async function untilHeld(count: number): Promise<void> {
  while (heldCount() < count) {
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

beforeAll(async () => {
  fhir = await startFaultFhirServer({ slowMs: 60_000 });
});

afterEach(killServerProcesses);

afterAll(async () => {
  await fhir.close();
});

const SLOW_FHIR_ENV = { OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS: '15000', OXYGEN_CHECKER_FHIR_BUDGET_MS: '15000' };

describe('shutdown on SIGTERM', () => {
  it('finishes the call in flight with 200, refuses new connections and exits 0', async () => {
    const run = runServerProcess({ ...SLOW_FHIR_ENV, OXYGEN_CHECKER_SHUTDOWN_GRACE_MS: '15000' });
    const url = String((await run.waitForLine('oxygen-order-checker listening'))['url']);
    const before = heldCount();
    const inFlight = post(`${url}/cds-services/oxygen-order-sign`, heldCall());
    await untilHeld(before + 1);

    run.child.kill('SIGTERM');
    const stopping = await run.waitForLine('oxygen-order-checker stopping');
    expect(stopping['graceMs']).toBe(15_000);
    expect(await tryConnect(url)).toBe('ECONNREFUSED');

    fhir.releaseHeld();
    const answer = await inFlight;
    expect(answer.status).toBe(200);
    expect((answer.body as { cards: unknown[] }).cards.length).toBeGreaterThan(0);
    expect(answer.headers.get('connection')).toBe('close');

    const exit = await run.exit;
    expect(exit).toStrictEqual({ code: 0, signal: null });
    expect(run.lines().at(-1)?.['msg']).toBe('oxygen-order-checker stopped');
  });

  describe('edge cases', () => {
    it('cuts a call still open at the deadline and still exits 0', async () => {
      const run = runServerProcess({ ...SLOW_FHIR_ENV, OXYGEN_CHECKER_SHUTDOWN_GRACE_MS: '300' });
      const url = String((await run.waitForLine('oxygen-order-checker listening'))['url']);
      const before = heldCount();
      const inFlight = post(`${url}/cds-services/oxygen-order-sign`, heldCall()).then(
        (answer) => answer.status,
        () => 'connection cut',
      );
      await untilHeld(before + 1);
      run.child.kill('SIGTERM');
      expect(await inFlight).toBe('connection cut');
      expect(await run.exit).toStrictEqual({ code: 0, signal: null });
      const stopped = run.lines().find((line) => line['msg'] === 'oxygen-order-checker stopped');
      expect(stopped?.['forced']).toBe(true);
      fhir.releaseHeld();
    });
  });
});
