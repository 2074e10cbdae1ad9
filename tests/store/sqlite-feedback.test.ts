import { describe, expect, it } from 'vitest';
import { feedbackDedupKey, secondsToNextUtcDay } from '../../src/store/sqlite-feedback.js';
import type { FeedbackWrite, Store } from '../../src/store/store.js';
import {
  accepted,
  advisory,
  card,
  EHR,
  EHR_NORTH,
  GENEROUS,
  overridden,
  suggestion,
  THEATRES,
} from './support/fixtures.js';
import { STORE_KINDS } from './support/store-kinds.js';
import { useStores } from './support/use-stores.js';

const RECEIVED = new Date('2026-03-14T10:00:00Z');

function recorded(write: FeedbackWrite): Extract<FeedbackWrite, { kind: 'recorded' }> {
  if (write.kind !== 'recorded') {
    throw new Error(`expected the feedback to be recorded, got ${write.kind}`);
  }
  return write;
}

describe.each(STORE_KINDS)('feedback on the $name store', (kind) => {
  const stores = useStores(kind);

  async function storeWithCards(...records: Parameters<Store['recordAdvisories']>[0]): Promise<Store> {
    const store = await stores.fresh();
    await store.recordAdvisories(records);
    return store;
  }

  describe('recordFeedback: repeats and changes', () => {
    it('keeps an exact repeat once and answers it as a duplicate with the record held', async () => {
      // CDS Hooks 2.0 §Feedback: feedback may arrive repeatedly for the same card; be idempotent
      const store = await storeWithCards(advisory(1));
      const first = recorded(await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z')], RECEIVED, GENEROUS));
      const later = new Date('2026-03-14T10:05:00Z');
      const again = recorded(await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z')], later, GENEROUS));

      expect(first.duplicates).toBe(0);
      expect(again.duplicates).toBe(1);
      expect(again.records).toStrictEqual(first.records);
      expect((await store.getAdvisory(card(1)))?.feedback).toHaveLength(1);
    });

    it('treats the accepted suggestions as a set: the same ids in another order are a repeat', async () => {
      const store = await storeWithCards(advisory(1, { suggestionUuids: [suggestion(1), suggestion(2)] }));
      const ids = (order: string[]) => accepted(1, '2026-03-14T09:41:00Z', { acceptedSuggestionIds: order });
      await store.recordFeedback(EHR, [ids([suggestion(1), suggestion(2)])], RECEIVED, GENEROUS);
      const again = recorded(await store.recordFeedback(EHR, [ids([suggestion(2), suggestion(1)])], RECEIVED, GENEROUS));
      expect(again.duplicates).toBe(1);
    });

    it('counts a repeat inside one request once', async () => {
      const store = await storeWithCards(advisory(1));
      const item = accepted(1, '2026-03-14T09:41:00Z');
      const write = recorded(await store.recordFeedback(EHR, [item, item], RECEIVED, GENEROUS));
      expect(write.duplicates).toBe(1);
      expect(write.records[0]?.id).toBe(write.records[1]?.id);
      expect((await store.getAdvisory(card(1)))?.feedback).toHaveLength(1);
    });

    const before = overridden(1, '2026-03-14T09:41:00Z', 'patient-specific-target');
    it.each([
      ['outcome', accepted(1, '2026-03-14T09:41:00Z')],
      ['override reason code', overridden(1, '2026-03-14T09:41:00Z', 'weaning-in-progress')],
      [
        'override reason system',
        overridden(1, '2026-03-14T09:41:00Z', 'patient-specific-target', {
          overrideReason: { system: 'https://ehr.larkspur-bay.example/reasons', code: 'patient-specific-target' },
        }),
      ],
      ['accepted suggestions', overridden(1, '2026-03-14T09:41:00Z', 'patient-specific-target', { acceptedSuggestionIds: [suggestion(1)] })],
      ['outcome time', overridden(1, '2026-03-14T09:42:00Z', 'patient-specific-target')],
    ])('keeps a changed %s as a new record beside the old one', async (_what, changed) => {
      // Issue 7: a changed outcome or override reason for the same card is a new record, not swallowed
      const store = await storeWithCards(advisory(1));
      await store.recordFeedback(EHR, [before], RECEIVED, GENEROUS);
      const write = recorded(await store.recordFeedback(EHR, [changed], RECEIVED, GENEROUS));
      expect(write.duplicates).toBe(0);
      expect((await store.getAdvisory(card(1)))?.feedback).toHaveLength(2);
    });

    it('gives each record its own random id and the receipt time passed in', async () => {
      const store = await storeWithCards(advisory(1), advisory(2));
      const write = recorded(
        await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z'), accepted(2, '2026-03-14T09:41:00Z')], RECEIVED, GENEROUS),
      );
      const [one, two] = write.records;
      expect(one?.id).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
      expect(one?.id).not.toBe(two?.id);
      expect(write.records.map((r) => r.receivedAt)).toStrictEqual([RECEIVED.toISOString(), RECEIVED.toISOString()]);
    });
  });

  describe('recordFeedback: cards this service did not issue to the client', () => {
    it.each([
      ['a card never issued', THEATRES, accepted(7, '2026-03-14T09:41:00Z')],
      ['a card issued to another client', THEATRES, accepted(1, '2026-03-14T09:41:00Z')],
      ['a card issued to another tenant of the same issuer', EHR_NORTH, accepted(1, '2026-03-14T09:41:00Z')],
      ['a card issued by another service', EHR, accepted(1, '2026-03-14T09:41:00Z', { serviceId: 'oxygen-order-select' })],
    ])('keeps feedback on %s, flagged, and out of the advisory', async (_what, client, item) => {
      const store = await storeWithCards(advisory(1));
      const write = recorded(await store.recordFeedback(client, [item], RECEIVED, GENEROUS));
      expect(write.records[0]?.knownCard).toBe(false);

      const unmatched = await store.listUnmatchedFeedback(10, 0);
      expect(unmatched.total).toBe(1);
      expect(unmatched.items[0]).toMatchObject({ cardUuid: item.cardUuid, client, knownCard: false });
      expect((await store.getAdvisory(card(1)))?.feedback).toStrictEqual([]);
      expect((await store.listAdvisories({ outcome: 'none', limit: 10, offset: 0 })).total).toBe(1);
      expect((await store.summarise({}))[0]).toMatchObject({ fired: 1, accepted: 0, overridden: 0, noFeedback: 1 });
    });

    it("never overwrites the issuing client's feedback, even with a later outcome", async () => {
      const store = await storeWithCards(advisory(1));
      await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z')], RECEIVED, GENEROUS);
      await store.recordFeedback(THEATRES, [overridden(1, '2026-03-14T09:59:00Z')], RECEIVED, GENEROUS);

      const item = (await store.listAdvisories({ limit: 10, offset: 0 })).items[0];
      expect(item).toMatchObject({ latestOutcome: 'accepted', feedbackCount: 1 });
      expect((await store.getAdvisory(card(1)))?.feedback.map((f) => f.client)).toStrictEqual([EHR]);
    });

    it('lists unmatched feedback newest received first, paged', async () => {
      const store = await storeWithCards();
      for (const [n, at] of [
        [1, '2026-03-14T10:00:00Z'],
        [2, '2026-03-14T10:01:00Z'],
        [3, '2026-03-14T10:02:00Z'],
      ] as const) {
        await store.recordFeedback(THEATRES, [accepted(n, '2026-03-14T09:00:00Z')], new Date(at), GENEROUS);
      }
      const page = await store.listUnmatchedFeedback(2, 0);
      expect(page.items.map((f) => f.cardUuid)).toStrictEqual([card(3), card(2)]);
      expect(page.total).toBe(3);
      expect((await store.listUnmatchedFeedback(2, 2)).items.map((f) => f.cardUuid)).toStrictEqual([card(1)]);
    });
  });

  describe('recordFeedback: the daily quota per client', () => {
    const limits = { maxRecordsPerClientPerDay: 3 };

    it('writes nothing from a request that would pass the quota, and says when the day turns', async () => {
      const store = await storeWithCards(advisory(1), advisory(2), advisory(3), advisory(4));
      await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z'), accepted(2, '2026-03-14T09:41:00Z')], RECEIVED, limits);
      const refused = await store.recordFeedback(
        EHR,
        [accepted(3, '2026-03-14T09:41:00Z'), accepted(4, '2026-03-14T09:41:00Z')],
        new Date('2026-03-14T22:00:00Z'),
        limits,
      );
      // 22:00Z to the next UTC midnight is 2 h = 7200 s
      expect(refused).toStrictEqual({ kind: 'quota-exceeded', limit: 3, retryAfterS: 7200 });
      expect((await store.getAdvisory(card(3)))?.feedback).toStrictEqual([]);
      // one more still fits
      expect((await store.recordFeedback(EHR, [accepted(3, '2026-03-14T09:41:00Z')], RECEIVED, limits)).kind).toBe('recorded');
    });

    it('leaves other clients, and other tenants of the same issuer, their whole quota', async () => {
      const store = await storeWithCards(advisory(1));
      const flood = [1, 2, 3].map((n) => accepted(100 + n, '2026-03-14T09:41:00Z'));
      expect((await store.recordFeedback(THEATRES, flood, RECEIVED, limits)).kind).toBe('recorded');
      expect((await store.recordFeedback(THEATRES, [accepted(200, '2026-03-14T09:41:00Z')], RECEIVED, limits)).kind).toBe(
        'quota-exceeded',
      );

      const own = await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z')], RECEIVED, limits);
      expect(recorded(own).records[0]?.knownCard).toBe(true);
      const tenant = await store.recordFeedback(EHR_NORTH, flood, RECEIVED, limits);
      expect(recorded(tenant).records).toHaveLength(3);
      expect((await store.getAdvisory(card(1)))?.feedback).toHaveLength(1);
    });

    it('starts a fresh quota at UTC midnight', async () => {
      const store = await storeWithCards();
      const items = [1, 2, 3].map((n) => accepted(n, '2026-03-14T09:41:00Z'));
      await store.recordFeedback(THEATRES, items, new Date('2026-03-14T23:59:59Z'), limits);
      const next = await store.recordFeedback(
        THEATRES,
        [accepted(4, '2026-03-14T09:41:00Z')],
        new Date('2026-03-15T00:00:00Z'),
        limits,
      );
      expect(next.kind).toBe('recorded');
    });

    it('counts an earlier request of the same commit: of two concurrent requests that together pass the quota, the second is refused', async () => {
      // Both are asked for in one event-loop turn, so they share one commit (group-commit.ts); the
      // second must still see the first's records when it counts the day's quota.
      const store = await storeWithCards(advisory(1), advisory(2), advisory(3), advisory(4));
      const [first, second] = await Promise.all([
        store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z'), accepted(2, '2026-03-14T09:41:00Z')], RECEIVED, limits),
        store.recordFeedback(EHR, [accepted(3, '2026-03-14T09:41:00Z'), accepted(4, '2026-03-14T09:41:00Z')], RECEIVED, limits),
      ]);
      expect(first?.kind).toBe('recorded');
      // 10:00Z to the next UTC midnight is 14 h = 50,400 s
      expect(second).toStrictEqual({ kind: 'quota-exceeded', limit: 3, retryAfterS: 50_400 });
      expect((await store.getAdvisory(card(2)))?.feedback).toHaveLength(1);
      expect((await store.getAdvisory(card(3)))?.feedback).toStrictEqual([]);
    });

    it('answers a repeat asked for in the same commit as its first copy as a duplicate of it', async () => {
      const store = await storeWithCards(advisory(1));
      const item = accepted(1, '2026-03-14T09:41:00Z');
      const [first, again] = await Promise.all([
        store.recordFeedback(EHR, [item], RECEIVED, limits),
        store.recordFeedback(EHR, [item], RECEIVED, limits),
      ]);
      expect(recorded(first).duplicates).toBe(0);
      expect(recorded(again).duplicates).toBe(1);
      expect(recorded(again).records).toStrictEqual(recorded(first).records);
      expect((await store.getAdvisory(card(1)))?.feedback).toHaveLength(1);
    });

    it('still answers a retry of records already held once the quota is used up', async () => {
      const store = await storeWithCards();
      const items = [1, 2, 3].map((n) => accepted(n, '2026-03-14T09:41:00Z'));
      await store.recordFeedback(THEATRES, items, RECEIVED, limits);
      const retry = recorded(await store.recordFeedback(THEATRES, items, RECEIVED, limits));
      expect(retry.duplicates).toBe(3);
    });
  });

  describe('recordFeedback: edge cases', () => {
    it('answers an empty request as recorded with nothing in it', async () => {
      const store = await storeWithCards(advisory(1));
      expect(await store.recordFeedback(EHR, [], RECEIVED, { maxRecordsPerClientPerDay: 0 })).toStrictEqual({
        kind: 'recorded',
        records: [],
        duplicates: 0,
      });
    });

    it('writes none of a request when one item cannot be stored', async () => {
      const store = await storeWithCards(advisory(1), advisory(2));
      await expect(
        store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z'), accepted(2, 'yesterday teatime')], RECEIVED, GENEROUS),
      ).rejects.toThrow(/outcomeTimestamp/);
      expect((await store.getAdvisory(card(1)))?.feedback).toStrictEqual([]);
    });

    it('refuses only the request that cannot be stored when others share its commit', async () => {
      const store = await storeWithCards(advisory(1), advisory(2), advisory(3));
      const [before, broken, after] = await Promise.allSettled([
        store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z')], RECEIVED, GENEROUS),
        store.recordFeedback(EHR, [accepted(2, '2026-03-14T09:41:00Z'), accepted(3, 'yesterday teatime')], RECEIVED, GENEROUS),
        store.recordFeedback(EHR, [accepted(3, '2026-03-14T09:42:00Z')], RECEIVED, GENEROUS),
      ]);
      expect(before?.status).toBe('fulfilled');
      expect(broken?.status).toBe('rejected');
      expect(after?.status).toBe('fulfilled');
      expect((await store.getAdvisory(card(1)))?.feedback).toHaveLength(1);
      expect((await store.getAdvisory(card(2)))?.feedback).toStrictEqual([]);
      expect((await store.getAdvisory(card(3)))?.feedback.map((f) => f.outcomeTimestamp)).toStrictEqual([
        '2026-03-14T09:42:00Z',
      ]);
    });

    it('keeps feedback on a card whose advisory retention has removed, flagged as unmatched', async () => {
      const store = await storeWithCards(advisory(1, { issuedAt: '2026-01-02T09:00:00Z' }));
      await store.purge(new Date('2026-02-01T00:00:00Z'), RECEIVED);
      const write = recorded(await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z')], RECEIVED, GENEROUS));
      expect(write.records[0]?.knownCard).toBe(false);
    });
  });
});

describe('feedback: the dedup key and the quota day', () => {
  it('keeps the key fields apart, so two different items never share a dedup key', () => {
    const a = accepted(1, '2026-03-14T09:41:00Z', { serviceId: 'oxygen-order-sign', cardUuid: 'x|y' });
    const b = accepted(1, '2026-03-14T09:41:00Z', { serviceId: 'oxygen-order-sign|x', cardUuid: 'y' });
    expect(feedbackDedupKey(EHR, a)).not.toBe(feedbackDedupKey(EHR, b));
    expect(feedbackDedupKey(EHR, a)).not.toBe(feedbackDedupKey(EHR_NORTH, a));
  });

  it.each([
    ['2026-03-14T00:00:00.000Z', 86_400],
    ['2026-03-14T23:59:59.000Z', 1],
    ['2026-03-14T23:59:59.500Z', 1],
    ['2026-03-14T12:00:00.000Z', 43_200],
  ])('from %s the next UTC day starts in %i s', (at, seconds) => {
    // ECMA-262, Time Values and Time Range: a day is 86,400,000 ms, leap seconds ignored
    expect(secondsToNextUtcDay(new Date(at))).toBe(seconds);
  });
});
