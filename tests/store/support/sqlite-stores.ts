import { afterEach } from 'vitest';
import { openSqliteStore } from '../../../src/store/sqlite-store.js';
import type { Store } from '../../../src/store/store.js';

/**
 * Opens SQLite stores (in memory unless a file is given) that are closed after each test; call at a
 * test file's top level.
 */
export function useSqliteStores(): (file?: string) => Store {
  const open: Store[] = [];
  afterEach(async () => {
    for (const store of open.splice(0)) {
      await store.close();
    }
  });
  return (file = ':memory:') => {
    const store = openSqliteStore({ file });
    open.push(store);
    return store;
  };
}
