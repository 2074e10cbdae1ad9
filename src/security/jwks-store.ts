import { fetchJwks, type JwksFetchFailure, type JwksFetchOptions } from './fetch-jwks.js';
import type { KeySet, PreparedKey } from './jwk-keys.js';

/**
 * Remote JWK Sets (a client's `jwksUrl`, or an allowlisted `jku`), cached per URL for `ttlMs`. A
 * `kid` the cached set lacks triggers one refresh (key rotation: CDS Hooks 2.0 §Trusting CDS
 * Clients), at most once per `minRefreshIntervalMs` per issuer, so a stream of tokens with made-up
 * kids cannot turn the service into a load generator against the client's key server. A failed
 * fetch keeps the keys already held, and the next TTL-driven attempt for that URL waits the same
 * interval.
 */
export type KeyLookup =
  | { readonly kind: 'found'; readonly keys: readonly PreparedKey[] }
  | { readonly kind: 'unknown-kid' }
  | { readonly kind: 'unavailable'; readonly failure: JwksFetchFailure };

export interface JwksStore {
  /** The keys named `kid` in the set at `url`, fetched on behalf of `issuer`. */
  findKeys(url: string, kid: string, issuer: string): Promise<KeyLookup>;
}

export type JwksEvent =
  | { readonly kind: 'fetched'; readonly issuer: string; readonly keyCount: number; readonly skipped: number }
  | { readonly kind: 'fetch-failed'; readonly issuer: string; readonly failure: JwksFetchFailure };

export interface JwksStoreOptions extends JwksFetchOptions {
  readonly clock: () => Date;
  /** How long a fetched set is used before it is fetched again, in milliseconds. */
  readonly ttlMs: number;
  /** Least time between two fetches of one URL, and between two unknown-kid refreshes per issuer. */
  readonly minRefreshIntervalMs: number;
  /** For the operator's log: what was fetched, or why not. Never keys or bodies. */
  readonly onEvent?: (event: JwksEvent) => void;
}

interface Entry {
  keys: KeySet | undefined;
  fetchedAt: number | undefined;
  lastAttemptAt: number | undefined;
  lastFailure: JwksFetchFailure | undefined;
  inflight: Promise<void> | undefined;
}

export function createJwksStore(options: JwksStoreOptions): JwksStore {
  const entries = new Map<string, Entry>();
  const forcedAt = new Map<string, number>();
  const now = (): number => options.clock().getTime();

  function entryFor(url: string): Entry {
    let entry = entries.get(url);
    if (entry === undefined) {
      entry = {
        keys: undefined,
        fetchedAt: undefined,
        lastAttemptAt: undefined,
        lastFailure: undefined,
        inflight: undefined,
      };
      entries.set(url, entry);
    }
    return entry;
  }

  function mayAttempt(entry: Entry, at: number): boolean {
    return entry.lastAttemptAt === undefined || at - entry.lastAttemptAt >= options.minRefreshIntervalMs;
  }

  /** One fetch per URL at a time; callers arriving meanwhile wait for the same one. */
  function load(entry: Entry, url: string, issuer: string): Promise<void> {
    if (entry.inflight !== undefined) {
      return entry.inflight;
    }
    entry.lastAttemptAt = now();
    const run = async (): Promise<void> => {
      const outcome = await fetchJwks(url, options);
      if (outcome.kind === 'ok') {
        entry.keys = outcome.keys;
        entry.fetchedAt = now();
        entry.lastFailure = undefined;
        options.onEvent?.({ kind: 'fetched', issuer, keyCount: countKeys(outcome.keys), skipped: outcome.skipped });
      } else {
        entry.lastFailure = outcome.failure;
        options.onEvent?.({ kind: 'fetch-failed', issuer, failure: outcome.failure });
      }
    };
    entry.inflight = run().finally(() => {
      entry.inflight = undefined;
    });
    return entry.inflight;
  }

  function lookup(entry: Entry, kid: string): KeyLookup | undefined {
    if (entry.keys === undefined) {
      return { kind: 'unavailable', failure: entry.lastFailure ?? 'network' };
    }
    const keys = entry.keys.get(kid);
    return keys === undefined ? undefined : { kind: 'found', keys };
  }

  return {
    async findKeys(url, kid, issuer) {
      const entry = entryFor(url);
      const at = now();
      const fresh = entry.fetchedAt !== undefined && at - entry.fetchedAt < options.ttlMs;
      let loadedNow = false;
      if (entry.inflight !== undefined || (!fresh && mayAttempt(entry, at))) {
        await load(entry, url, issuer);
        loadedNow = true;
      }
      const first = lookup(entry, kid);
      if (first !== undefined) {
        return first;
      }
      const lastForced = forcedAt.get(issuer);
      const rateLimited = lastForced !== undefined && at - lastForced < options.minRefreshIntervalMs;
      if (loadedNow || rateLimited) {
        return { kind: 'unknown-kid' };
      }
      forcedAt.set(issuer, at);
      await load(entry, url, issuer);
      return lookup(entry, kid) ?? { kind: 'unknown-kid' };
    },
  };
}

function countKeys(keys: KeySet): number {
  let count = 0;
  for (const list of keys.values()) {
    count += list.length;
  }
  return count;
}
