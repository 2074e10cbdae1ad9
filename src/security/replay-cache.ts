/**
 * Remembers token ids (`jti`) until their token expires, so a captured token cannot be sent twice
 * (CDS Hooks 2.0 §Trusting CDS Clients: `jti` is a nonce for replay protection; RFC 7519 §4.1.7).
 * The service uses the store-backed cache (store-replay-cache.ts), which survives restarts and
 * bounds each client's share; the memory implementation here protects one process only.
 */
export type ReplayDecision =
  | { readonly kind: 'fresh' }
  | { readonly kind: 'replayed' }
  /** The client holds its whole share of unexpired ids; its oldest expires in `retryAfterS`. */
  | { readonly kind: 'client-full'; readonly retryAfterS: number }
  /** The id could not be checked or remembered (a store failure, a full memory cache): refuse. */
  | { readonly kind: 'unavailable' };

export interface ReplayCache {
  /**
   * Records `jti` for the client `clientKey` until `expiresAt` (epoch milliseconds). `fresh` when it
   * was not held before and is now remembered; anything else refuses the token (fail closed).
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
