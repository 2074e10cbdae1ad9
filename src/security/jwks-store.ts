import { fetchJwks, type JwksFetchFailure, type JwksFetchOptions } from './fetch-jwks.js';
import type { KeySet, PreparedKey } from './jwk-keys.js';

/**
 * Remote JWK Sets (a client's `jwksUrl`, or an allowlisted `jku`), cached per URL for `ttlMs`. A
 * failed fetch keeps the keys already held, and the next TTL-driven attempt for that URL waits
 * `minRefreshIntervalMs`.
 *
 * A `kid` the cached set lacks may be a key the client has just rotated in (CDS Hooks 2.0 §Trusting
 * CDS Clients), so it triggers a refresh unless a fetch made since the token arrived has already looked
 * for it. A `kid` a fetch found absent is remembered as absent (per URL, at most `MAX_ABSENT_KIDS` of
 * them) for `minRefreshIntervalMs`, so repeating it costs nothing. And an issuer's tokens trigger at
 * most `maxKidRefreshesPerInterval` such refreshes per `minRefreshIntervalMs`, so a stream of made-up
 * kids cannot turn the service into a load generator against the client's key server. One junk kid
 * therefore no longer locks out the client's real new key for an interval; only a flood of distinct
 * junk kids, past the per-issuer allowance, can delay it, and never past the interval.
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
  /**
   * Least time between two TTL-driven fetches of one URL after a failure; the window for the
   * per-issuer allowance of unknown-kid refreshes; how long a kid found absent stays remembered.
   */
  readonly minRefreshIntervalMs: number;
  /** Unknown-kid refreshes per issuer per `minRefreshIntervalMs`; defaults to `DEFAULT_KID_REFRESHES_PER_INTERVAL`. */
  readonly maxKidRefreshesPerInterval?: number;
  /** For the operator's log: what was fetched, or why not. Never keys or bodies. */
  readonly onEvent?: (event: JwksEvent) => void;
}

/**
 * A few unknown-kid refreshes per issuer per interval (common practice for rate limits: a small burst,
 * not one): enough for a junk kid or two and a real rotation in the same minute, while a flood of
 * made-up kids costs the client's key server at most this many fetches a minute.
 */
export const DEFAULT_KID_REFRESHES_PER_INTERVAL = 5;

/** Kids remembered as absent per URL; the oldest is forgotten first. */
export const MAX_ABSENT_KIDS = 256;

interface Entry {
  keys: KeySet | undefined;
  /** Fetches started so far: a fetch numbered above a token's arrival count has looked for its kid. */
  fetchesStarted: number;
  /** Kids a fetch looked for and did not find, with when. */
  readonly absent: Map<string, number>;
  fetchedAt: number | undefined;
  lastAttemptAt: number | undefined;
  lastFailure: JwksFetchFailure | undefined;
  inflight: Promise<void> | undefined;
}

export function createJwksStore(options: JwksStoreOptions): JwksStore {
  const entries = new Map<string, Entry>();
  /** Per issuer, when each unknown-kid refresh of the current interval was made. */
  const kidRefreshes = new Map<string, number[]>();
  const maxKidRefreshes = options.maxKidRefreshesPerInterval ?? DEFAULT_KID_REFRESHES_PER_INTERVAL;
  const now = (): number => options.clock().getTime();

  function entryFor(url: string): Entry {
    let entry = entries.get(url);
    if (entry === undefined) {
      entry = {
        keys: undefined,
        fetchesStarted: 0,
        absent: new Map(),
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
    entry.fetchesStarted += 1;
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

  /** Takes one of the issuer's unknown-kid refreshes for this interval, if any is left. */
  function takeKidRefresh(issuer: string, at: number): boolean {
    const recent = (kidRefreshes.get(issuer) ?? []).filter((t) => at - t < options.minRefreshIntervalMs);
    if (recent.length >= maxKidRefreshes) {
      kidRefreshes.set(issuer, recent);
      return false;
    }
    recent.push(at);
    kidRefreshes.set(issuer, recent);
    return true;
  }

  function knownAbsent(entry: Entry, kid: string, at: number): boolean {
    const since = entry.absent.get(kid);
    return since !== undefined && at - since < options.minRefreshIntervalMs;
  }

  function rememberAbsent(entry: Entry, kid: string): void {
    if (entry.lastFailure !== undefined) {
      // The last fetch failed: nobody looked, so nothing is known about this kid.
      return;
    }
    entry.absent.delete(kid);
    entry.absent.set(kid, now());
    if (entry.absent.size > MAX_ABSENT_KIDS) {
      const oldest = entry.absent.keys().next().value;
      if (oldest !== undefined) {
        entry.absent.delete(oldest);
      }
    }
  }

  return {
    async findKeys(url, kid, issuer) {
      const entry = entryFor(url);
      const at = now();
      const fetchesBefore = entry.fetchesStarted;
      const fresh = entry.fetchedAt !== undefined && at - entry.fetchedAt < options.ttlMs;
      if (entry.inflight !== undefined || (!fresh && mayAttempt(entry, at))) {
        await load(entry, url, issuer);
      }
      const first = lookup(entry, kid);
      if (first !== undefined) {
        return first;
      }
      if (entry.fetchesStarted === fetchesBefore) {
        // No fetch since this token arrived has looked for its kid.
        if (knownAbsent(entry, kid, at) || !takeKidRefresh(issuer, at)) {
          return { kind: 'unknown-kid' };
        }
        await load(entry, url, issuer);
      } else if (entry.inflight !== undefined) {
        // A fetch started since this token arrived is still under way: it looks for this kid too.
        await entry.inflight;
      }
      const found = lookup(entry, kid);
      if (found !== undefined) {
        return found;
      }
      rememberAbsent(entry, kid);
      return { kind: 'unknown-kid' };
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
