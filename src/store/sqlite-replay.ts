import type Database from 'better-sqlite3';
import type { ReplayCheck } from './store.js';

/** Expired ids deleted on each call: bounded work per request; purge removes the rest. */
const SWEEP_PER_CALL = 8;

export type CheckAndRememberNow = (
  clientKey: string,
  jti: string,
  expiresAt: number,
  now: Date,
  maxPerClient: number,
) => ReplayCheck;

/**
 * The replay cache in the store (CDS Hooks 2.0 §Trusting CDS Clients: `jti` is a nonce for replay
 * protection; RFC 7519 §4.1.7), so a token id stays refused across restarts for the token's life.
 * Each client has its own share: a client holding `maxPerClient` unexpired ids is refused new ones
 * (never by forgetting a live id, which would let its token be replayed) and no other client notices.
 */
export function prepareReplayCheck(db: Database.Database): CheckAndRememberNow {
  const sweep = db.prepare<[number, number]>(
    `DELETE FROM replay_id WHERE rowid IN
      (SELECT rowid FROM replay_id WHERE expires_at_ms <= ? ORDER BY expires_at_ms LIMIT ?)`,
  );
  const held = db.prepare<[string, string], { expires_at_ms: number }>(
    'SELECT expires_at_ms FROM replay_id WHERE client_key = ? AND jti = ?',
  );
  const share = db.prepare<[string, number], { n: number; oldest: number | null }>(
    `SELECT count(*) AS n, min(expires_at_ms) AS oldest FROM replay_id
      WHERE client_key = ? AND expires_at_ms > ?`,
  );
  const remember = db.prepare<[string, string, number]>(
    `INSERT INTO replay_id (client_key, jti, expires_at_ms) VALUES (?, ?, ?)
      ON CONFLICT (client_key, jti) DO UPDATE SET expires_at_ms = excluded.expires_at_ms`,
  );

  const check = db.transaction(
    (clientKey: string, jti: string, expiresAt: number, nowMs: number, maxPerClient: number): ReplayCheck => {
      sweep.run(nowMs, SWEEP_PER_CALL);
      const heldUntil = held.get(clientKey, jti)?.expires_at_ms;
      if (heldUntil !== undefined && heldUntil > nowMs) {
        return { kind: 'replayed' };
      }
      const current = share.get(clientKey, nowMs);
      if (current !== undefined && current.n >= maxPerClient) {
        const oldest = current.oldest ?? nowMs;
        return { kind: 'client-full', retryAfterS: Math.max(1, Math.ceil((oldest - nowMs) / 1000)) };
      }
      remember.run(clientKey, jti, Math.trunc(expiresAt));
      return { kind: 'fresh' };
    },
  );

  return (clientKey, jti, expiresAt, now, maxPerClient) => {
    if (!Number.isInteger(maxPerClient) || maxPerClient < 1) {
      throw new RangeError('store: maxPerClient must be a positive integer');
    }
    if (!Number.isFinite(expiresAt) || !Number.isFinite(now.getTime())) {
      throw new RangeError('store: expiresAt and now must be finite times');
    }
    return check.immediate(clientKey, jti, expiresAt, now.getTime(), maxPerClient);
  };
}
