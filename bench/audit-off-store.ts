import type { Store } from '../src/store/store.js';

/** The two services the bench compares: the store as shipped, and the same store without the audit write. */
export type AuditArm = 'audit-on' | 'audit-off';

/** The real store, except that the cards of a hook call are not recorded. Everything else passes through. */
export function withoutAuditWrites(store: Store): Store {
  return {
    recordAdvisories: () => Promise.resolve(),
    recordFeedback: (...args) => store.recordFeedback(...args),
    checkAndRememberJti: (...args) => store.checkAndRememberJti(...args),
    // The token id is still committed; only the cards are left out.
    rememberJtiAndRecordAdvisories: (token) =>
      store.checkAndRememberJti(token.clientKey, token.jti, token.expiresAt, token.now, token.maxPerClient),
    listAdvisories: (query) => store.listAdvisories(query),
    getAdvisory: (cardUuid) => store.getAdvisory(cardUuid),
    listUnmatchedFeedback: (limit, offset) => store.listUnmatchedFeedback(limit, offset),
    summarise: (query) => store.summarise(query),
    facets: () => store.facets(),
    purge: (cutoff, now) => store.purge(cutoff, now),
    isEmpty: () => store.isEmpty(),
    readiness: () => store.readiness(),
    close: () => store.close(),
  };
}
