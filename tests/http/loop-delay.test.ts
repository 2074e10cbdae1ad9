import { afterEach, describe, expect, it, vi } from 'vitest';
import { SAMPLE_INTERVAL_MS, startLoopDelayGauge, type LoopDelayGauge } from '../../src/http/loop-delay.js';

/**
 * The event-loop delay gauge on a clock the test moves (vitest fake timers drive both the clock and
 * the sampling timer), so each reading is exact and nothing depends on the machine's speed.
 */

let gauge: LoopDelayGauge | undefined;

afterEach(() => {
  gauge?.stop();
  gauge = undefined;
  vi.useRealTimers();
});

function startOnFakeClock(): LoopDelayGauge {
  vi.useFakeTimers();
  gauge = startLoopDelayGauge(() => Date.now());
  return gauge;
}

describe('the loop delay gauge', () => {
  it('reads 0 while the loop keeps time', () => {
    const started = startOnFakeClock();
    vi.advanceTimersByTime(SAMPLE_INTERVAL_MS * 10);
    expect(started.currentMs()).toBe(0);
  });

  it('sees the turn in progress: how far past its due time the next sample already is', () => {
    const started = startOnFakeClock();
    // The loop is held: the clock moves but no timer runs, as in one long turn of work.
    vi.setSystemTime(Date.now() + 250);
    expect(started.currentMs()).toBe(250 - SAMPLE_INTERVAL_MS);
  });

  it('keeps the last sample\'s lateness once the held turn is over, until the next sample', () => {
    const started = startOnFakeClock();
    // The loop is held 250 ms; the sample then runs (fake timers move the clock on to its due time too,
    // so it runs exactly 250 ms after it was due).
    vi.setSystemTime(Date.now() + 250);
    vi.advanceTimersToNextTimer();
    expect(started.currentMs()).toBe(250);
    vi.advanceTimersByTime(SAMPLE_INTERVAL_MS); // the next one is on time
    expect(started.currentMs()).toBe(0);
  });
});
