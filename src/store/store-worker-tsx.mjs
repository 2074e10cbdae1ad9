// The store's worker thread when the service runs from TypeScript through tsx (tests, `npm run dev`):
// Node 20 does not apply `--import tsx` to a worker's own entry file, so this plain module registers
// tsx's loader inside the worker and then loads the TypeScript entry. The build runs
// store-worker.js directly and never uses this file.
import { register } from 'tsx/esm/api';

register();
await import('./store-worker.ts');
