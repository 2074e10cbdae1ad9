import { join } from 'node:path';
import Database from 'better-sqlite3';
import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { STORE_FILE_NAME } from '../../src/store/open-store.js';
import type { Store } from '../../src/store/store.js';
import { makeTempDataDir } from '../helpers/temp-store.js';
import { claims, EHR_ES384, EHR_ISS, ehrClient, SIGN_AUD, SIGN_PATH } from '../security/support/fixtures.js';
import { signToken } from '../security/support/keys.js';
import { buildProductionApp, type ProductionApp } from '../security/support/production-app.js';
import { startFhirServer, type FhirTestServer } from './fhir-test-server.js';
import { copd, encounter, fhirAuthorization, fullPrefetch, orderSignRequest, patient, searchset, spo2 } from './larkspur-fixtures.js';

/**
 * When a hook call's token id (`jti`) reaches the store. A call answered from prefetch commits it in
 * the same transaction as its cards; a call that needs the FHIR fallback commits it alone before the
 * first FHIR request; any other answer commits it before it goes out. Whichever way, the store's
 * answer decides: an id another instance (another store handle on the same data directory) committed
 * first is refused 401 with no card kept, a full share 429, a failing store 503.
 */

const bearer = (jti: string): string => `Bearer ${signToken(EHR_ES384, claims(SIGN_AUD, { jti }))}`;

/** A fresh hookInstance for each call, so each call's cards have their own uuids. */
let calls = 0;
function signRequest(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  calls += 1;
  return orderSignRequest({ hookInstance: `d1577c69-dfbe-44ad-ba6d-${String(calls).padStart(12, '0')}`, ...overrides });
}

async function advisoriesHeld(built: ProductionApp): Promise<number> {
  return (await built.store.listAdvisories({ limit: 1, offset: 0 })).total;
}

function refusal(built: ProductionApp): unknown {
  return built.log.lines().find((line) => line['msg'] === 'request' && line['authRefused'] !== undefined)?.['authRefused'];
}

/** Read-only connections to each data directory's store, as another instance would read it. */
const readers = new Map<string, Database.Statement<[string]>>();
afterAll(() => {
  for (const statement of readers.values()) {
    statement.database.close();
  }
});

/** Whether the store file holds `jti` as committed (a connection of its own sees committed rows only). */
function committed(dataDir: string, jti: string): boolean {
  let statement = readers.get(dataDir);
  if (statement === undefined) {
    statement = new Database(join(dataDir, STORE_FILE_NAME), { readonly: true }).prepare<[string]>(
      'SELECT 1 FROM replay_id WHERE jti = ?',
    );
    readers.set(dataDir, statement);
  }
  return statement.get(jti) !== undefined;
}

