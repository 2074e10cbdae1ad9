import { describe, expect, it } from 'vitest';
import type { TokenUse } from '../../src/store/store.js';
import { advisory, card, EHR } from './support/fixtures.js';
import { STORE_KINDS } from './support/store-kinds.js';
import { useStores } from './support/use-stores.js';

const T0 = Date.parse('2026-03-14T09:00:00Z');

/** A token id of the invented Larkspur Bay EHR, held 5 minutes from T0 (a 5-minute token: common practice). */
function tokenUse(jti: string, overrides: Partial<TokenUse> = {}): TokenUse {
  return { clientKey: EHR.iss, jti, expiresAt: T0 + 300_000, now: new Date(T0), maxPerClient: 10, ...overrides };
}

/**
 * One hook call's token id and cards in one transaction: the cards are kept only when the id is
 * fresh, a replayed id (from this store handle or another on the same place, as another instance
 * would be) or a full share keeps nothing, and a failure of either part writes neither.
 */
describe.each(STORE_KINDS)('rememberJtiAndRecordAdvisories on the $name store', (kind) => {
  const stores = useStores(kind);

  it('remembers a fresh id and records the cards with it', async () => {
    const store = await stores.fresh();
    expect(await store.rememberJtiAndRecordAdvisories(tokenUse('jti-1'), [advisory(1), advisory(2)])).toStrictEqual({
      kind: 'fresh',
    });
    expect((await store.getAdvisory(card(1)))?.summary).toBe(advisory(1).summary);
    expect((await store.getAdvisory(card(2)))?.summary).toBe(advisory(2).summary);
    // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
    expect(await store.checkAndRememberJti(EHR.iss, 'jti-1', T0 + 300_000, new Date(T0 + 1), 10)).toStrictEqual({
      kind: 'replayed',
    });
  });

  it('remembers the id alone when the call has no cards', async () => {
    const store = await stores.fresh();
    expect(await store.rememberJtiAndRecordAdvisories(tokenUse('jti-1'), [])).toStrictEqual({ kind: 'fresh' });
    expect(await store.isEmpty()).toBe(true);
    expect(await store.rememberJtiAndRecordAdvisories(tokenUse('jti-1'), [])).toStrictEqual({ kind: 'replayed' });
  });

  it('keeps no card of a call whose id another handle on the same store committed first', async () => {
    const place = await stores.place();
    const first = await stores.at(place);
    const second = await stores.at(place);
    expect(await first.rememberJtiAndRecordAdvisories(tokenUse('jti-1'), [advisory(1)])).toStrictEqual({ kind: 'fresh' });
    expect(await second.rememberJtiAndRecordAdvisories(tokenUse('jti-1'), [advisory(2)])).toStrictEqual({
      kind: 'replayed',
    });
    expect(await second.getAdvisory(card(2))).toBeUndefined();
    expect(await second.getAdvisory(card(1))).toBeDefined();
  });

  it('tells exactly one of two handles committing the same id at once that it is fresh, and keeps only its cards', async () => {
    const place = await stores.place();
    const [a, b] = [await stores.at(place), await stores.at(place)];
    const answers = await Promise.all([
      a.rememberJtiAndRecordAdvisories(tokenUse('jti-1'), [advisory(1)]),
      b.rememberJtiAndRecordAdvisories(tokenUse('jti-1'), [advisory(2)]),
    ]);
    expect(answers.map((answer) => answer.kind).sort()).toStrictEqual(['fresh', 'replayed']);
    const kept = [await a.getAdvisory(card(1)), await a.getAdvisory(card(2))].filter((item) => item !== undefined);
    expect(kept.map((item) => item.cardUuid)).toStrictEqual([answers[0]?.kind === 'fresh' ? card(1) : card(2)]);
  });

  it('refuses a client at its share and keeps none of the cards', async () => {
    const store = await stores.fresh();
    await store.checkAndRememberJti(EHR.iss, 'held-1', T0 + 300_000, new Date(T0), 1);
    const refused = await store.rememberJtiAndRecordAdvisories(tokenUse('jti-2', { maxPerClient: 1 }), [advisory(1)]);
    // the one held id expires 300 s after T0
    expect(refused).toStrictEqual({ kind: 'client-full', retryAfterS: 300 });
    expect(await store.isEmpty()).toBe(true);
  });

  describe('edge cases', () => {
    it('writes neither the id nor any card when a card cannot be stored', async () => {
      const store = await stores.fresh();
      await expect(
        store.rememberJtiAndRecordAdvisories(tokenUse('jti-1'), [advisory(1), advisory(2, { issuedAt: 'not a time' })]),
      ).rejects.toThrow();
      expect(await store.isEmpty()).toBe(true);
      // the id was not burnt: the same token may be committed once the call is retried
      expect(await store.rememberJtiAndRecordAdvisories(tokenUse('jti-1'), [advisory(1)])).toStrictEqual({ kind: 'fresh' });
    });

    it('refuses arguments the replay check refuses, writing nothing', async () => {
      const store = await stores.fresh();
      await expect(
        store.rememberJtiAndRecordAdvisories(tokenUse('jti-1', { maxPerClient: 0 }), [advisory(1)]),
      ).rejects.toThrow(RangeError);
      expect(await store.isEmpty()).toBe(true);
    });
  });
});
