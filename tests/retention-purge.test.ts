import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { createLogger } from '../src/log/logger.js';
import { startRetentionPurge } from '../src/retention-purge.js';
import type { PurgeResult, Store } from '../src/store/store.js';
import { createMemoryLog } from './log/memory-log.js';

const NOW = new Date('2026-11-30T09:45:00Z');
const COUNTS: PurgeResult = { advisories: 3, feedback: 5, replayIds: 120 };

/** A store whose purge records its arguments and answers when `settle` is called. */
function purgingStore(): { store: Store; calls: [Date, Date][]; settle: () => void } {
  const calls: [Date, Date][] = [];
  const pending: (() => void)[] = [];
  const store = {
    purge: (cutoff: Date, now: Date) => {
      calls.push([cutoff, now]);
      return new Promise<PurgeResult>((resolve) => pending.push(() => resolve(COUNTS)));
    },
  } as unknown as Store;
  return { store, calls, settle: () => pending.splice(0).forEach((resolve) => resolve()) };
}

beforeEach(() => {
  vi.useFakeTimers();
});

afterEach(() => {
  vi.useRealTimers();
});

describe('startRetentionPurge', () => {
  it('purges at start with the cutoff the retention names, then every interval, logging counts only', async () => {
    const log = createMemoryLog();
    const { store, calls, settle } = purgingStore();
    const purge = startRetentionPurge({
      store,
      retentionDays: 400,
      intervalMin: 60,
      clock: () => NOW,
      logger: createLogger({ level: 'info', destination: log.stream }),
    });
    // 400 days before 2026-11-30T09:45Z is 2025-10-26T09:45Z (arithmetic: 2025-10-26 + 400 d)
    expect(calls).toStrictEqual([[new Date('2025-10-26T09:45:00Z'), NOW]]);
    settle();
    await vi.advanceTimersByTimeAsync(60 * 60_000);
    expect(calls).toHaveLength(2);
    settle();
    await purge.stop();
    const lines = log.lines().filter((line) => line['purge'] === 'done');
    expect(lines.map(({ advisories, feedback, replayIds, cutoff }) => ({ advisories, feedback, replayIds, cutoff }))).toStrictEqual([
      { ...COUNTS, cutoff: '2025-10-26T09:45:00.000Z' },
      { ...COUNTS, cutoff: '2025-10-26T09:45:00.000Z' },
    ]);
  });

  it('never starts a purge while the one before is still running, and stops for good', async () => {
    const { store, calls, settle } = purgingStore();
    const purge = startRetentionPurge({ store, retentionDays: 30, intervalMin: 1, clock: () => NOW, logger: createLogger({ level: 'silent' }) });
    await vi.advanceTimersByTimeAsync(5 * 60_000);
    expect(calls).toHaveLength(1);
    const stopping = purge.stop();
    settle();
    await stopping;
    await vi.advanceTimersByTimeAsync(5 * 60_000);
    expect(calls).toHaveLength(1);
    expect(await purge.runNow()).toBeUndefined();
  });

  describe('edge cases', () => {
    it('logs a failed purge by error type and tries again at the next interval', async () => {
      const log = createMemoryLog();
      let attempts = 0;
      const store = {
        purge: () => {
          attempts += 1;
          return attempts === 1 ? Promise.reject(new Error('database is locked for Ms Quillfeather')) : Promise.resolve(COUNTS);
        },
      } as unknown as Store;
      const purge = startRetentionPurge({ store, retentionDays: 30, intervalMin: 10, clock: () => NOW, logger: createLogger({ level: 'info', destination: log.stream }) });
      await vi.advanceTimersByTimeAsync(10 * 60_000);
      await purge.stop();
      expect(log.lines().map(({ purge: state, errorType }) => ({ state, errorType }))).toStrictEqual([
        { state: 'failed', errorType: 'Error' },
        { state: 'done', errorType: undefined },
      ]);
      expect(log.text()).not.toContain('Quillfeather');
    });
  });
});
