/**
 * Repeated identical refusals from one client (the same client, the same reason) are logged
 * at most `maxLinesPerWindow` times per window; the rest are counted, and the next refusal after the
 * window ends carries the count of those not logged, in one summary line. A client sending junk in a
 * loop cannot fill the log, yet the operator still sees that it did, and how much.
 *
 * Pure: the caller passes the time. The table of clients is bounded; past `maxClients` an entry whose
 * window has ended is dropped, and if none has, the refusal is counted under one shared entry.
 */

/**
 * Who a refusal is counted against. Behind a shared proxy or load balancer every client has the same
 * socket address, so one noisy client would silence the others' refusal lines; a request that passed
 * authentication is therefore counted against its issuer. One that did not (a 401, or anything refused
 * before authentication) falls back to the address: the `iss` a token merely claims is not used, or a
 * stranger could claim a real client's issuer and use up that client's lines.
 */
export function refusalClientKey(who: {
  readonly authenticatedIss: string | undefined;
  readonly address: string | undefined;
}): string {
  return who.authenticatedIss === undefined
    ? `address ${who.address ?? 'unknown'}`
    : `issuer ${who.authenticatedIss}`;
}

export interface RefusalLimits {
  readonly maxLinesPerWindow: number;
  readonly windowMs: number;
  readonly maxClients: number;
}

/** 20 lines per client per reason per minute, for up to 10,000 clients at once (common practice). */
export const DEFAULT_REFUSAL_LIMITS: RefusalLimits = { maxLinesPerWindow: 20, windowMs: 60_000, maxClients: 10_000 };

export type RefusalDecision =
  /** Log this refusal. `suppressedBefore` counts those not logged in the window just ended (0: none). */
  | { readonly kind: 'log'; readonly suppressedBefore: number }
  /** Do not log it; it is counted. */
  | { readonly kind: 'suppress' };

interface Window {
  startedAtMs: number;
  logged: number;
  suppressed: number;
}

/** The key shared by clients that arrive while the table is full of live windows. */
export const OVERFLOW_KEY = '(many clients)';

export interface RefusalLimiter {
  readonly decide: (client: string, reason: string, nowMs: number) => RefusalDecision;
  /** Entries held now (for tests and for the bound). */
  readonly size: () => number;
}

export function createRefusalLimiter(limits: RefusalLimits = DEFAULT_REFUSAL_LIMITS): RefusalLimiter {
  const windows = new Map<string, Window>();

  const ended = (window: Window, nowMs: number): boolean => nowMs - window.startedAtMs >= limits.windowMs;

  function makeRoom(nowMs: number): boolean {
    for (const [key, window] of windows) {
      // An ended window with nothing suppressed has nothing left to report.
      if (ended(window, nowMs) && window.suppressed === 0) {
        windows.delete(key);
        return true;
      }
    }
    return false;
  }

  function decide(client: string, reason: string, nowMs: number): RefusalDecision {
    let key = `${client}\u0000${reason}`;
    let window = windows.get(key);
    if (window === undefined && windows.size >= limits.maxClients && !makeRoom(nowMs)) {
      key = `${OVERFLOW_KEY}\u0000${reason}`;
      window = windows.get(key);
    }
    if (window === undefined) {
      windows.set(key, { startedAtMs: nowMs, logged: 1, suppressed: 0 });
      return { kind: 'log', suppressedBefore: 0 };
    }
    if (ended(window, nowMs)) {
      const suppressedBefore = window.suppressed;
      window.startedAtMs = nowMs;
      window.logged = 1;
      window.suppressed = 0;
      return { kind: 'log', suppressedBefore };
    }
    if (window.logged < limits.maxLinesPerWindow) {
      window.logged += 1;
      return { kind: 'log', suppressedBefore: 0 };
    }
    window.suppressed += 1;
    return { kind: 'suppress' };
  }

  return { decide, size: () => windows.size };
}
