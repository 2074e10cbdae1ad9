import { parentPort, workerData } from 'node:worker_threads';
import { openSqliteStore, type SqliteStoreOptions } from './sqlite-store.js';
import type { Store } from './store.js';
import type { StoreReply, StoreRequest } from './worker-protocol.js';

/**
 * The store's own thread (worker-store.ts starts it): it owns the SQLite connection, so the fsync of
 * each commit waits here and not on the event loop that serves the HTTP calls. The requests that
 * arrive together are committed together (group-commit.ts runs in this thread); a reply is posted
 * only once its write is committed.
 */

const port = parentPort;
if (port === null) {
  throw new Error('store-worker: run as a worker thread, by worker-store.ts');
}
const store: Store = openSqliteStore(workerData as SqliteStoreOptions);

/** What crosses back for a failure: the type, the message and SQLite's code (`SQLITE_FULL`...). */
function describeError(error: unknown): Extract<StoreReply, { ok: false }>['error'] {
  if (error instanceof Error) {
    const code = (error as { code?: unknown }).code;
    return { name: error.name, message: error.message, ...(typeof code === 'string' ? { code } : {}) };
  }
  return { name: 'Error', message: String(error) };
}

/** The store's methods by name, as plain functions (the store's methods close over it, not `this`). */
const methods = store as unknown as Readonly<Record<StoreRequest['method'], (...args: readonly unknown[]) => Promise<unknown>>>;

function call(request: StoreRequest): Promise<unknown> {
  // The request names a method and carries the arguments it was called with on the other thread.
  return methods[request.method](...request.args);
}

port.on('message', (request: StoreRequest) => {
  call(request).then(
    (value) => {
      port.postMessage({ id: request.id, ok: true, value } satisfies StoreReply);
      if (request.method === 'close') {
        port.close();
      }
    },
    (error: unknown) => {
      port.postMessage({ id: request.id, ok: false, error: describeError(error) } satisfies StoreReply);
    },
  );
});
