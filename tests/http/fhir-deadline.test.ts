import { describe, expect, it } from 'vitest';
import { startFallbackDeadline, type DeadlineTimers } from '../../src/http/fhir-deadline.js';

/**
 * A hand-driven clock: time moves only when the test says, and a timer fires only when the test runs
 * it, as late as the test likes. So the stall arithmetic is checked without waiting on anything.
 */
function manualTimers(): DeadlineTimers & {
  advanceTo(ms: number): void;
  /** Runs the pending timer at the current time (late, if time has passed its due time). */
  fireTimer(): void;
  /** Runs what waits for the pending I/O pass. */
  runIoPass(): void;
  readonly pendingTimerMs: () => number | undefined;
} {
  let time = 0;
  let timer: { run: () => void; dueAt: number } | undefined;
  let ioPass: (() => void)[] = [];
  return {
    now: () => time,
    setTimer: (run, ms) => {
      const entry = { run, dueAt: time + ms };
      timer = entry;
      return () => {
        if (timer === entry) timer = undefined;
      };
    },
    afterPendingIo: (run) => {
      ioPass.push(run);
    },
    advanceTo: (ms) => {
      time = ms;
    },
    fireTimer: () => {
      const entry = timer;
      timer = undefined;
      entry?.run();
    },
    runIoPass: () => {
      const runs = ioPass;
      ioPass = [];
      for (const run of runs) run();
    },
    pendingTimerMs: () => timer?.dueAt,
  };
}

/** Fires the timer whenever it is due, up to `untilMs`, as a responsive event loop would. */
function runOnTime(timers: ReturnType<typeof manualTimers>, untilMs: number): void {
  for (let due = timers.pendingTimerMs(); due !== undefined && due <= untilMs; due = timers.pendingTimerMs()) {
    timers.advanceTo(due);
    timers.fireTimer();
  }
  timers.advanceTo(untilMs);
}

describe('startFallbackDeadline', () => {
  it('expires at the budget on a responsive event loop, after one pass of pending I/O', () => {
    const timers = manualTimers();
    const deadline = startFallbackDeadline({ budgetMs: 2000 }, timers);
    deadline.request(60_000);
    runOnTime(timers, 1999);
    expect(deadline.signal.aborted).toBe(false);
    runOnTime(timers, 2000);
    // The deadline is due, but an answer already read off the socket gets its chance first.
    expect(deadline.signal.aborted).toBe(false);
    timers.runIoPass();
    expect(deadline.signal.aborted).toBe(true);
    expect(deadline.stalledMs()).toBe(0);
  });

  it('aborts every open request with the deadline, as a timeout', () => {
    const timers = manualTimers();
    const deadline = startFallbackDeadline({ budgetMs: 500 }, timers);
    const first = deadline.request(1500);
    runOnTime(timers, 300);
    const page = deadline.request(1500);
    runOnTime(timers, 500);
    timers.runIoPass();
    expect([first.signal.aborted, page.signal.aborted]).toStrictEqual([true, true]);
    expect((first.signal.reason as Error).name).toBe('TimeoutError');
    // A request asked for after the deadline starts aborted.
    expect(deadline.request(1500).signal.aborted).toBe(true);
  });

  it('spares a request that finishes in the last pass of pending I/O', () => {
    const timers = manualTimers();
    const deadline = startFallbackDeadline({ budgetMs: 500 }, timers);
    const answered = deadline.request(1500);
    runOnTime(timers, 500);
    answered.release(); // the answer was read in the I/O pass, before the abort runs
    timers.runIoPass();
    expect(answered.signal.aborted).toBe(false);
    expect(deadline.signal.aborted).toBe(true);
  });

  it("times one request out on its own timeout, leaving the others and the deadline running", () => {
    const timers = manualTimers();
    const deadline = startFallbackDeadline({ budgetMs: 2000 }, timers);
    const slow = deadline.request(150);
    const other = deadline.request(1500);
    runOnTime(timers, 150);
    timers.runIoPass();
    expect([slow.signal.aborted, other.signal.aborted, deadline.signal.aborted]).toStrictEqual([true, false, false]);
  });

  it('does not charge the servers for time the service itself was stalled', () => {
    const timers = manualTimers();
    const deadline = startFallbackDeadline({ budgetMs: 300 }, timers);
    const request = deadline.request(300);
    // The event loop is blocked from 0 to 400 ms: the first check, due at 100 ms, runs at 400 ms.
    timers.advanceTo(400);
    timers.fireTimer();
    timers.runIoPass();
    expect(deadline.signal.aborted).toBe(false);
    expect(request.signal.aborted).toBe(false);
    // 100 ms of the budget had passed before the stall; 275 ms of it (beyond 25 ms of jitter) is credited.
    expect(deadline.stalledMs()).toBe(275);
    // The servers' 300 ms are up at 300 + 275 = 575 ms of wall time.
    runOnTime(timers, 574);
    timers.runIoPass();
    expect(deadline.signal.aborted).toBe(false);
    runOnTime(timers, 575);
    timers.runIoPass();
    expect(deadline.signal.aborted).toBe(true);
  });

  it('credits at most maxStallCreditMs of stalls, so the deadline still ends', () => {
    const timers = manualTimers();
    const deadline = startFallbackDeadline({ budgetMs: 300, maxStallCreditMs: 100 }, timers);
    deadline.request(60_000);
    timers.advanceTo(10_000);
    timers.fireTimer();
    expect(deadline.stalledMs()).toBe(100);
    timers.runIoPass();
    expect(deadline.signal.aborted).toBe(true);
  });

  describe('edge cases', () => {
    it('sets no timer until the first request, and counts the budget from its start', () => {
      const timers = manualTimers();
      const deadline = startFallbackDeadline({ budgetMs: 2000 }, timers);
      expect(timers.pendingTimerMs()).toBeUndefined();
      timers.advanceTo(500);
      deadline.request(60_000);
      runOnTime(timers, 2000);
      timers.runIoPass();
      expect(deadline.signal.aborted).toBe(true);
    });

    it('forgives timer jitter within the tolerance', () => {
      const timers = manualTimers();
      const deadline = startFallbackDeadline({ budgetMs: 2000, toleranceMs: 25 }, timers);
      deadline.request(60_000);
      for (let step = 0; step < 5; step += 1) {
        const due = timers.pendingTimerMs() ?? 0;
        timers.advanceTo(due + 20);
        timers.fireTimer();
      }
      expect(deadline.stalledMs()).toBe(0);
    });

    it('checks a request whose timeout is shorter than the checking step in time', () => {
      const timers = manualTimers();
      const deadline = startFallbackDeadline({ budgetMs: 2000, checkEveryMs: 100 }, timers);
      deadline.request(60_000);
      runOnTime(timers, 10);
      deadline.request(30);
      expect(timers.pendingTimerMs()).toBe(40);
    });

    it('stops checking once closed', () => {
      const timers = manualTimers();
      const deadline = startFallbackDeadline({ budgetMs: 2000 }, timers);
      deadline.request(60_000);
      expect(timers.pendingTimerMs()).toBeDefined();
      deadline.close();
      expect(timers.pendingTimerMs()).toBeUndefined();
      runOnTime(timers, 5000);
      timers.runIoPass();
      expect(deadline.signal.aborted).toBe(false);
    });
  });
});
