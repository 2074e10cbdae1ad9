import { configDefaults, defineConfig } from 'vitest/config';

/**
 * Test files that start something and wait on it: a server, a child process, the store's worker
 * thread, Chromium, PostgreSQL, a file watcher, or timers (real or faked). Several of them check
 * deadlines, load shedding, fairness, a cluster or a cold start, so they run as the whole suite used
 * to: one file at a time, each in a fresh process, after the other files, with nothing of this suite
 * competing with them for the 2 cores of a CI machine.
 */
const WAITING = [
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

export default defineConfig({
  test: {
    setupFiles: ['tests/setup.ts'],
    testTimeout: 20_000,
    hookTimeout: 30_000,
    projects: [
      {
        extends: true,
        test: {
          // Computing and reading files only. Importing the engine, its schemas and the policies took
          // most of these files' time when each file had a fresh process; here each worker imports
          // them once (isolate: false) and two workers share the files.
          name: 'compute',
          include: ['tests/**/*.test.ts'],
          exclude: [...configDefaults.exclude, ...WAITING],
          isolate: false,
          maxWorkers: 2,
          // Only a guard against a hang (none of these files times anything): with two files at once
          // on a busy 2-core machine the longest generated-input tests took 9 s, half the 20 s default.
          testTimeout: 60_000,
          sequence: { groupOrder: 0 },
        },
      },
      {
        extends: true,
        test: {
          name: 'waiting',
          globalSetup: ['tests/store-worker-setup.ts'],
          include: WAITING.map((pattern) => (pattern.endsWith('.ts') ? pattern : `${pattern}/*.test.ts`)),
          maxWorkers: 1,
          sequence: { groupOrder: 1 },
        },
      },
    ],
  },
});
