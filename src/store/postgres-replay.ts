import type pg from 'pg';
import { LOCK_CLASS } from './postgres-pool.js';
import type { ReplayCheck } from './store.js';

/** Expired ids of the calling client deleted on each call: bounded work; purge removes the rest. */
const SWEEP_PER_CALL = 8;

/** The in-process queue key and the advisory-lock text of one client's replay ids. */
export function replayClientKey(clientKey: string): string {
  return JSON.stringify(['replay', clientKey]);
}

export function checkReplayArguments(expiresAt: number, now: Date, maxPerClient: number): void {
  if (!Number.isInteger(maxPerClient) || maxPerClient < 1) {
    throw new RangeError('store: maxPerClient must be a positive integer');
  }
  if (!Number.isFinite(expiresAt) || !Number.isFinite(now.getTime())) {
    throw new RangeError('store: expiresAt and now must be finite times');
  }
}

/** Takes one client's replay lock for the rest of the transaction. */
export async function lockReplayClient(client: pg.ClientBase, clientKey: string): Promise<void> {
  await client.query(`SELECT pg_advisory_xact_lock(${String(LOCK_CLASS.replay)}, hashtext($1))`, [
    replayClientKey(clientKey),
  ]);
}

/**
 * The replay cache on PostgreSQL, shared by every instance (CDS Hooks 2.0 §Trusting CDS Clients:
 * `jti` is a nonce for replay protection; RFC 7519 §4.1.7), with the same answers as on SQLite
 * (sqlite-replay.ts). Two guards, either enough alone for "fresh once":
 *
 * - the client's advisory lock, so the share count and the insert of one client are never
 *   interleaved with another instance's;
 * - the insert itself: `ON CONFLICT … DO UPDATE … WHERE` the held id has expired, so an id that is
 *   held and live changes no row, and a row count of 0 is answered `replayed`.
 *
 * Every change to a client's `replay_id` rows (and so to its `replay_client` count, kept by the
 * triggers) is made under that client's lock, here and in purge, so no two transactions lock the
 * same rows in opposite orders.
 */
export async function checkAndRememberJtiIn(
  client: pg.ClientBase,
  clientKey: string,
  jti: string,
  expiresAt: number,
  now: Date,
  maxPerClient: number,
): Promise<ReplayCheck> {
  const nowMs = now.getTime();
  await lockReplayClient(client, clientKey);
  await client.query(
    `DELETE FROM replay_id WHERE client_key = $1 AND jti IN
      (SELECT jti FROM replay_id WHERE client_key = $1 AND expires_at_ms <= $2 ORDER BY expires_at_ms LIMIT $3)`,
    [clientKey, nowMs, SWEEP_PER_CALL],
  );
  const held = await client.query<{ expires_at_ms: number }>(
    'SELECT expires_at_ms FROM replay_id WHERE client_key = $1 AND jti = $2',
    [clientKey, jti],
  );
  const heldUntil = held.rows[0]?.expires_at_ms;
  if (heldUntil !== undefined && heldUntil > nowMs) {
    return { kind: 'replayed' };
  }
  const count = async (): Promise<number> =>
    (await client.query<{ held: number }>('SELECT held FROM replay_client WHERE client_key = $1', [clientKey])).rows[0]
      ?.held ?? 0;
  // The count includes expired ids; only at the share are this client's expired ids dropped and the
  // count read again, so a client below its share costs one row read.
  if ((await count()) >= maxPerClient) {
    await client.query('DELETE FROM replay_id WHERE client_key = $1 AND expires_at_ms <= $2', [clientKey, nowMs]);
    if ((await count()) >= maxPerClient) {
      const oldest = await client.query<{ oldest: number }>(
        `SELECT expires_at_ms AS oldest FROM replay_id WHERE client_key = $1 AND expires_at_ms > $2
          ORDER BY expires_at_ms LIMIT 1`,
        [clientKey, nowMs],
      );
      const oldestMs = oldest.rows[0]?.oldest ?? nowMs;
      return { kind: 'client-full', retryAfterS: Math.max(1, Math.ceil((oldestMs - nowMs) / 1000)) };
    }
  }
  const remembered = await client.query(
    `INSERT INTO replay_id (client_key, jti, expires_at_ms) VALUES ($1, $2, $3)
      ON CONFLICT (client_key, jti) DO UPDATE SET expires_at_ms = excluded.expires_at_ms
        WHERE replay_id.expires_at_ms <= $4`,
    [clientKey, jti, Math.trunc(expiresAt), nowMs],
  );
  return remembered.rowCount === 1 ? { kind: 'fresh' } : { kind: 'replayed' };
}
