/**
 * Test files that start something and wait on it: a server, a child process, the store's worker
 * thread, Chromium, PostgreSQL, a file watcher, or timers (real or faked). Several of them check
 * deadlines, load shedding, fairness, a cluster or a cold start, so they run as the whole suite used
 * to: one file at a time, each in a fresh process, after the other files, with nothing of this suite
 * competing with them for the 2 cores of a CI machine.
 */
export const WAITING = [
  'tests/http/**',
  'tests/bench/**',
  'tests/browser/**',
  'tests/cluster/**',
  'tests/store/**',
  'tests/security/**',
  'tests/live-policy/**',
  'tests/demo/**',
  'tests/build/package-scripts.test.ts',
  'tests/cli/simulate-memory.test.ts',
  'tests/cli/store-migrate-command.test.ts',
  'tests/log/refusal-limiter.test.ts',
  'tests/retention-purge.test.ts',
];

/** Whether a test file (path from the checkout, with forward slashes) is in the waiting group. */
export function isWaiting(file: string): boolean {
  return WAITING.some((pattern) => (pattern.endsWith('/**') ? file.startsWith(pattern.slice(0, -2)) : file === pattern));
}
