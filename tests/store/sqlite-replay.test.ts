import { describe, expect, it } from 'vitest';
import { EHR, THEATRES } from './support/fixtures.js';
import { STORE_KINDS } from './support/store-kinds.js';
import { useStores } from './support/use-stores.js';

const T0 = Date.parse('2026-03-14T09:00:00Z');
const at = (ms: number): Date => new Date(T0 + ms);
describe.each(STORE_KINDS)('checkAndRememberJti on the $name store', (kind) => {
  const trackedStore = useStores(kind).fresh;

  it('accepts a jti once and refuses it while its token lives', async () => {
    // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
    const store = await trackedStore();
    expect(await store.checkAndRememberJti(EHR.iss, 'jti-1', T0 + 300_000, at(0), 10)).toStrictEqual({ kind: 'fresh' });
    expect(await store.checkAndRememberJti(EHR.iss, 'jti-1', T0 + 300_000, at(299_999), 10)).toStrictEqual({
      kind: 'replayed',
    });
    expect(await store.checkAndRememberJti(EHR.iss, 'jti-2', T0 + 300_000, at(1), 10)).toStrictEqual({ kind: 'fresh' });
  });

  it("keeps one client's ids apart from another's", async () => {
    const store = await trackedStore();
    await store.checkAndRememberJti(EHR.iss, 'shared-id', T0 + 300_000, at(0), 10);
    expect(await store.checkAndRememberJti(THEATRES.iss, 'shared-id', T0 + 300_000, at(0), 10)).toStrictEqual({
      kind: 'fresh',
    });
  });

  it('lets an id be remembered again once its token has expired', async () => {
    const store = await trackedStore();
    await store.checkAndRememberJti(EHR.iss, 'jti-1', T0 + 1000, at(0), 10);
    // RFC 7519 §4.1.4: a token must not be accepted on or after its exp; the id has nothing left to guard
    expect(await store.checkAndRememberJti(EHR.iss, 'jti-1', T0 + 301_000, at(1000), 10)).toStrictEqual({
      kind: 'fresh',
    });
    expect(await store.checkAndRememberJti(EHR.iss, 'jti-1', T0 + 301_000, at(2000), 10)).toStrictEqual({
      kind: 'replayed',
    });
  });

  it('refuses a client that holds its whole share, saying when its oldest id expires', async () => {
    const store = await trackedStore();
    await store.checkAndRememberJti(THEATRES.iss, 'a', T0 + 90_500, at(0), 2);
    await store.checkAndRememberJti(THEATRES.iss, 'b', T0 + 300_000, at(0), 2);
    // oldest held id expires 90.5 s after now: Retry-After rounds up to whole seconds (RFC 9110 §10.2.3)
    expect(await store.checkAndRememberJti(THEATRES.iss, 'c', T0 + 300_000, at(0), 2)).toStrictEqual({
      kind: 'client-full',
      retryAfterS: 91,
    });
    // nothing was forgotten to make room
    expect(await store.checkAndRememberJti(THEATRES.iss, 'a', T0 + 90_500, at(1), 2)).toStrictEqual({ kind: 'replayed' });
    // every other client is untouched
    expect(await store.checkAndRememberJti(EHR.iss, 'c', T0 + 300_000, at(1), 2)).toStrictEqual({ kind: 'fresh' });
    // once the oldest expires the client has room again
    expect(await store.checkAndRememberJti(THEATRES.iss, 'c', T0 + 300_000, at(90_500), 2)).toStrictEqual({
      kind: 'fresh',
    });
  });

  it('answers at least one second when the oldest id is about to expire', async () => {
    const store = await trackedStore();
    await store.checkAndRememberJti(THEATRES.iss, 'a', T0 + 10, at(0), 1);
    expect(await store.checkAndRememberJti(THEATRES.iss, 'b', T0 + 300_000, at(9), 1)).toStrictEqual({
      kind: 'client-full',
      retryAfterS: 1,
    });
  });

  it('tells exactly one of two concurrent calls with the same id that it is fresh', async () => {
    const store = await trackedStore();
    const answers = await Promise.all([
      store.checkAndRememberJti(EHR.iss, 'x', T0 + 1000, at(0), 10),
      store.checkAndRememberJti(EHR.iss, 'x', T0 + 1000, at(0), 10),
    ]);
    expect(answers.map((a) => a.kind).sort()).toStrictEqual(['fresh', 'replayed']);
  });

  it('fills a share once across concurrent calls: only as many new ids as the share are fresh', async () => {
    const store = await trackedStore();
    const answers = await Promise.all(
      ['a', 'b', 'c', 'd'].map((id) => store.checkAndRememberJti(THEATRES.iss, id, T0 + 300_000, at(0), 2)),
    );
    expect(answers.map((a) => a.kind)).toStrictEqual(['fresh', 'fresh', 'client-full', 'client-full']);
  });

  it("counts a client's live ids only, whichever way expired ones were removed", async () => {
    const store = await trackedStore();
    // three short-lived ids fill a share of 3
    for (const id of ['a', 'b', 'c']) {
      await store.checkAndRememberJti(THEATRES.iss, id, T0 + 1000, at(0), 3);
    }
    expect((await store.checkAndRememberJti(THEATRES.iss, 'd', T0 + 600_000, at(999), 3)).kind).toBe('client-full');
    // another client's calls sweep expired ids a few at a time; a purge removes the rest
    await store.checkAndRememberJti(EHR.iss, 'sweeper', T0 + 600_000, at(2000), 3);
    await store.purge(new Date('2026-01-01T00:00:00Z'), at(2000));
    for (const id of ['d', 'e', 'f']) {
      expect(await store.checkAndRememberJti(THEATRES.iss, id, T0 + 600_000, at(2000), 3)).toStrictEqual({ kind: 'fresh' });
    }
    expect(await store.checkAndRememberJti(THEATRES.iss, 'g', T0 + 600_000, at(2000), 3)).toStrictEqual({
      kind: 'client-full',
      retryAfterS: 598,
    });
  });

  it('sweeps the oldest expired ids, eight on a call, and never a live one', async () => {
    const store = await trackedStore();
    // ten ids expiring 100 ms apart, and one that lives on
    for (let i = 0; i < 10; i += 1) {
      await store.checkAndRememberJti(THEATRES.iss, `short-${String(i)}`, T0 + 1000 + i * 100, at(0), 20);
    }
    await store.checkAndRememberJti(THEATRES.iss, 'live', T0 + 600_000, at(0), 20);
    // all ten have expired by this call of the same client: it sweeps eight of them, the oldest
    await store.checkAndRememberJti(THEATRES.iss, 'sweeper', T0 + 600_000, at(5000), 20);
    // left: the ids expiring at +1800 and +1900 ms; a purge at +1800 ms finds only the first
    expect(await store.purge(new Date('2026-01-01T00:00:00Z'), at(1800))).toStrictEqual({
      advisories: 0,
      feedback: 0,
      replayIds: 1,
    });
    expect(await store.purge(new Date('2026-01-01T00:00:00Z'), at(5000))).toStrictEqual({
      advisories: 0,
      feedback: 0,
      replayIds: 1,
    });
    expect(await store.checkAndRememberJti(THEATRES.iss, 'live', T0 + 600_000, at(5000), 20)).toStrictEqual({
      kind: 'replayed',
    });
  });

  it('purges expired ids and keeps live ones', async () => {
    const store = await trackedStore();
    await store.checkAndRememberJti(EHR.iss, 'old', T0 + 1000, at(0), 10);
    await store.checkAndRememberJti(EHR.iss, 'live', T0 + 600_000, at(0), 10);
    const result = await store.purge(new Date('2026-01-01T00:00:00Z'), at(5000));
    expect(result).toStrictEqual({ advisories: 0, feedback: 0, replayIds: 1 });
    expect(await store.checkAndRememberJti(EHR.iss, 'live', T0 + 600_000, at(5000), 10)).toStrictEqual({
      kind: 'replayed',
    });
  });

  describe('edge cases', () => {
    it.each([0, -1, 1.5])('refuses a share of %d ids as a programming error', async (max) => {
      const store = await trackedStore();
      await expect(store.checkAndRememberJti(EHR.iss, 'a', T0 + 1000, at(0), max)).rejects.toThrow(RangeError);
    });
  });
});
