import { performance } from 'node:perf_hooks';

/**
 * The one deadline every FHIR request of a hook call's fallback shares (first reads and next pages
 * alike), plus each request's own timeout, counted in time the FHIR server actually had.
 *
 * Why not `AbortSignal.timeout`: on a busy event loop a timer fires late, and Node runs expired
 * timers before it reads the sockets. An answer that arrived while the service was busy with its own
 * work would be thrown away as "did not answer in time", and a request the service had not even sent
 * yet would be charged for the wait. So the deadline checks itself in short steps; a step that runs
 * late measures a stall of the service (not of the server), and that stall is not charged to the
 * servers, up to `maxStallCreditMs` in all. When time is up, pending I/O gets one pass
 * (`setImmediate`) before anything is aborted, so an answer already in hand is used.
 */

/** What the deadline needs of the runtime; injected so the stall arithmetic can be tested without waiting. */
export interface DeadlineTimers {
  /** A monotonic time in milliseconds. */
  readonly now: () => number;
  /** Runs `run` after about `ms` milliseconds; returns a cancel function. */
  readonly setTimer: (run: () => void, ms: number) => () => void;
  /** Runs `run` once the I/O already pending has been read (Node's check phase). */
  readonly afterPendingIo: (run: () => void) => void;
}

export const NODE_TIMERS: DeadlineTimers = {
  now: () => performance.now(),
  setTimer: (run, ms) => {
    const timer = setTimeout(run, ms);
    return () => clearTimeout(timer);
  },
  afterPendingIo: (run) => {
    setImmediate(run);
  },
};

export interface DeadlineOptions {
  /** Time the FHIR servers get for all requests together, in milliseconds. */
  readonly budgetMs: number;
  /** How often the deadline checks itself, in milliseconds; also the finest stall it can see. */
  readonly checkEveryMs?: number;
  /** Lateness of a check not counted as a stall (timer jitter on a loaded machine), in milliseconds. */
  readonly toleranceMs?: number;
  /** Most stall time credited in all, in milliseconds; defaults to `budgetMs` (worst case twice the budget). */
  readonly maxStallCreditMs?: number;
}

/** 100 ms steps, 25 ms of jitter forgiven (common practice for event-loop lag monitors). */
export const DEFAULT_CHECK_EVERY_MS = 100;
export const DEFAULT_TOLERANCE_MS = 25;

export interface FallbackDeadline {
  /** Aborted once the budget, counted from the start, is spent (checked from the first request on). */
  readonly signal: AbortSignal;
  /**
   * A signal for one FHIR request: aborted after `timeoutMs` of the server's time, or with the whole
   * deadline. Call `release` when the request is over (answered or failed).
   */
  request(timeoutMs: number): { readonly signal: AbortSignal; readonly release: () => void };
  /** Milliseconds of the service's own stalls credited so far. */
  stalledMs(): number;
  /** Stops checking; the gather is over. */
  close(): void;
}

interface OpenRequest {
  readonly controller: AbortController;
  readonly startedAt: number;
  readonly stalledAtStart: number;
  readonly timeoutMs: number;
  /** Its time is up; it is aborted after one pass of pending I/O unless it finishes in that pass. */
  timingOut: boolean;
}

function timeoutError(): Error {
  return new DOMException('the FHIR server did not answer in time', 'TimeoutError');
}

export function startFallbackDeadline(options: DeadlineOptions, timers: DeadlineTimers = NODE_TIMERS): FallbackDeadline {
  const checkEveryMs = options.checkEveryMs ?? DEFAULT_CHECK_EVERY_MS;
  const toleranceMs = options.toleranceMs ?? DEFAULT_TOLERANCE_MS;
  const maxStallCreditMs = options.maxStallCreditMs ?? options.budgetMs;
  const overall = new AbortController();
  const open = new Set<OpenRequest>();
  const startedAt = timers.now();
  let stalled = 0;
  let dueAt = startedAt;
  let cancelTimer: (() => void) | undefined;
  let closed = false;
  let expiring = false;

  /** Time a request (or the whole deadline) has used: wall time less the stalls since it began. */
  const used = (since: number, stalledBefore: number, at: number): number => at - since - (stalled - stalledBefore);

  function abortRequest(request: OpenRequest): void {
    open.delete(request);
    request.controller.abort(timeoutError());
  }

  function expire(): void {
    expiring = true;
    // One pass of pending I/O first: an answer already read off the socket is used, not discarded.
    timers.afterPendingIo(() => {
      overall.abort(timeoutError());
      for (const request of [...open]) {
        abortRequest(request);
      }
    });
  }

  function schedule(at: number): void {
    if (closed || expiring) {
      return;
    }
    let wait = Math.min(checkEveryMs, options.budgetMs - used(startedAt, 0, at));
    for (const request of open) {
      if (request.timingOut) {
        continue;
      }
      wait = Math.min(wait, request.timeoutMs - used(request.startedAt, request.stalledAtStart, at));
    }
    wait = Math.max(1, Math.ceil(wait));
    dueAt = at + wait;
    cancelTimer = timers.setTimer(check, wait);
  }

  function check(): void {
    cancelTimer = undefined;
    if (closed) {
      return;
    }
    const at = timers.now();
    const late = at - dueAt - toleranceMs;
    if (late > 0) {
      stalled = Math.min(maxStallCreditMs, stalled + late);
    }
    if (used(startedAt, 0, at) >= options.budgetMs) {
      expire();
      return;
    }
    for (const request of open) {
      if (!request.timingOut && used(request.startedAt, request.stalledAtStart, at) >= request.timeoutMs) {
        request.timingOut = true;
        timers.afterPendingIo(() => {
          if (open.has(request)) {
            abortRequest(request);
          }
        });
      }
    }
    schedule(at);
  }

  // No timer until the first request: most hook calls bring full prefetch and never ask anything.
  let checking = false;

  return {
    signal: overall.signal,
    request(timeoutMs) {
      const controller = new AbortController();
      if (overall.signal.aborted) {
        controller.abort(timeoutError());
        return { signal: controller.signal, release: () => undefined };
      }
      const at = timers.now();
      const entry: OpenRequest = { controller, startedAt: at, stalledAtStart: stalled, timeoutMs, timingOut: false };
      open.add(entry);
      if (!checking) {
        checking = true;
        schedule(at);
      } else if (cancelTimer !== undefined && at + timeoutMs < dueAt) {
        // A request shorter than the next check must still be checked in time.
        cancelTimer();
        schedule(at);
      }
      return { signal: controller.signal, release: () => open.delete(entry) };
    },
    stalledMs: () => stalled,
    close() {
      closed = true;
      cancelTimer?.();
      cancelTimer = undefined;
      open.clear();
    },
  };
}
