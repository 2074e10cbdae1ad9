import type { Logger } from './log/logger.js';
import type { PurgeResult, Store } from './store/store.js';

/**
 * The audit trail's retention: advisories and feedback older than `OXYGEN_CHECKER_AUDIT_RETENTION_DAYS`,
 * and token ids past their expiry, are deleted by a purge that runs once at start and then every
 * `OXYGEN_CHECKER_PURGE_INTERVAL_MIN`. The timer never keeps the process alive, a purge never overlaps the
 * one before it, and the log line says how many rows went, nothing about them.
 */
export interface RetentionPurgeOptions {
  readonly store: Store;
  readonly retentionDays: number;
  readonly intervalMin: number;
  readonly clock: () => Date;
  readonly logger: Logger;
}

export interface RetentionPurge {
  /** Resolves when the purge that was started (or was already running) has finished. */
  readonly runNow: () => Promise<PurgeResult | undefined>;
  /** Stops the schedule and waits for a purge in progress, so the store can be closed after it. */
  readonly stop: () => Promise<void>;
}

const DAY_MS = 86_400_000;
const MINUTE_MS = 60_000;

export function startRetentionPurge(options: RetentionPurgeOptions): RetentionPurge {
  let running: Promise<PurgeResult | undefined> | undefined;
  let stopped = false;

  const purgeOnce = async (): Promise<PurgeResult | undefined> => {
    const now = options.clock();
    const cutoff = new Date(now.getTime() - options.retentionDays * DAY_MS);
    try {
      const result = await options.store.purge(cutoff, now);
      options.logger.info(
        { purge: 'done', cutoff: cutoff.toISOString(), ...result },
        'retention purge: expired advisories, feedback and token ids deleted',
      );
      return result;
    } catch (error) {
      const errorType = error instanceof Error ? error.name : typeof error;
      options.logger.error({ purge: 'failed', errorType }, 'retention purge failed; it runs again at the next interval');
      return undefined;
    }
  };

  const runNow = (): Promise<PurgeResult | undefined> => {
    if (stopped) {
      return Promise.resolve(undefined);
    }
    running ??= purgeOnce().finally(() => {
      running = undefined;
    });
    return running;
  };

  const timer = setInterval(() => void runNow(), options.intervalMin * MINUTE_MS);
  timer.unref();
  void runNow();

  return {
    runNow,
    stop: async () => {
      stopped = true;
      clearInterval(timer);
      await running;
    },
  };
}
