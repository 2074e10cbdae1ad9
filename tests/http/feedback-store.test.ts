import { describe, expect, it } from 'vitest';
import { createMemoryFeedbackStore, type FeedbackEntry } from '../../src/http/feedback-store.js';

function entry(card: string, outcome: 'accepted' | 'overridden' = 'overridden'): FeedbackEntry {
  return {
    serviceId: 'oxygen-order-sign',
    card,
    outcome,
    acceptedSuggestionIds: [],
    overrideReasonCode: undefined,
    outcomeTimestamp: '2025-03-14T09:02:40Z',
  };
}

describe('createMemoryFeedbackStore', () => {
  it('records a card once per outcome and calls the repeat a duplicate', async () => {
    const store = createMemoryFeedbackStore();
    // CDS Hooks 2.0 §Feedback: idempotent for repeated feedback on the same card
    expect(await store.record(entry('card-1'))).toBe('recorded');
    expect(await store.record(entry('card-1'))).toBe('duplicate');
    expect(await store.record(entry('card-1', 'accepted'))).toBe('recorded');
    expect(store.entries()).toHaveLength(2);
  });

  describe('edge cases', () => {
    it('drops the oldest entry beyond its cap', async () => {
      const store = createMemoryFeedbackStore(2);
      await store.record(entry('card-1'));
      await store.record(entry('card-2'));
      await store.record(entry('card-3'));
      expect(store.entries().map((e) => e.card)).toStrictEqual(['card-2', 'card-3']);
      expect(await store.record(entry('card-1'))).toBe('recorded');
    });
  });
});
