import { performance } from 'node:perf_hooks';

/**
 * How long work is waiting for the CPU right now: the event loop's delay, measured with a timer that
 * asks to run every `SAMPLE_INTERVAL_MS` and notes how late it ran.
 *
 * What it measures: the wait before Node reads a request, while its bytes sit in the kernel behind
 * the sockets being served. No clock the request carries can see that wait, since the request's
 * clock starts when Node reads it; the loop's delay at that moment stands for it. It is not the only
 * wait: the token's signature is checked on libuv's thread pool (src/security/jws-signature.ts), and
 * under load a call can queue there while the loop keeps time. So the overload gate uses this gauge
 * twice (overload.ts): alone, to shed before authentication while the loop runs late, and noted at
 * each request's arrival (request-context.ts), added to the time since, to refuse at admission a call
 * that has waited too long in all. `perf_hooks.monitorEventLoopDelay` measures the same thing, but
 * only as a histogram of turns already over; the gauge here also sees the turn in progress.
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
 * The process has one event loop, so every app in it shares one gauge, started by the first request
 * that asks (an app that serves no request starts no timer; the timer never holds the process up).
 */
export function sharedLoopDelayMs(): number {
  shared ??= startLoopDelayGauge();
  return shared.currentMs();
}
