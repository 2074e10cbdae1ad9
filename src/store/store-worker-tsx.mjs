// The store's worker thread when the service runs from TypeScript through tsx (tests, `npm run dev`):
// Node 20 does not apply `--import tsx` to a worker's own entry file, so this plain module registers
// tsx's loader inside the worker and then loads the TypeScript entry. The build runs
// store-worker.js directly and never uses this file.
//
// A test run transpiles the entry once beforehand (tests/store-worker-setup.ts) and names it in
// TEST_STORE_WORKER_ENTRY: registering tsx took a second or more of every store a test opened.
import { env } from 'node:process';

const transpiled = env.TEST_STORE_WORKER_ENTRY;
if (transpiled !== undefined && transpiled !== '') {
  await import(transpiled);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import('./store-worker.ts');
}
