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
  // The sweep looks up the oldest expired ids, then deletes each by rowid: a DELETE taking its rowids
  // from a subquery opens a temporary table on every call, ids found or none. Measured on the 2-core
  // VM, one call a transaction: 17–21 µs a call against 6–12 µs with nothing expired, 28–40 against
  // 17–21 µs with one id expired.
  const expired = db
    .prepare<[number, number], number>(
      'SELECT rowid FROM replay_id WHERE expires_at_ms <= ? ORDER BY expires_at_ms LIMIT ?',
    )
    .pluck();
  const forget = db.prepare<[number]>('DELETE FROM replay_id WHERE rowid = ?');
  const held = db.prepare<[string, string], { expires_at_ms: number }>(
    'SELECT expires_at_ms FROM replay_id WHERE client_key = ? AND jti = ?',
  );
  const heldByClient = db.prepare<[string], { held: number }>(
    'SELECT held FROM replay_client WHERE client_key = ?',
  );
  const dropClientExpired = db.prepare<[string, number]>(
    'DELETE FROM replay_id WHERE client_key = ? AND expires_at_ms <= ?',
  );
  const oldestLive = db.prepare<[string, number], { oldest: number }>(
    `SELECT expires_at_ms AS oldest FROM replay_id WHERE client_key = ? AND expires_at_ms > ?
      ORDER BY expires_at_ms LIMIT 1`,
  );
  const remember = db.prepare<[string, string, number]>(
    `INSERT INTO replay_id (client_key, jti, expires_at_ms) VALUES (?, ?, ?)
      ON CONFLICT (client_key, jti) DO UPDATE SET expires_at_ms = excluded.expires_at_ms`,
  );

  const check = db.transaction(
    (clientKey: string, jti: string, expiresAt: number, nowMs: number, maxPerClient: number): ReplayCheck => {
      for (const rowid of expired.all(nowMs, SWEEP_PER_CALL)) {
        forget.run(rowid);
      }
      const heldUntil = held.get(clientKey, jti)?.expires_at_ms;
      if (heldUntil !== undefined && heldUntil > nowMs) {
        return { kind: 'replayed' };
      }
      // The count includes expired ids; only when it reaches the share are this client's expired ids
      // dropped and the live ones counted, so a client below its share costs one row read.
      if ((heldByClient.get(clientKey)?.held ?? 0) >= maxPerClient) {
        dropClientExpired.run(clientKey, nowMs);
        if ((heldByClient.get(clientKey)?.held ?? 0) >= maxPerClient) {
          const oldest = oldestLive.get(clientKey, nowMs)?.oldest ?? nowMs;
          return { kind: 'client-full', retryAfterS: Math.max(1, Math.ceil((oldest - nowMs) / 1000)) };
        }
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
