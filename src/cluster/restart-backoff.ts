/**
 * How long a cluster's primary waits before it replaces a worker that stopped unexpectedly. A worker
 * that ran for a while and then died (a crash, the out-of-memory killer) is replaced at once, so the
 * host keeps its capacity. A worker that dies soon after it was started points to something a restart
 * will not fix at once (a store that cannot be opened, a file gone), so each such death in a row
 * doubles the wait, up to a ceiling: a crash loop costs a start now and then, not a spinning CPU
 * (common practice, as process supervisors do: systemd's RestartSec and StartLimit, Kubernetes'
 * CrashLoopBackOff doubling from 10 s to 5 min). Pure: the caller says how long the worker ran.
 */

export interface RestartBackoffSettings {
  /** The wait after the first early death in a row. */
  readonly firstDelayMs: number;
  /** The longest wait. */
  readonly maxDelayMs: number;
  /** A worker that ran at least this long ends a crash loop: it is replaced at once. */
  readonly stableAfterMs: number;
}

export const RESTART_BACKOFF: RestartBackoffSettings = {
  firstDelayMs: 1000,
  maxDelayMs: 30_000,
  stableAfterMs: 60_000,
};

export interface RestartBackoff {
  /** The wait before replacing a worker that ran `ranForMs`; counts the death. */
  readonly delayAfter: (ranForMs: number) => number;
}

export function createRestartBackoff(settings: RestartBackoffSettings = RESTART_BACKOFF): RestartBackoff {
  let earlyDeathsInARow = 0;
  return {
    delayAfter(ranForMs) {
      if (ranForMs >= settings.stableAfterMs) {
        earlyDeathsInARow = 0;
        return 0;
      }
      earlyDeathsInARow += 1;
      // 2 ** 30 already passes any ceiling in milliseconds; stop doubling there.
      const factor = 2 ** Math.min(earlyDeathsInARow - 1, 30);
      return Math.min(settings.maxDelayMs, settings.firstDelayMs * factor);
    },
  };
}