describe('a hook call answered from prefetch', () => {
  it('commits its token id with its cards, and refuses the same token again at once, before any work', async () => {
    const built = await buildProductionApp();
    const token = bearer('lbgh-jti-prefetch-1');
    const first = await request(built.app).post(SIGN_PATH).set('Authorization', token).send(signRequest());
    expect(first.status).toBe(200);
    expect(first.body.cards.length).toBeGreaterThan(0);
    expect(committed(built.dataDir, 'lbgh-jti-prefetch-1')).toBe(true);
    expect(await advisoriesHeld(built)).toBe(first.body.cards.length);

    const again = await request(built.app).post(SIGN_PATH).set('Authorization', token).send(signRequest());
    // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
    expect(again.status).toBe(401);
    expect(refusal(built)).toBe('jti-replayed');
    // refused from this process's memory: the second call never gathered data
    expect(built.gathered).toHaveLength(1);
    expect(await advisoriesHeld(built)).toBe(first.body.cards.length);
  });

  it('is refused 401 at the commit, with none of its cards kept, when another instance committed the id first', async () => {
    const dataDir = makeTempDataDir();
    const one = await buildProductionApp({ dataDir });
    const other = await buildProductionApp({ dataDir });
    const token = bearer('lbgh-jti-two-instances');
    const first = await request(one.app).post(SIGN_PATH).set('Authorization', token).send(signRequest());
    expect(first.status).toBe(200);
    const held = await advisoriesHeld(one);

    const replay = await request(other.app).post(SIGN_PATH).set('Authorization', token).send(signRequest());
    expect(replay.status).toBe(401);
    expect(replay.body.code).toBe('CDS_ERR_AUTH_INVALID_TOKEN');
    expect(replay.body.cards).toBeUndefined();
    expect(refusal(other)).toBe('jti-replayed');
    // the other instance did evaluate (its memory had not seen the id); the store refused it at the commit
    expect(other.gathered).toHaveLength(1);
    expect(await advisoriesHeld(other)).toBe(held);
  });

  it('answers 429 with Retry-After, keeping no card, when the client holds its whole share', async () => {
    const built = await buildProductionApp({ replayMaxPerClient: 1 });
    expect((await request(built.app).post(SIGN_PATH).set('Authorization', bearer('lbgh-jti-share-1')).send(signRequest())).status).toBe(200);
    const held = await advisoriesHeld(built);

    const over = await request(built.app).post(SIGN_PATH).set('Authorization', bearer('lbgh-jti-share-2')).send(signRequest());
    // RFC 6585 §4: 429 Too Many Requests; RFC 9110 §10.2.3: Retry-After in seconds
    expect(over.status).toBe(429);
    expect(over.body.code).toBe('CDS_ERR_AUTH_TOO_MANY_TOKENS');
    // the held id lives until exp (295 s after the fixtures' now) plus the 60 s leeway (arithmetic)
    expect(over.headers['retry-after']).toBe('355');
    expect(refusal(built)).toBe('jti-share-full');
    expect(await advisoriesHeld(built)).toBe(held);
    expect(committed(built.dataDir, 'lbgh-jti-share-2')).toBe(false);
  });

  it('answers 503 and keeps nothing when the store cannot commit the id at all (fail closed)', async () => {
    const failing = (real: Store): Store => ({
      ...real,
      checkAndRememberJti: () => Promise.reject(new Error('SQLITE_BUSY')),
      rememberJtiAndRecordAdvisories: () => Promise.reject(new Error('SQLITE_BUSY')),
    });
    const built = await buildProductionApp({ replayStore: failing });
    const response = await request(built.app).post(SIGN_PATH).set('Authorization', bearer('lbgh-jti-503')).send(signRequest());
    expect(response.status).toBe(503);
    expect(response.body.code).toBe('CDS_ERR_STORE_UNAVAILABLE');
    expect(refusal(built)).toBe('replay-check-failed');
    expect(await advisoriesHeld(built)).toBe(0);
  });

  it('still answers with its cards, logged as an unrecorded audit write, when only the combined write fails', async () => {
    const failing = (real: Store): Store => ({
      ...real,
      rememberJtiAndRecordAdvisories: () => Promise.reject(Object.assign(new Error('disk full'), { code: 'SQLITE_FULL' })),
    });
    const built = await buildProductionApp({ replayStore: failing });
    const response = await request(built.app).post(SIGN_PATH).set('Authorization', bearer('lbgh-jti-cards-fail')).send(signRequest());
    // advice is never held back for the audit trail; the id was committed alone, so the answer stands
    expect(response.status).toBe(200);
    expect(response.body.cards.length).toBeGreaterThan(0);
    expect(committed(built.dataDir, 'lbgh-jti-cards-fail')).toBe(true);
    const failed = built.log.lines().find((line) => line['audit'] === 'write-failed');
    expect(failed).toMatchObject({ errorCode: 'SQLITE_FULL', level: 50 });
  });

  it('commits the id of a call answered with an error, so another instance refuses the token', async () => {
    const dataDir = makeTempDataDir();
    const one = await buildProductionApp({ dataDir });
    const other = await buildProductionApp({ dataDir });
    const token = bearer('lbgh-jti-answered-400');
    const invalid = await request(one.app).post(SIGN_PATH).set('Authorization', token).send({ hook: 'order-sign' });
    expect(invalid.status).toBe(400);
    expect(committed(dataDir, 'lbgh-jti-answered-400')).toBe(true);

    const replay = await request(other.app).post(SIGN_PATH).set('Authorization', token).send(signRequest());
    expect(replay.status).toBe(401);
    expect(refusal(other)).toBe('jti-replayed');
  });
});

