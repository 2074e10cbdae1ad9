import { performance } from 'node:perf_hooks';

/**
 * How long work is waiting for the CPU right now: the event loop's delay, measured with a timer that
 * asks to run every `SAMPLE_INTERVAL_MS` and notes how late it ran.
 *
 * Why the loop and not the requests: a hook call with its prefetch runs from socket to answer in one
 * turn of the loop (each step is a promise or a nextTick, which never yields to other sockets), so a
 * call admitted to evaluation has hardly waited at all by any clock the request carries. The waiting
 * happens before Node reads the request, while its bytes sit in the kernel behind the sockets being
 * served; the loop's delay is exactly that wait, and it does not count a client's slow upload
 * against the service. `perf_hooks.monitorEventLoopDelay` measures the same thing, but only as a
 * histogram of turns already over; the gauge here also sees the turn in progress.
 */

/** Often enough that a sample is never stale by more than a small part of the 500 ms budget. */
export const SAMPLE_INTERVAL_MS = 20;

export interface LoopDelayGauge {
  /**
   * Milliseconds a callback ready now would wait: the larger of the last sample's lateness and how
   * far past its due time the next sample already is (the loop is busy with this very turn).
   */
  readonly currentMs: () => number;
  readonly stop: () => void;
}

export function startLoopDelayGauge(now: () => number = () => performance.now()): LoopDelayGauge {
  let dueAt = now() + SAMPLE_INTERVAL_MS;
  let lastDelayMs = 0;
  let timer: NodeJS.Timeout | undefined;
  const schedule = (): void => {
    timer = setTimeout(sample, SAMPLE_INTERVAL_MS);
    // Never the reason a process stays up, nor a test file that never closes its app.
    timer.unref();
  };
  function sample(): void {
    const at = now();
    lastDelayMs = Math.max(0, at - dueAt);
    dueAt = at + SAMPLE_INTERVAL_MS;
    schedule();
  }
  schedule();
  return {
    currentMs: () => Math.max(lastDelayMs, now() - dueAt),
    stop: () => clearTimeout(timer),
  };
}

let shared: LoopDelayGauge | undefined;

/**
 * The process has one event loop, so every app in it shares one gauge, started by the first call
 * that asks (an app that never serves a hook call starts no timer).
 */
export function sharedLoopDelayMs(): number {
  shared ??= startLoopDelayGauge();
  return shared.currentMs();
}
