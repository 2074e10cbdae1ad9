import { describe, expect, it } from 'vitest';
import type { Store } from '../../src/store/store.js';
import {
  accepted,
  advisory,
  card,
  EHR,
  EMERGENCY,
  GENEROUS,
  overridden,
  THEATRES,
  WARD_7,
} from './support/fixtures.js';
import { STORE_KINDS } from './support/store-kinds.js';
import { useStores } from './support/use-stores.js';

const RECEIVED = new Date('2026-03-14T10:00:00Z');

describe.each(STORE_KINDS)('the review queries on the $name store', (kind) => {
  const trackedStore = useStores(kind).fresh;

  describe('listAdvisories', () => {
    async function seeded(): Promise<Store> {
      const store = await trackedStore();
      await store.recordAdvisories([
        advisory(1, { issuedAt: '2026-03-14T08:00:00Z' }),
        advisory(2, { issuedAt: '2026-03-14T09:00:00Z', ruleId: 'spo2-below-target', indicator: 'critical' }),
        advisory(3, { issuedAt: '2026-03-14T10:00:00Z', unit: EMERGENCY, patientKey: 'ffffffffffffffffffffffffffffffff' }),
        advisory(4, { issuedAt: '2026-03-14T11:00:00+01:00', ruleId: 'uncontrolled-oxygen-at-risk' }),
      ]);
      return store;
    }

    it('lists newest first by the instant issued, whatever offset the time was written in', async () => {
      const store = await seeded();
      const page = await store.listAdvisories({ limit: 10, offset: 0 });
      // 11:00+01:00 is 10:00Z, the same instant as card 3; a tie is broken by card uuid, descending
      expect(page.items.map((item) => item.cardUuid)).toStrictEqual([card(4), card(3), card(2), card(1)]);
      expect(page.total).toBe(4);
    });

    it('pages with limit and offset and still reports the total of all matches', async () => {
      const store = await seeded();
      const second = await store.listAdvisories({ limit: 2, offset: 2 });
      expect(second.items.map((item) => item.cardUuid)).toStrictEqual([card(2), card(1)]);
      expect(second.total).toBe(4);
    });

    it.each([
      [{ unit: EMERGENCY }, [3]],
      [{ unit: WARD_7 }, [4, 2, 1]],
      [{ ruleId: 'spo2-below-target' }, [2]],
      [{ indicator: 'critical' as const }, [2]],
      [{ patientKey: 'ffffffffffffffffffffffffffffffff' }, [3]],
      [{ from: '2026-03-14T09:00:00Z' }, [4, 3, 2]],
      [{ to: '2026-03-14T09:00:00Z' }, [1]],
      [{ from: '2026-03-14T09:00:00Z', to: '2026-03-14T10:00:00Z', unit: WARD_7 }, [2]],
    ])('filters by %j (from inclusive, to exclusive)', async (filter, expected) => {
      const store = await seeded();
      const page = await store.listAdvisories({ ...filter, limit: 10, offset: 0 });
      expect(page.items.map((item) => item.cardUuid)).toStrictEqual(expected.map(card));
      expect(page.total).toBe(expected.length);
    });

    it('filters by the latest outcome, by outcome time, not by the order feedback arrived', async () => {
      const store = await seeded();
      // card 1: overridden at 08:05, then (sent later, but decided earlier) accepted at 08:02
      await store.recordFeedback(EHR, [overridden(1, '2026-03-14T08:05:00Z')], RECEIVED, GENEROUS);
      await store.recordFeedback(EHR, [accepted(1, '2026-03-14T08:02:00Z')], new Date('2026-03-14T10:30:00Z'), GENEROUS);
      // card 2: accepted, then overridden later
      await store.recordFeedback(
        EHR,
        [accepted(2, '2026-03-14T09:01:00Z'), overridden(2, '2026-03-14T09:10:00Z', 'weaning-in-progress')],
        RECEIVED,
        GENEROUS,
      );
      // card 3: accepted only
      await store.recordFeedback(EHR, [accepted(3, '2026-03-14T10:01:00Z')], RECEIVED, GENEROUS);

      const ids = async (outcome: 'accepted' | 'overridden' | 'none'): Promise<string[]> =>
        (await store.listAdvisories({ outcome, limit: 10, offset: 0 })).items.map((item) => item.cardUuid);
      expect(await ids('overridden')).toStrictEqual([card(2), card(1)]);
      expect(await ids('accepted')).toStrictEqual([card(3)]);
      expect(await ids('none')).toStrictEqual([card(4)]);

      const listed = (await store.listAdvisories({ limit: 10, offset: 0 })).items;
      expect(listed.find((item) => item.cardUuid === card(2))).toMatchObject({
        latestOutcome: 'overridden',
        latestOverrideReasonCode: 'weaning-in-progress',
        feedbackCount: 2,
      });
      expect(listed.find((item) => item.cardUuid === card(4))).not.toHaveProperty('latestOutcome');
    });

    it('offers the units and rule ids on record as filter choices', async () => {
      const store = await seeded();
      const { unit: _unit, ...noUnit } = advisory(5);
      await store.recordAdvisories([noUnit]);
      expect(await store.facets()).toStrictEqual({
        units: [EMERGENCY, WARD_7],
        ruleIds: ['spo2-above-target', 'spo2-below-target', 'uncontrolled-oxygen-at-risk'],
      });
    });
  });

  describe('getAdvisory', () => {
    it('gives the feedback of the client the card was issued to, oldest outcome first', async () => {
      const store = await trackedStore();
      await store.recordAdvisories([advisory(1)]);
      await store.recordFeedback(EHR, [overridden(1, '2026-03-14T09:50:00Z')], RECEIVED, GENEROUS);
      await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:45:00Z')], RECEIVED, GENEROUS);
      await store.recordFeedback(THEATRES, [accepted(1, '2026-03-14T09:55:00Z')], RECEIVED, GENEROUS);

      const found = await store.getAdvisory(card(1));
      expect(found?.feedback.map((f) => [f.outcome, f.outcomeTimestamp, f.knownCard])).toStrictEqual([
        ['accepted', '2026-03-14T09:45:00Z', true],
        ['overridden', '2026-03-14T09:50:00Z', true],
      ]);
      expect(found?.feedback[1]).toMatchObject({
        client: EHR,
        overrideReason: { system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/override-reason', code: 'patient-specific-target' },
        receivedAt: RECEIVED.toISOString(),
      });
    });
  });

  describe('summarise', () => {
    it('counts per rule and unit what was fired, accepted, overridden and left, by latest outcome', async () => {
      const store = await trackedStore();
      await store.recordAdvisories([
        advisory(1),
        advisory(2),
        advisory(3),
        advisory(4),
        advisory(5, { unit: EMERGENCY }),
        advisory(6, { ruleId: 'news2-scale-2', indicator: 'info' }),
        advisory(7, { issuedAt: '2026-03-15T09:00:00Z' }),
      ]);
      await store.recordFeedback(
        EHR,
        [
          accepted(1, '2026-03-14T09:41:00Z'),
          overridden(2, '2026-03-14T09:41:00Z', 'weaning-in-progress'),
          overridden(3, '2026-03-14T09:41:00Z', 'weaning-in-progress'),
          // card 4 was overridden, then the clinician changed their mind and accepted it
          overridden(4, '2026-03-14T09:41:00Z', 'reading-not-representative'),
          accepted(4, '2026-03-14T09:44:00Z'),
          overridden(5, '2026-03-14T09:41:00Z', 'patient-specific-target'),
        ],
        RECEIVED,
        GENEROUS,
      );
      // Feedback from another client on card 1 is not the issuing client's and changes nothing.
      await store.recordFeedback(THEATRES, [overridden(1, '2026-03-14T09:59:00Z')], RECEIVED, GENEROUS);

      const summary = await store.summarise({ from: '2026-03-14T00:00:00Z', to: '2026-03-15T00:00:00Z' });
      expect(summary).toStrictEqual([
        { ruleId: 'news2-scale-2', unit: WARD_7, fired: 1, accepted: 0, overridden: 0, noFeedback: 1, overrideReasons: [] },
        {
          ruleId: 'spo2-above-target',
          unit: EMERGENCY,
          fired: 1,
          accepted: 0,
          overridden: 1,
          noFeedback: 0,
          overrideReasons: [{ code: 'patient-specific-target', count: 1 }],
        },
        {
          ruleId: 'spo2-above-target',
          unit: WARD_7,
          fired: 4,
          accepted: 2,
          overridden: 2,
          noFeedback: 0,
          overrideReasons: [{ code: 'weaning-in-progress', count: 2 }],
        },
      ]);
      const everything = await store.summarise({});
      expect(everything.find((row) => row.ruleId === 'spo2-above-target' && row.unit === WARD_7)?.fired).toBe(5);
    });

    it('groups advisories that named no unit under the empty unit', async () => {
      const store = await trackedStore();
      const { unit: _unit, ...noUnit } = advisory(1);
      await store.recordAdvisories([noUnit]);
      expect(await store.summarise({})).toStrictEqual([
        { ruleId: 'spo2-above-target', unit: '', fired: 1, accepted: 0, overridden: 0, noFeedback: 1, overrideReasons: [] },
      ]);
    });
  });
});
