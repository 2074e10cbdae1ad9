import { Worker } from 'node:worker_threads';
import { openSqliteDatabase, type SqliteStoreOptions } from './sqlite-store.js';
import type { Store } from './store.js';
import type { StoreReply, StoreRequest } from './worker-protocol.js';

/**
 * The store with its SQLite connection on a thread of its own (store-worker.ts), behind the same
 * `Store` interface. With `synchronous = FULL` every commit waits for an fsync; on the event loop
 * that wait held up every HTTP call in flight, here only the calls whose writes are in that commit
 * wait for it. Durability is unchanged: the worker answers a write only once it is committed, and
 * the promise here resolves only on that answer.
 *
 * Opening checks the file on this thread first, synchronously (WAL, migrations, a schema too new, a
 * file that is not a database), so a store that cannot open is refused at start as before; only
 * then is the file handed to the worker.
 */

/**
 * The worker thread to start. Built, it is store-worker.js. Under tsx (tests, `npm run dev`) it is
 * TypeScript, and Node 20 does not apply `--import tsx` in a worker's execArgv to the worker's own
 * entry file ("Unknown file extension .ts"), so store-worker-tsx.mjs registers tsx's loader in the
 * worker first and then imports the entry.
 */
function startWorker(options: SqliteStoreOptions): Worker {
  const workerData = { ...options };
  const typescript = import.meta.url.endsWith('.ts');
  const entry = new URL(typescript ? './store-worker-tsx.mjs' : './store-worker.js', import.meta.url);
  return new Worker(entry, { workerData, execArgv: [] });
}

function rebuildError(error: Extract<StoreReply, { ok: false }>['error']): Error {
  const rebuilt =
    error.name === 'RangeError'
      ? new RangeError(error.message)
      : error.name === 'TypeError'
        ? new TypeError(error.message)
        : new Error(error.message);
  if (rebuilt.name !== error.name) {
    rebuilt.name = error.name;
  }
  return error.code === undefined ? rebuilt : Object.assign(rebuilt, { code: error.code });
}

interface Waiting {
  readonly resolve: (value: unknown) => void;
  readonly reject: (reason: unknown) => void;
}

export function openWorkerStore(options: SqliteStoreOptions): Store {
  // Throws here, on the caller's thread, for anything that stops the store from opening.
  openSqliteDatabase(options).close();

  const worker = startWorker(options);
  const waiting = new Map<number, Waiting>();
  let nextId = 1;
  let stopped: Error | undefined;
  let closing: Promise<void> | undefined;
  // The thread keeps the process alive only while an answer is awaited, so an idle store that was
  // never closed does not hold a finished process open, and a pending write is never dropped.
  worker.unref();

  const settleAll = (reason: Error): void => {
    stopped ??= reason;
    for (const [id, call] of waiting) {
      waiting.delete(id);
      call.reject(reason);
    }
  };
  worker.on('message', (reply: StoreReply) => {
    const call = waiting.get(reply.id);
    if (call === undefined) {
      return;
    }
    waiting.delete(reply.id);
    if (waiting.size === 0) {
      worker.unref();
    }
    if (reply.ok) {
      call.resolve(reply.value);
    } else {
      call.reject(rebuildError(reply.error));
    }
  });
  worker.on('error', (error) => {
    settleAll(error instanceof Error ? error : new Error(String(error)));
  });
  worker.on('exit', (code) => {
    settleAll(new Error(`store: the store's thread stopped (exit code ${String(code)})`));
  });

  const send = <T>(method: keyof Store, args: readonly unknown[]): Promise<T> => {
    if (stopped !== undefined) {
      return Promise.reject(stopped);
    }
    const id = nextId;
    nextId += 1;
    return new Promise<T>((resolve, reject) => {
      waiting.set(id, { resolve: resolve as (value: unknown) => void, reject });
      worker.ref();
      worker.postMessage({ id, method, args } satisfies StoreRequest);
    });
  };

  return {
    recordAdvisories: (records) => send('recordAdvisories', [records]),
    recordFeedback: (client, items, receivedAt, limits) => send('recordFeedback', [client, items, receivedAt, limits]),
    checkAndRememberJti: (clientKey, jti, expiresAt, now, maxPerClient) =>
      send('checkAndRememberJti', [clientKey, jti, expiresAt, now, maxPerClient]),
    rememberJtiAndRecordAdvisories: (token, records) => send('rememberJtiAndRecordAdvisories', [token, records]),
    listAdvisories: (query) => send('listAdvisories', [query]),
    getAdvisory: (cardUuid) => send('getAdvisory', [cardUuid]),
    listUnmatchedFeedback: (limit, offset) => send('listUnmatchedFeedback', [limit, offset]),
    summarise: (query) => send('summarise', [query]),
    facets: () => send('facets', []),
    purge: (cutoff, now) => send('purge', [cutoff, now]),
    isEmpty: () => send('isEmpty', []),
    readiness: () => send('readiness', []),
    close: () => {
      // The worker commits what is queued, checkpoints the WAL and closes before it answers.
      closing ??= send<void>('close', []).then(async () => {
        stopped = new Error('store: the store is closed');
        await worker.terminate();
      });
      return closing;
    },
  };
}
