import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { createJwksStore, type JwksEvent, type JwksStoreOptions } from '../../src/security/jwks-store.js';
import { startJwksServer, type JwksServer } from './support/jwks-server.js';
import { makeKey } from './support/keys.js';

const ISS = 'https://ehr.larkspur-bay.example';
const OLD = makeKey('ES384', 'lbgh-2025-01');
const NEW = makeKey('ES384', 'lbgh-2025-03');

let server: JwksServer;
let now: number;
let events: JwksEvent[];

function store(overrides: Partial<JwksStoreOptions> = {}) {
  return createJwksStore({
    fetch: globalThis.fetch,
    clock: () => new Date(now),
    timeoutMs: 1000,
    maxBytes: 65_536,
    requireHttps: false,
    ttlMs: 300_000, // project default OXYGEN_CHECKER_JWKS_CACHE_TTL_S = 300
    minRefreshIntervalMs: 60_000, // project default OXYGEN_CHECKER_JWKS_REFRESH_MIN_INTERVAL_S = 60
    onEvent: (event) => events.push(event),
    ...overrides,
  });
}

const kidsOf = (lookup: Awaited<ReturnType<ReturnType<typeof store>['findKeys']>>) =>
  lookup.kind === 'found' ? lookup.keys.map((k) => k.kid) : lookup.kind;

beforeAll(async () => {
  server = await startJwksServer();
});

beforeEach(() => {
  now = Date.parse('2025-03-14T09:00:00Z');
  events = [];
  server.hits.length = 0;
  server.setKeys([OLD.publicJwk]);
});

afterAll(async () => {
  await server.close();
});

describe('createJwksStore', () => {
  it('fetches a set once and serves many lookups from the cache', async () => {
    const keys = store();
    for (let i = 0; i < 5; i += 1) {
      expect(kidsOf(await keys.findKeys(server.url, OLD.kid, ISS))).toStrictEqual([OLD.kid]);
    }
    expect(server.hits).toStrictEqual(['/jwks.json']);
    expect(events).toStrictEqual([{ kind: 'fetched', issuer: ISS, keyCount: 1, skipped: 0 }]);
  });

  it('fetches again once the cache entry is older than its TTL', async () => {
    const keys = store();
    await keys.findKeys(server.url, OLD.kid, ISS);
    now += 299_999;
    await keys.findKeys(server.url, OLD.kid, ISS);
    expect(server.hits.length).toBe(1);
    now += 1;
    await keys.findKeys(server.url, OLD.kid, ISS);
    expect(server.hits.length).toBe(2);
  });

  it('refreshes once for an unknown kid, and finds a key added since (rotation)', async () => {
    const keys = store();
    await keys.findKeys(server.url, OLD.kid, ISS);
    server.setKeys([OLD.publicJwk, NEW.publicJwk]);
    expect(kidsOf(await keys.findKeys(server.url, NEW.kid, ISS))).toStrictEqual([NEW.kid]);
    expect(server.hits.length).toBe(2);
  });

  it('limits unknown-kid refreshes to one per interval per issuer', async () => {
    const keys = store();
    await keys.findKeys(server.url, OLD.kid, ISS);
    now += 60_000;
    expect(await keys.findKeys(server.url, 'made-up-1', ISS)).toStrictEqual({ kind: 'unknown-kid' });
    expect(await keys.findKeys(server.url, 'made-up-2', ISS)).toStrictEqual({ kind: 'unknown-kid' });
    expect(await keys.findKeys(server.url, 'made-up-3', ISS)).toStrictEqual({ kind: 'unknown-kid' });
    expect(server.hits.length).toBe(2);
    now += 60_000;
    expect(await keys.findKeys(server.url, 'made-up-4', ISS)).toStrictEqual({ kind: 'unknown-kid' });
    expect(server.hits.length).toBe(3);
  });

  it('stops finding a key removed from the set once the set is fetched again', async () => {
    const keys = store();
    server.setKeys([OLD.publicJwk, NEW.publicJwk]);
    expect(kidsOf(await keys.findKeys(server.url, OLD.kid, ISS))).toStrictEqual([OLD.kid]);
    server.setKeys([NEW.publicJwk]);
    now += 300_000;
    expect(await keys.findKeys(server.url, OLD.kid, ISS)).toStrictEqual({ kind: 'unknown-kid' });
    expect(kidsOf(await keys.findKeys(server.url, NEW.kid, ISS))).toStrictEqual([NEW.kid]);
  });

  it('keeps the keys it has when a refresh fails', async () => {
    const keys = store();
    await keys.findKeys(server.url, OLD.kid, ISS);
    server.setReply(() => ({ status: 503, body: '' }));
    now += 300_000;
    expect(kidsOf(await keys.findKeys(server.url, OLD.kid, ISS))).toStrictEqual([OLD.kid]);
    expect(events.at(-1)).toStrictEqual({ kind: 'fetch-failed', issuer: ISS, failure: 'http-status' });
  });

  describe('edge cases', () => {
    it('reports the keys unavailable when the first fetch fails, and waits before trying again', async () => {
      server.setReply(() => ({ status: 500, body: '' }));
      const keys = store();
      expect(await keys.findKeys(server.url, OLD.kid, ISS)).toStrictEqual({ kind: 'unavailable', failure: 'http-status' });
      expect(await keys.findKeys(server.url, OLD.kid, ISS)).toStrictEqual({ kind: 'unavailable', failure: 'http-status' });
      expect(server.hits.length).toBe(1);
      server.setKeys([OLD.publicJwk]);
      now += 60_000;
      expect(kidsOf(await keys.findKeys(server.url, OLD.kid, ISS))).toStrictEqual([OLD.kid]);
    });

    it('makes one request for concurrent lookups on a cold cache', async () => {
      const keys = store();
      const all = await Promise.all([1, 2, 3].map(() => keys.findKeys(server.url, OLD.kid, ISS)));
      expect(all.map(kidsOf)).toStrictEqual([[OLD.kid], [OLD.kid], [OLD.kid]]);
      expect(server.hits.length).toBe(1);
    });

    it('never fetches over http when https is required', async () => {
      const keys = store({ requireHttps: true });
      expect(await keys.findKeys(server.url, OLD.kid, ISS)).toStrictEqual({ kind: 'unavailable', failure: 'not-https' });
      expect(server.hits).toStrictEqual([]);
    });
  });
});
