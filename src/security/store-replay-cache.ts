import type { Logger } from '../log/logger.js';
import type { AdvisoryRecord, ReplayCheck, Store, TokenUse } from '../store/store.js';
import type { JtiCommit, PendingJti, ReplayAnswer, ReplayCache } from './replay-cache.js';

/**
 * The replay cache in the store: a `jti` seen stays refused across restarts for its token's lifetime,
 * and each client may hold at most `maxPerClient` unexpired ids, so one client that mints tokens
 * fast is refused (429) while every other client goes on as before. A store that fails refuses the
 * token (fail closed, 503): a replay check that cannot be made is not a pass.
 *
 * With `deferCommit`, the check at authentication is made in this process's memory only, and the
 * id's commit to the store is handed on with the call (`PendingJti`), so a hook call can commit its
 * token id and its cards in one transaction (one fsync instead of two). The store stays the judge
 * across instances: its answer at the commit is final, and a call whose id another instance committed
 * first is refused then (401), its cards not kept. What memory adds is speed: an id this process
 * already holds is refused at once, before any work, and two calls in flight here with one id are
 * never both let through.
 */
export interface StoreReplayCacheOptions {
  readonly store: Store;
  readonly maxPerClient: number;
  readonly clock: () => Date;
  readonly logger: Logger;
  /** Hand the commit on with the call (the service does); otherwise commit at the check. */
  readonly deferCommit?: boolean;
  /** Told of each replay refused from memory, which the store never sees (the replay metric counts it). */
  readonly onReplayInMemory?: () => void;
  /**
   * Ids kept in memory once committed, so a replay to this process is refused before any work; the
   * oldest committed ones are forgotten past it (the store still refuses them, at the commit). Ids
   * not yet committed are never forgotten. Default 100,000.
   */
  readonly memoryMaxEntries?: number;
}

/** Expired ids dropped from the front of the memory map on each check: bounded work per call. */
const SWEEP_PER_CALL = 8;
const DEFAULT_MEMORY_MAX_ENTRIES = 100_000;

interface Held {
  readonly expiresAt: number;
  /** False while the commit is still to come or under way: such an entry is never forgotten early. */
  committed: boolean;
}

export function createStoreReplayCache(options: StoreReplayCacheOptions): ReplayCache {
  if (!Number.isInteger(options.maxPerClient) || options.maxPerClient < 1) {
    throw new Error('createStoreReplayCache: maxPerClient must be a positive integer');
  }
  const memoryMax = options.memoryMaxEntries ?? DEFAULT_MEMORY_MAX_ENTRIES;
  if (!Number.isInteger(memoryMax) || memoryMax < 1) {
    throw new Error('createStoreReplayCache: memoryMaxEntries must be a positive integer');
  }
  const { store, logger } = options;

  /** A store failure is a refusal (fail closed); the type only is logged, as the message may quote the key. */
  const failed = (error: unknown): ReplayAnswer => {
    const errorType = error instanceof Error ? error.name : typeof error;
    logger.error({ replayCache: 'store-failed', errorType }, 'replay check failed; token refused');
    return { kind: 'unavailable' };
  };

  const commitAlone = (use: TokenUse): Promise<ReplayAnswer> =>
    store.checkAndRememberJti(use.clientKey, use.jti, use.expiresAt, use.now, use.maxPerClient).then(
      (check: ReplayCheck): ReplayAnswer => check,
      failed,
    );

  if (options.deferCommit !== true) {
    return {
      checkAndRemember: (clientKey, jti, expiresAt) =>
        commitAlone({ clientKey, jti, expiresAt, now: options.clock(), maxPerClient: options.maxPerClient }),
    };
  }

  // Insertion order is close to expiry order for tokens of similar lifetime.
  const held = new Map<string, Held>();

  function sweepFront(nowMs: number): void {
    let looked = 0;
    for (const [key, entry] of held) {
      if (looked >= SWEEP_PER_CALL || entry.expiresAt > nowMs) {
        return;
      }
      held.delete(key);
      looked += 1;
    }
  }

  /** Past the cap, committed ids go oldest first: the store holds them, so nothing is let through. */
  function forgetCommittedPastCap(): void {
    for (const [key, entry] of held) {
      if (held.size <= memoryMax) {
        return;
      }
      if (entry.committed) {
        held.delete(key);
      }
    }
  }

  /** What the store's answer leaves in memory: a used id stays; an id the store did not take goes. */
  function settle(key: string, entry: Held, answer: ReplayAnswer): ReplayAnswer {
    if (answer.kind === 'fresh' || answer.kind === 'replayed') {
      entry.committed = true;
    } else if (held.get(key) === entry) {
      // Not remembered by the store (share full, store failed): the token may be tried again later.
      held.delete(key);
    }
    return answer;
  }

  function pendingFor(key: string, entry: Held, use: TokenUse): PendingJti {
    let alone: Promise<ReplayAnswer> | undefined;
    let started = false;
    const commit = (): Promise<ReplayAnswer> => {
      started = true;
      alone ??= commitAlone(use).then((answer) => settle(key, entry, answer));
      return alone;
    };
    const commitWith = async (records: readonly AdvisoryRecord[]): Promise<JtiCommit> => {
      if (started || records.length === 0) {
        const decision = await commit();
        if (decision.kind !== 'fresh' || records.length === 0) {
          return { decision };
        }
        try {
          await store.recordAdvisories(records);
          return { decision };
        } catch (cardsFailure) {
          return { decision, cardsFailure };
        }
      }
      started = true;
      try {
        const check = await store.rememberJtiAndRecordAdvisories(use, records);
        const decision = settle(key, entry, check);
        alone = Promise.resolve(decision);
        return { decision };
      } catch (cardsFailure) {
        // Nothing of the transaction was written. The id decides the answer, so it is committed on
        // its own; the cards go out unrecorded, as any failed audit write (audit-trail.ts).
        alone = undefined;
        const decision = await commit();
        return decision.kind === 'fresh' ? { decision, cardsFailure } : { decision };
      }
    };
    return { jti: use.jti, commit, commitWith, started: () => started };
  }

  return {
    checkAndRemember(clientKey, jti, expiresAt) {
      const now = options.clock();
      const nowMs = now.getTime();
      sweepFront(nowMs);
      // A JSON array text never holds a raw newline, so the pair cannot be confused with another.
      const key = `${clientKey}\n${jti}`;
      const known = held.get(key);
      if (known !== undefined && known.expiresAt > nowMs) {
        options.onReplayInMemory?.();
        return Promise.resolve({ kind: 'replayed' });
      }
      const entry: Held = { expiresAt, committed: false };
      held.delete(key);
      held.set(key, entry);
      if (held.size > memoryMax) {
        forgetCommittedPastCap();
      }
      const use: TokenUse = { clientKey, jti, expiresAt, now, maxPerClient: options.maxPerClient };
      return Promise.resolve({ kind: 'fresh', pending: pendingFor(key, entry, use) });
    },
  };
}
