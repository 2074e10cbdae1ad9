import type { Logger } from '../log/logger.js';
import type { Store } from '../store/store.js';
import type { ReplayCache } from './replay-cache.js';

/**
 * The replay cache in the store: a `jti` seen stays refused across restarts for its token's lifetime,
 * and each client may hold at most `maxPerClient` unexpired ids, so one client that mints tokens
 * fast is refused (429) while every other client goes on as before. A store that fails refuses the
 * token (fail closed, 503): a replay check that cannot be made is not a pass.
 */
export interface StoreReplayCacheOptions {
  readonly store: Store;
  readonly maxPerClient: number;
  readonly clock: () => Date;
  readonly logger: Logger;
}

export function createStoreReplayCache(options: StoreReplayCacheOptions): ReplayCache {
  if (!Number.isInteger(options.maxPerClient) || options.maxPerClient < 1) {
    throw new Error('createStoreReplayCache: maxPerClient must be a positive integer');
  }
  return {
    async checkAndRemember(clientKey, jti, expiresAt) {
      try {
        return await options.store.checkAndRememberJti(clientKey, jti, expiresAt, options.clock(), options.maxPerClient);
      } catch (error) {
        // The type only: a store error's message may quote the key, which names the client and token.
        const errorType = error instanceof Error ? error.name : typeof error;
        options.logger.error({ replayCache: 'store-failed', errorType }, 'replay check failed; token refused');
        return { kind: 'unavailable' };
      }
    },
  };
}
