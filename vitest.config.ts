import { configDefaults, defineConfig } from 'vitest/config';
import { WAITING } from './tests/test-groups.js';

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
