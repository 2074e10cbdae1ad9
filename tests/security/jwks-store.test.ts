import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import {
  createJwksStore,
  DEFAULT_KID_REFRESHES_PER_INTERVAL,
  MAX_ABSENT_KIDS,
  type JwksEvent,
  type JwksStoreOptions,
} from '../../src/security/jwks-store.js';
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

  it('accepts a rotated key sent just after a junk kid, within the same interval', async () => {
    const keys = store();
    await keys.findKeys(server.url, OLD.kid, ISS);
    now += 1_000;
    expect(await keys.findKeys(server.url, 'junk-kid', ISS)).toStrictEqual({ kind: 'unknown-kid' });
    // The client rotates (CDS Hooks 2.0 §Trusting CDS Clients): the new key is published, then used.
    server.setKeys([OLD.publicJwk, NEW.publicJwk]);
    now += 1_000;
    expect(kidsOf(await keys.findKeys(server.url, NEW.kid, ISS))).toStrictEqual([NEW.kid]);
    expect(server.hits.length).toBe(3);
  });

  it('remembers a kid found absent, so repeating it fetches nothing until the interval ends', async () => {
    const keys = store();
    await keys.findKeys(server.url, OLD.kid, ISS);
    for (let i = 0; i < 20; i += 1) {
      expect(await keys.findKeys(server.url, 'junk-kid', ISS)).toStrictEqual({ kind: 'unknown-kid' });
    }
    expect(server.hits.length).toBe(2);
    // Published after all (a client that used its key a moment early): found once the interval is over.
    server.setKeys([OLD.publicJwk, { ...NEW.publicJwk, kid: 'junk-kid' }]);
    now += 60_000;
    expect(kidsOf(await keys.findKeys(server.url, 'junk-kid', ISS))).toStrictEqual(['junk-kid']);
  });

  it('bounds the fetches a flood of made-up kids can cause, one after another or all at once', async () => {
    const keys = store();
    await keys.findKeys(server.url, OLD.kid, ISS);
    for (let i = 0; i < 200; i += 1) {
      expect(await keys.findKeys(server.url, `made-up-${i}`, ISS)).toStrictEqual({ kind: 'unknown-kid' });
    }
    const burst = await Promise.all(
      Array.from({ length: 200 }, (_, i) => keys.findKeys(server.url, `burst-${i}`, ISS)),
    );
    expect(burst.every((lookup) => lookup.kind === 'unknown-kid')).toBe(true);
    expect(server.hits.length).toBeLessThanOrEqual(1 + DEFAULT_KID_REFRESHES_PER_INTERVAL);
    // The known key still works throughout, with no fetch of its own.
    expect(kidsOf(await keys.findKeys(server.url, OLD.kid, ISS))).toStrictEqual([OLD.kid]);
    expect(server.hits.length).toBeLessThanOrEqual(1 + DEFAULT_KID_REFRESHES_PER_INTERVAL);
    // The allowance is per interval: the next one brings a fresh allowance, no more.
    now += 60_000;
    for (let i = 0; i < 200; i += 1) {
      await keys.findKeys(server.url, `later-${i}`, ISS);
    }
    expect(server.hits.length).toBeLessThanOrEqual(1 + 2 * DEFAULT_KID_REFRESHES_PER_INTERVAL);
  });

  it('keeps one issuer’s flood from using up another issuer’s refreshes', async () => {
    const keys = store({ maxKidRefreshesPerInterval: 2 });
    const other = 'https://theatres.larkspur-bay.example';
    await keys.findKeys(server.url, OLD.kid, ISS);
    for (let i = 0; i < 10; i += 1) {
      await keys.findKeys(server.url, `made-up-${i}`, ISS);
    }
    server.setKeys([OLD.publicJwk, NEW.publicJwk]);
    expect(kidsOf(await keys.findKeys(server.url, NEW.kid, other))).toStrictEqual([NEW.kid]);
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

    it('remembers at most MAX_ABSENT_KIDS absent kids per URL, forgetting the oldest first', async () => {
      const keys = store();
      await keys.findKeys(server.url, OLD.kid, ISS);
      now += 1;
      // One fetch looks for all of them at once, and finds none.
      await Promise.all(
        Array.from({ length: MAX_ABSENT_KIDS + 1 }, (_, i) => keys.findKeys(server.url, `junk-${i}`, ISS)),
      );
      const hits = server.hits.length;
      await keys.findKeys(server.url, `junk-${MAX_ABSENT_KIDS}`, ISS);
      expect(server.hits.length).toBe(hits);
      await keys.findKeys(server.url, 'junk-0', ISS);
      expect(server.hits.length).toBe(hits + 1);
    });

    it('does not count a kid as absent when the fetch that should have looked for it failed', async () => {
      const keys = store();
      await keys.findKeys(server.url, OLD.kid, ISS);
      server.setReply(() => ({ status: 503, body: '' }));
      expect(await keys.findKeys(server.url, NEW.kid, ISS)).toStrictEqual({ kind: 'unknown-kid' });
      server.setKeys([OLD.publicJwk, NEW.publicJwk]);
      now += 1_000;
      expect(kidsOf(await keys.findKeys(server.url, NEW.kid, ISS))).toStrictEqual([NEW.kid]);
    });

    it('never fetches over http when https is required', async () => {
      const keys = store({ requireHttps: true });
      expect(await keys.findKeys(server.url, OLD.kid, ISS)).toStrictEqual({ kind: 'unavailable', failure: 'not-https' });
      expect(server.hits).toStrictEqual([]);
    });
  });
});
