/**
 * Where card feedback goes (CDS Hooks 2.0 §Feedback). An interface so a later store (a database, an
 * audit service) can replace the in-memory one without touching the route. Free-text comments are
 * not kept: they may hold patient details.
 */
export interface FeedbackEntry {
  readonly serviceId: string;
  readonly card: string;
  readonly outcome: 'accepted' | 'overridden';
  readonly acceptedSuggestionIds: readonly string[];
  readonly overrideReasonCode: string | undefined;
  readonly outcomeTimestamp: string;
}

export type RecordOutcome = 'recorded' | 'duplicate';

export interface FeedbackStore {
  /**
   * Records one item. Feedback may be sent again for the same card (CDS Hooks 2.0 §Feedback: make the
   * handler idempotent): the same service, card uuid and outcome again is a `duplicate`.
   */
  record(entry: FeedbackEntry): Promise<RecordOutcome>;
}

export interface MemoryFeedbackStore extends FeedbackStore {
  readonly entries: () => readonly FeedbackEntry[];
}

/**
 * Keeps at most `maxEntries` (oldest dropped first), so a flood of feedback cannot grow memory
 * without bound; an entry dropped that way can be recorded again.
 */
export function createMemoryFeedbackStore(maxEntries = 10_000): MemoryFeedbackStore {
  const byKey = new Map<string, FeedbackEntry>();
  return {
    record(entry) {
      const key = JSON.stringify([entry.serviceId, entry.card, entry.outcome]);
      if (byKey.has(key)) {
        return Promise.resolve('duplicate');
      }
      byKey.set(key, entry);
      if (byKey.size > maxEntries) {
        const oldest = byKey.keys().next();
        if (oldest.done !== true) {
          byKey.delete(oldest.value);
        }
      }
      return Promise.resolve('recorded');
    },
    entries: () => [...byKey.values()],
  };
}