describe('a hook call that needs the FHIR fallback', () => {
  let fhir: FhirTestServer;
  /** For each request the FHIR server received: was the call's token id already committed? */
  const committedAtRequest: boolean[] = [];
  let watched: { dataDir: string; jti: string } | undefined;

  beforeAll(async () => {
    fhir = await startFhirServer((received) => {
      if (watched !== undefined) {
        committedAtRequest.push(committed(watched.dataDir, watched.jti));
      }
      const url = received.url;
      if (url.includes('/Patient/')) return { status: 200, body: patient };
      if (url.includes('/Encounter/')) return { status: 200, body: encounter };
      if (url.includes('/Observation')) return { status: 200, body: searchset([spo2]) };
      if (url.includes('/Condition')) return { status: 200, body: searchset([copd]) };
      return { status: 200, body: searchset([]) };
    });
  });
  beforeEach(() => {
    fhir.requests.length = 0;
    committedAtRequest.length = 0;
    watched = undefined;
  });
  afterAll(async () => {
    await fhir.close();
  });

  const appFor = async (dataDir: string): Promise<ProductionApp> => {
    const built = await buildProductionApp({ dataDir, requireHttps: false, clients: [ehrClient({ fhirServers: [fhir.baseUrl] })] });
    // The store's thread is started before the call, so its start-up is not spent in the fallback's budget.
    await built.store.isEmpty();
    return built;
  };
  const fallbackRequest = (): Record<string, unknown> =>
    signRequest({ prefetch: undefined, fhirServer: fhir.baseUrl, fhirAuthorization });

  it('commits the token id before the first FHIR request carries the access token out', async () => {
    const dataDir = makeTempDataDir();
    const built = await appFor(dataDir);
    watched = { dataDir, jti: 'lbgh-jti-fallback-1' };
    const response = await request(built.app).post(SIGN_PATH).set('Authorization', bearer('lbgh-jti-fallback-1')).send(fallbackRequest());
    expect(response.status).toBe(200);
    expect(fhir.requests.length).toBeGreaterThan(0);
    expect(committedAtRequest).toHaveLength(fhir.requests.length);
    expect(committedAtRequest.every((wasCommitted) => wasCommitted)).toBe(true);
    // the cards are still recorded, after the id
    expect(await advisoriesHeld(built)).toBe(response.body.cards.length);
  });

  it('commits the token id before reading a next page, when prefetch was complete but one bundle had more pages', async () => {
    const dataDir = makeTempDataDir();
    const built = await appFor(dataDir);
    watched = { dataDir, jti: 'lbgh-jti-next-page' };
    const paged = signRequest({
      prefetch: {
        ...fullPrefetch,
        observations: searchset([spo2], [{ relation: 'next', url: `${fhir.baseUrl}/Observation?page=2` }]),
      },
      fhirServer: fhir.baseUrl,
      fhirAuthorization,
    });
    const response = await request(built.app).post(SIGN_PATH).set('Authorization', bearer('lbgh-jti-next-page')).send(paged);
    expect(response.status).toBe(200);
    expect(fhir.requests.map((received) => received.url)).toStrictEqual(['/fhir/Observation?page=2']);
    expect(committedAtRequest).toStrictEqual([true]);
  });

  it('sends no FHIR request at all for a token another instance already used, and answers 401', async () => {
    const dataDir = makeTempDataDir();
    const one = await appFor(dataDir);
    const other = await appFor(dataDir);
    const token = bearer('lbgh-jti-fallback-replayed');
    expect((await request(one.app).post(SIGN_PATH).set('Authorization', token).send(signRequest())).status).toBe(200);
    const held = await advisoriesHeld(one);

    const replay = await request(other.app).post(SIGN_PATH).set('Authorization', token).send(fallbackRequest());
    expect(replay.status).toBe(401);
    expect(refusal(other)).toBe('jti-replayed');
    expect(fhir.requests).toStrictEqual([]);
    expect(await advisoriesHeld(other)).toBe(held);
  });
});

describe('edge cases', () => {
  it('keeps one client share per issuer whatever route commits the id', async () => {
    const built = await buildProductionApp({ replayMaxPerClient: 1 });
    const discovery = await request(built.app)
      .get('/cds-services')
      .set('Authorization', `Bearer ${signToken(EHR_ES384, claims('https://cds.larkspur-bay.example/cds-services'))}`);
    expect(discovery.status).toBe(200);
    const hook = await request(built.app).post(SIGN_PATH).set('Authorization', bearer('lbgh-jti-after-discovery')).send(signRequest());
    expect(hook.status).toBe(429);
    expect(built.log.lines().find((line) => line['authRefused'] === 'jti-share-full')?.['iss']).toBe(EHR_ISS);
  });
});
