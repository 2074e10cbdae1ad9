import { describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { replayShareKey } from '../../src/security/jwt-verifier.js';
import { createStoreReplayCache } from '../../src/security/store-replay-cache.js';
import { openTempStore } from '../helpers/temp-store.js';
import { ehrClient, EHR_ISS, NOW, trustOf } from './support/fixtures.js';

const silent = createLogger({ level: 'silent' });
const T0 = NOW.getTime();

describe('createStoreReplayCache', () => {
  it('takes a jti once, refuses it again, and refuses a new one past the client share', async () => {
    const { store } = openTempStore();
    const cache = createStoreReplayCache({ store, maxPerClient: 2, clock: () => NOW, logger: silent });
    const ehr = JSON.stringify([EHR_ISS]);
    // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
    expect(await cache.checkAndRemember(ehr, 'jti-1', T0 + 300_000)).toStrictEqual({ kind: 'fresh' });
    expect(await cache.checkAndRemember(ehr, 'jti-1', T0 + 300_000)).toStrictEqual({ kind: 'replayed' });
    expect(await cache.checkAndRemember(ehr, 'jti-2', T0 + 120_000)).toStrictEqual({ kind: 'fresh' });
    // the share's oldest id expires 120 s from now (arithmetic)
    expect(await cache.checkAndRemember(ehr, 'jti-3', T0 + 300_000)).toStrictEqual({ kind: 'client-full', retryAfterS: 120 });
    expect(await cache.checkAndRemember(JSON.stringify(['https://theatres.larkspur-bay.example']), 'jti-3', T0 + 300_000)).toStrictEqual({
      kind: 'fresh',
    });
  });

  describe('with the commit handed on with the call (deferCommit)', () => {
    const ehr = JSON.stringify([EHR_ISS]);
    const deferred = (store = openTempStore().store, memoryMaxEntries?: number) =>
      createStoreReplayCache({
        store,
        maxPerClient: 2,
        clock: () => NOW,
        logger: silent,
        deferCommit: true,
        ...(memoryMaxEntries === undefined ? {} : { memoryMaxEntries }),
      });
    const pendingOf = (decision: Awaited<ReturnType<ReturnType<typeof deferred>['checkAndRemember']>>) => {
      if (decision.kind !== 'fresh' || decision.pending === undefined) throw new Error(`expected a pending id, got ${decision.kind}`);
      return decision.pending;
    };

    it('refuses an id this process holds at once, before it is committed, and commits it once', async () => {
      const { store } = openTempStore();
      let toldOfReplays = 0;
      const cache = createStoreReplayCache({
        store,
        maxPerClient: 2,
        clock: () => NOW,
        logger: silent,
        deferCommit: true,
        onReplayInMemory: () => {
          toldOfReplays += 1;
        },
      });
      const pending = pendingOf(await cache.checkAndRemember(ehr, 'jti-1', T0 + 300_000));
      // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
      expect(await cache.checkAndRemember(ehr, 'jti-1', T0 + 300_000)).toStrictEqual({ kind: 'replayed' });
      expect(toldOfReplays).toBe(1);
      expect(pending.started()).toBe(false);
      expect(await pending.commit()).toStrictEqual({ kind: 'fresh' });
      expect(await pending.commit()).toStrictEqual({ kind: 'fresh' });
      expect(await store.checkAndRememberJti(ehr, 'jti-1', T0 + 300_000, NOW, 2)).toStrictEqual({ kind: 'replayed' });
    });

    it('answers the store at the commit: an id another process committed first is replayed there', async () => {
      const { store } = openTempStore();
      await store.checkAndRememberJti(ehr, 'jti-1', T0 + 300_000, NOW, 2);
      const pending = pendingOf(await deferred(store).checkAndRemember(ehr, 'jti-1', T0 + 300_000));
      expect(await pending.commitWith([])).toStrictEqual({ decision: { kind: 'replayed' } });
    });

    it('forgets an id the store did not take (share full, store failed), so the token may be tried again', async () => {
      const { store } = openTempStore();
      await store.checkAndRememberJti(ehr, 'held-1', T0 + 120_000, NOW, 2);
      await store.checkAndRememberJti(ehr, 'held-2', T0 + 300_000, NOW, 2);
      const cache = deferred(store);
      const full = pendingOf(await cache.checkAndRemember(ehr, 'jti-3', T0 + 300_000));
      // the share's oldest id expires 120 s from now (arithmetic)
      expect(await full.commit()).toStrictEqual({ kind: 'client-full', retryAfterS: 120 });
      expect((await cache.checkAndRemember(ehr, 'jti-3', T0 + 300_000)).kind).toBe('fresh');

      const failing = deferred({ ...store, checkAndRememberJti: () => Promise.reject(new Error('SQLITE_BUSY')) });
      const failed = pendingOf(await failing.checkAndRemember(ehr, 'jti-4', T0 + 300_000));
      expect(await failed.commit()).toStrictEqual({ kind: 'unavailable' });
      expect((await failing.checkAndRemember(ehr, 'jti-4', T0 + 300_000)).kind).toBe('fresh');
    });

    it('past its memory cap forgets committed ids only, which the store still refuses', async () => {
      const { store } = openTempStore();
      const cache = deferred(store, 1);
      const first = pendingOf(await cache.checkAndRemember(ehr, 'jti-1', T0 + 300_000));
      await first.commit();
      const second = pendingOf(await cache.checkAndRemember(ehr, 'jti-2', T0 + 300_000));
      // jti-1 was forgotten by memory (committed), jti-2 was not (its commit is still to come)
      expect(await pendingOf(await cache.checkAndRemember(ehr, 'jti-1', T0 + 300_000)).commit()).toStrictEqual({ kind: 'replayed' });
      expect(await cache.checkAndRemember(ehr, 'jti-2', T0 + 300_000)).toStrictEqual({ kind: 'replayed' });
      expect(await second.commit()).toStrictEqual({ kind: 'fresh' });
    });
  });

  describe('edge cases', () => {
    it('refuses a share that is not a positive integer', () => {
      const { store } = openTempStore();
      expect(() => createStoreReplayCache({ store, maxPerClient: 0, clock: () => NOW, logger: silent })).toThrow(
        'createStoreReplayCache: maxPerClient must be a positive integer',
      );
    });
  });
});

describe('replayShareKey', () => {
  it('gives each listed tenant its own share, and a client without a tenant list one share whatever it sends', () => {
    const trust = trustOf([ehrClient({ tenants: ['lbgh-wards', 'lbgh-theatres'] }), ehrClient({ iss: 'https://other.larkspur-bay.example' })]);
    const listed = trust.clients.get(EHR_ISS);
    const unlisted = trust.clients.get('https://other.larkspur-bay.example');
    if (listed === undefined || unlisted === undefined) throw new Error('trust fixture');
    expect(replayShareKey(listed, 'lbgh-wards')).toBe(JSON.stringify([EHR_ISS, 'lbgh-wards']));
    expect(replayShareKey(listed, 'lbgh-theatres')).not.toBe(replayShareKey(listed, 'lbgh-wards'));
    expect(replayShareKey(unlisted, 'made-up-1')).toBe(replayShareKey(unlisted, 'made-up-2'));
    expect(replayShareKey(unlisted, undefined)).toBe(JSON.stringify(['https://other.larkspur-bay.example']));
  });
});
