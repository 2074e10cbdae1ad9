import { afterAll, afterEach, beforeEach } from 'vitest';
import type { Store } from '../../../src/store/store.js';
import type { StoreKind } from './store-kinds.js';

export interface StoreHarness {
  /** A fresh, empty store, closed (and its place removed) after the test. */
  readonly fresh: () => Promise<Store>;
  /** A new place for `at`, removed after the test. */
  readonly place: () => Promise<string>;
  /** A store on a place from `place()`, closed after the test. */
  readonly at: (place: string) => Promise<Store>;
}

/**
 * Call at the top of a `describe.each(STORE_KINDS)` block: skips the block's tests (saying why) when
 * the kind cannot run here, and closes every store and removes every place after each test.
 */
export function useStores(kind: StoreKind): StoreHarness {
  const open: Store[] = [];
  const places: string[] = [];
  beforeEach((context) => {
    if (kind.skipReason !== undefined) {
      context.skip(kind.skipReason);
    }
  });
  afterEach(async () => {
    for (const store of open.splice(0)) {
      await store.close();
    }
    for (const place of places.splice(0)) {
      await kind.dropPlace(place);
    }
  });
  afterAll(async () => {
    await kind.release();
  });
  const place = async (): Promise<string> => {
    const made = await kind.newPlace();
    places.push(made);
    return made;
  };
  const at = async (where: string): Promise<Store> => {
    const store = await kind.openAt(where);
    open.push(store);
    return store;
  };
  return { fresh: async () => at(await place()), place, at };
}
