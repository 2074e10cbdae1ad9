import type { Store } from './store.js';

/** One call of a `Store` method, sent to the store's thread (store-worker.ts). */
export interface StoreRequest {
  readonly id: number;
  readonly method: keyof Store;
  readonly args: readonly unknown[];
}

/** Its answer: the method's result, or what its failure was. */
export type StoreReply =
  | { readonly id: number; readonly ok: true; readonly value: unknown }
  | {
      readonly id: number;
      readonly ok: false;
      readonly error: { readonly name: string; readonly message: string; readonly code?: string };
    };
