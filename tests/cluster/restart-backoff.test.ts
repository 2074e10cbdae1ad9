import { describe, expect, it } from 'vitest';
import { createRestartBackoff, RESTART_BACKOFF } from '../../src/cluster/restart-backoff.js';

/**
 * The wait before a dead worker is replaced (src/cluster/restart-backoff.ts). Pure: each death says
 * how long the worker ran, so no clock is involved. The shape (at once after a stable run, doubling
 * in a crash loop, capped) is common practice for process supervisors; the numbers are this
 * service's own settings.
 */

const settings = { firstDelayMs: 1000, maxDelayMs: 30_000, stableAfterMs: 60_000 };

describe('restart back-off', () => {
  it('replaces at once a worker that ran past the stable time, however many died before', () => {
    const backoff = createRestartBackoff(settings);
    for (const ranForMs of [60_000, 3_600_000, 86_400_000]) {
      expect(backoff.delayAfter(ranForMs)).toBe(0);
    }
    for (let i = 0; i < 10; i += 1) backoff.delayAfter(500);
    expect(backoff.delayAfter(settings.stableAfterMs)).toBe(0);
  });

  it('waits longer after each early death in a row, never past the ceiling', () => {
    for (const ranForMs of [0, 1, 2_000, 59_999]) {
      const backoff = createRestartBackoff(settings);
      const waits = Array.from({ length: 40 }, () => backoff.delayAfter(ranForMs));
      expect(waits[0]).toBe(settings.firstDelayMs);
      for (let i = 1; i < waits.length; i += 1) {
        expect(waits[i]).toBeGreaterThanOrEqual(waits[i - 1] ?? 0);
        expect(waits[i]).toBeLessThanOrEqual(settings.maxDelayMs);
      }
      // doubling reaches the ceiling and stays there: a crash loop costs one start per ceiling
      expect(waits.at(-1)).toBe(settings.maxDelayMs);
      expect(new Set(waits.slice(0, 5)).size).toBe(5);
    }
  });

  it('starts a new loop from the first wait once a worker has run stably', () => {
    const backoff = createRestartBackoff(settings);
    const loop = [backoff.delayAfter(100), backoff.delayAfter(100), backoff.delayAfter(100)];
    expect(loop).toStrictEqual([1000, 2000, 4000]);
    backoff.delayAfter(settings.stableAfterMs + 1);
    expect(backoff.delayAfter(100)).toBe(settings.firstDelayMs);
  });

  it('has defaults that replace quickly and cap a crash loop at a start every half minute', () => {
    expect(RESTART_BACKOFF.firstDelayMs).toBeLessThanOrEqual(RESTART_BACKOFF.maxDelayMs);
    expect(RESTART_BACKOFF.maxDelayMs).toBe(30_000);
    expect(createRestartBackoff().delayAfter(RESTART_BACKOFF.stableAfterMs)).toBe(0);
  });
});
