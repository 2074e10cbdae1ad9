import type { AdvisoryRecord } from '../store/store.js';

/**
 * Remembers token ids (`jti`) until their token expires, so a captured token cannot be sent twice
 * (CDS Hooks 2.0 §Trusting CDS Clients: `jti` is a nonce for replay protection; RFC 7519 §4.1.7).
 * The service uses the store-backed cache (store-replay-cache.ts), which survives restarts and
 * bounds each client's share; the memory implementation here protects one process only.
 */
/** The store's (or the memory cache's) final answer on a token id. */
export type ReplayAnswer =
  | { readonly kind: 'fresh' }
  | { readonly kind: 'replayed' }
  /** The client holds its whole share of unexpired ids; its oldest expires in `retryAfterS`. */
  | { readonly kind: 'client-full'; readonly retryAfterS: number }
  /** The id could not be checked or remembered (a store failure, a full memory cache): refuse. */
  | { readonly kind: 'unavailable' };

export type ReplayDecision =
  /**
   * Not held before. With `pending`, the id is held by this process only and its commit to the store
   * is still to come (store-replay-cache.ts): whoever serves the call must commit it before
   * answering, and before the client's FHIR token leaves the service. Without it, it is remembered.
   */
  | { readonly kind: 'fresh'; readonly pending?: PendingJti }
  | Exclude<ReplayAnswer, { readonly kind: 'fresh' }>;

/** What `PendingJti.commitWith` answers: the token's decision, and why its cards were not recorded if not. */
export interface JtiCommit {
  readonly decision: ReplayAnswer;
  /**
   * Set when the id is fresh but the cards could not be recorded: the combined transaction failed,
   * and the id was then committed on its own. The caller logs it; advice is not held back for it.
   */
  readonly cardsFailure?: unknown;
}

/**
 * A token id this process holds in memory and has not yet committed to the store. Every call whose
 * token carries one commits it exactly once before it answers: alone (`commit`), or in the same
 * transaction as the call's audit records (`commitWith`), so a hook call answered from prefetch costs
 * one commit. The store's answer is final: an id another instance committed first is `replayed`.
 */
export interface PendingJti {
  readonly jti: string;
  /** Commits the id alone; every later call gets the first call's answer. Never rejects. */
  commit(): Promise<ReplayAnswer>;
  /** True once a commit of the id was asked for (alone or with records). */
  readonly started: () => boolean;
  /**
   * Commits the id and `records` in one transaction; the records are kept only when the id is fresh.
   * If the id was already committed alone, the records are written after it in a transaction of their
   * own. Never rejects: a failed combined transaction is followed by the id alone (`cardsFailure`).
   */
  commitWith(records: readonly AdvisoryRecord[]): Promise<JtiCommit>;
}

export interface ReplayCache {
  /**
   * Records `jti` for the client `clientKey` until `expiresAt` (epoch milliseconds). `fresh` when it
   * was not held before and is now remembered (with `pending`: held by this process, its commit to
   * the store still to come); anything else refuses the token (fail closed).
   */
  checkAndRemember(clientKey: string, jti: string, expiresAt: number): Promise<ReplayDecision>;
}

export interface MemoryReplayCacheOptions {
  /** Most ids held at once; when full of unexpired ids, new tokens are refused rather than forgotten. */
  readonly maxEntries: number;
  readonly clock: () => Date;
  /** Told when a token was refused because the cache was full of unexpired ids. */
  readonly onFull?: () => void;
}

export interface MemoryReplayCache extends ReplayCache {
  readonly size: () => number;
}

/** Expired ids dropped from the front of the map on each call: bounded work per request. */
const SWEEP_PER_CALL = 8;

export function createMemoryReplayCache(options: MemoryReplayCacheOptions): MemoryReplayCache {
  if (!Number.isInteger(options.maxEntries) || options.maxEntries < 1) {
    throw new Error('createMemoryReplayCache: maxEntries must be a positive integer');
  }
  const expiries = new Map<string, number>();

  /** Map order is insertion order, which is close to expiry order for tokens of similar lifetime. */
  function sweepFront(now: number): void {
    let looked = 0;
    for (const [key, expiresAt] of expiries) {
      if (looked >= SWEEP_PER_CALL || expiresAt > now) {
        return;
      }
      expiries.delete(key);
      looked += 1;
    }
  }

  function sweepAll(now: number): void {
    for (const [key, expiresAt] of expiries) {
      if (expiresAt <= now) {
        expiries.delete(key);
      }
    }
  }

  function checkAndRememberNow(key: string, expiresAt: number): ReplayDecision {
    const now = options.clock().getTime();
    sweepFront(now);
    const held = expiries.get(key);
    if (held !== undefined && held > now) {
      return { kind: 'replayed' };
    }
    if (held === undefined && expiries.size >= options.maxEntries) {
      sweepAll(now);
      if (expiries.size >= options.maxEntries) {
        // Forgetting a live id would let its token be replayed: refuse the new token instead.
        options.onFull?.();
        return { kind: 'unavailable' };
      }
    }
    expiries.delete(key);
    expiries.set(key, expiresAt);
    return { kind: 'fresh' };
  }

  return {
    // Synchronous inside, so two concurrent calls with one id cannot both be told "new".
    checkAndRemember: (clientKey, jti, expiresAt) =>
      Promise.resolve(checkAndRememberNow(JSON.stringify([clientKey, jti]), expiresAt)),
    size: () => expiries.size,
  };
}
