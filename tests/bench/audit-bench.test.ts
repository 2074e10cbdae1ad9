import { describe, expect, it } from 'vitest';
import { feedbackBodies, freshHookInstances } from '../../bench/audit-cases.js';
import { asNewCall } from '../../bench/audit-micro.js';
import { withoutAuditWrites } from '../../bench/audit-off-store.js';
import { FeedbackRequestSchema } from '../../src/cds/schemas.js';
import { openTempStore } from '../helpers/temp-store.js';
import { EHR, GENEROUS, advisory, card } from '../store/support/fixtures.js';

/**
 * The pieces the audit comparison relies on: the audit-off store writes no card and nothing else
 * differs, every load body is a new call, and every feedback body is a new, valid item. These are
 * what make "audit on / audit off" measure the audit write and nothing else.
 */

const REQUEST = {
  hookInstance: 'c0ffee00-0000-4000-8000-000000000001',
  hook: 'order-sign',
  context: { userId: 'Practitioner/larkspur-rn-04', patientId: 'larkspur-bay-patient-17', draftOrders: { resourceType: 'Bundle' } },
};

describe('withoutAuditWrites', () => {
  it('records no card, while the store it wraps records them and feedback still commits', async () => {
    const real = openTempStore().store;
    const off = withoutAuditWrites(openTempStore().store);
    for (const store of [real, off]) {
      await store.recordAdvisories([advisory(1), advisory(2)]);
    }
    expect(await real.isEmpty()).toBe(false);
    expect((await real.getAdvisory(card(1)))?.cardUuid).toBe(card(1));
    expect(await off.isEmpty()).toBe(true);
    expect(await off.getAdvisory(card(1))).toBeUndefined();
    // Everything but the audit write passes through: feedback is committed (flagged, no card on record).
    const write = await off.recordFeedback(
      EHR,
      [{ serviceId: 'oxygen-order-sign', cardUuid: card(1), outcome: 'overridden', acceptedSuggestionIds: [], outcomeTimestamp: '2026-03-14T09:45:00Z' }],
      new Date('2026-03-14T09:46:00Z'),
      GENEROUS,
    );
    expect(write.kind === 'recorded' ? write.records.map((r) => r.knownCard) : write.kind).toEqual([false]);
  });
});

describe('freshHookInstances', () => {
  it('changes only the hookInstance, to a new value every call', () => {
    const body = JSON.stringify(REQUEST);
    let n = 0;
    const make = freshHookInstances(body, () => `new-instance-${String((n += 1))}`);
    const made = Array.from({ length: 5 }, () => JSON.parse(make()) as typeof REQUEST);
    expect(new Set(made.map((m) => m.hookInstance)).size).toBe(5);
    for (const m of made) {
      expect(m.hookInstance).not.toBe(REQUEST.hookInstance);
      expect({ ...m, hookInstance: REQUEST.hookInstance }).toEqual(REQUEST);
    }
  });

  it('refuses a body whose hookInstance cannot be replaced unambiguously', () => {
    const { hookInstance: _dropped, ...without } = REQUEST;
    expect(() => freshHookInstances(JSON.stringify(without))).toThrow(/no hookInstance/);
    // Pretty-printed JSON is not the compact form the bench sends.
    expect(() => freshHookInstances(JSON.stringify(REQUEST, null, 2))).toThrow(/once, as compact JSON/);
  });
});

describe('feedbackBodies', () => {
  const cards = [
    { uuid: card(1), reason: { system: 'https://larkspur-bay.example/override-reason', code: 'clinician-judgement' } },
    { uuid: card(2) },
    { uuid: card(3) },
  ];

  it('makes valid one-item feedback, never the same item twice, taking the cards in turn', () => {
    const make = feedbackBodies(cards, Date.parse('2026-03-14T09:00:00Z'));
    const bodies = Array.from({ length: 9 }, make);
    expect(new Set(bodies).size).toBe(bodies.length);
    const items = bodies.map((body) => {
      const parsed = FeedbackRequestSchema.safeParse(JSON.parse(body));
      expect(parsed.success).toBe(true);
      return parsed.success ? parsed.data.feedback : [];
    });
    expect(items.every((list) => list.length === 1)).toBe(true);
    expect(items.map((list) => list[0]?.card)).toEqual([1, 2, 3, 1, 2, 3, 1, 2, 3].map(card));
    expect(items[0]?.[0]?.overrideReason?.reason?.code).toBe('clinician-judgement');
    expect(items[1]?.[0]?.overrideReason).toBeUndefined();
  });

  it('needs at least one card', () => {
    expect(() => feedbackBodies([], 0)).toThrow(/at least one/);
  });
});

describe('asNewCall', () => {
  it('gives every card and suggestion a new uuid, one new hook instance per call, and keeps the rest', () => {
    const records = [advisory(1), advisory(2)];
    const first = asNewCall(records);
    const second = asNewCall(records);
    const uuids = [...records, ...first, ...second].flatMap((r) => [r.cardUuid, ...r.suggestionUuids]);
    expect(new Set(uuids).size).toBe(uuids.length);
    expect(new Set(first.map((r) => r.hookInstance)).size).toBe(1);
    expect(first[0]?.hookInstance).not.toBe(second[0]?.hookInstance);
    first.forEach((record, i) => {
      const { cardUuid: _c, suggestionUuids: _s, hookInstance: _h, ...rest } = record;
      const { cardUuid: _oc, suggestionUuids: _os, hookInstance: _oh, ...original } = records[i] ?? advisory(0);
      expect(rest).toEqual(original);
    });
  });
});
