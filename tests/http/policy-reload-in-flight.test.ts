import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Card } from '../../src/cds/schemas.js';
import { createPolicyHolder } from '../../src/live-policy/policy-snapshot.js';
import { createPolicyReloader } from '../../src/live-policy/reload-policy.js';
import { createLogger } from '../../src/log/logger.js';
import { openTempStore } from '../helpers/temp-store.js';
import { larkspurPolicy, policyFolder, sha256 } from '../live-policy/support/policy-files.js';
import { createMemoryLog } from '../log/memory-log.js';
import { fhirAuthorization, fullPrefetch, orderSignRequest } from './larkspur-fixtures.js';
import { listenApp, post, type AppServer } from './support/app-server.js';
import { startFaultFhirServer, type FaultFhirServer } from './support/fault-fhir-server.js';
import { buildTestApp, bundledSnapshot } from './test-app.js';

/**
 * No request sees a half-loaded or mixed policy: a hook call whose FHIR read is held open by the test
 * while a new policy is put in force answers, records and logs under the policy it started with, all
 * of it; the next call runs wholly under the new one.
 */

let fhir: FaultFhirServer;

beforeAll(async () => {
  fhir = await startFaultFhirServer({ slowMs: 60_000 });
});

afterAll(async () => {
  await fhir.close();
});

function heldCount(): number {
  return fhir.requests.filter((r) => r.url.includes('/f/held/')).length;
}

async function untilHeld(count: number): Promise<void> {
  while (heldCount() < count) {
    await new Promise((resolve) => setTimeout(resolve, 10));
  }
}

/** The short hash and name a card's source label carries (src/cds: `(id vversion #hash12)`). */
function labelName(id: string, version: string, hash: string): string {
  return `(${id} v${version} #${hash.slice(0, 12)})`;
}

describe('a policy reload while a hook call is in flight', () => {
  let server: AppServer | undefined;

  afterAll(async () => {
    await server?.close();
  });

  it('leaves the call on the policy it started with, on its cards, audit records and log line alike', async () => {
    const first = await bundledSnapshot();
    const holder = createPolicyHolder(first);
    const { store } = openTempStore();
    const built = await buildTestApp({ policy: holder, store });
    server = await listenApp(built.app);
    const folder = policyFolder(larkspurPolicy('2.0.0'));
    const reloader = createPolicyReloader({
      holder,
      paths: folder,
      mode: 'demo',
      logger: createLogger({ level: 'silent', destination: createMemoryLog().stream }),
      clock: () => new Date('2026-12-01T14:30:00Z'), // invented
    });

    // The observations must come from the FHIR server, which holds its answer until released.
    const { observations: _fromServer, ...prefetch } = fullPrefetch;
    const before = heldCount();
    const inFlight = post(
      `${server.url}/cds-services/oxygen-order-sign`,
      orderSignRequest({ prefetch, fhirServer: fhir.baseUrl('held', 'Observation'), fhirAuthorization }),
    );
    await untilHeld(before + 1);

    const outcome = await reloader.reload('manual');
    expect(outcome.kind).toBe('swapped');
    expect(holder.current().contentHash).toBe(sha256(larkspurPolicy('2.0.0')));
    fhir.releaseHeld();
    const answer = await inFlight;

    expect(answer.status).toBe(200);
    const cards = (answer.body as { cards: Card[] }).cards;
    expect(cards.length).toBeGreaterThan(0);
    for (const card of cards) {
      expect(card.source.label).toContain(labelName('based-on-bts-2017', '1.0.0', first.contentHash));
      const record = await store.getAdvisory(card.uuid ?? '');
      expect(record?.policy).toStrictEqual({ id: 'based-on-bts-2017', version: '1.0.0', contentHash: first.contentHash });
    }
    const line = built.log.lines().find((l) => l['route'] === 'service');
    expect(line).toMatchObject({ status: 200, policyId: 'based-on-bts-2017', policyVersion: '1.0.0', policyContentHash: first.contentHash });

    // The next call starts after the swap and runs wholly under the new policy. Its own hookInstance
    // gives its cards their own uuids (stable-uuid.ts), so their records are new ones.
    const next = await post(
      `${server.url}/cds-services/oxygen-order-sign`,
      orderSignRequest({ hookInstance: 'b1d5c6a4-1f2e-4c3d-9a8b-7e6f5d4c3b2a' }),
    );
    const nextHash = sha256(larkspurPolicy('2.0.0'));
    const nextCards = (next.body as { cards: Card[] }).cards;
    expect(nextCards.length).toBeGreaterThan(0);
    for (const card of nextCards) {
      expect(card.source.label).toContain(labelName('larkspur-bay-adult', '2.0.0', nextHash));
      const record = await store.getAdvisory(card.uuid ?? '');
      expect(record?.policy).toStrictEqual({ id: 'larkspur-bay-adult', version: '2.0.0', contentHash: nextHash });
    }
    const lines = built.log.lines().filter((l) => l['route'] === 'service');
    expect(lines.map((l) => [l['policyId'], l['policyContentHash']])).toStrictEqual([
      ['based-on-bts-2017', first.contentHash],
      ['larkspur-bay-adult', nextHash],
    ]);
  });
});
