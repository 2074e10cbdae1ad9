import type pg from 'pg';
import { checkFeedbackArguments, feedbackClientKey, refreshLatest, writeFeedback } from './postgres-feedback.js';
import { migratePostgres, POSTGRES_MIGRATIONS, versionNow } from './postgres-migrations.js';
import {
  createKeyedQueue,
  createStorePool,
  describeDatabase,
  inTransaction,
  type PostgresStoreOptions,
} from './postgres-pool.js';
import { postgresQueries } from './postgres-queries.js';
import { checkAndRememberJtiIn, checkReplayArguments, lockReplayClient, replayClientKey } from './postgres-replay.js';
import { advisoryToRow, type AdvisoryRow } from './sqlite-rows.js';
import type { PurgeResult, Store } from './store.js';

export type { PostgresStoreOptions } from './postgres-pool.js';

/** The schema version this release writes on PostgreSQL (the same as SQLite's; a test keeps them equal). */
const LATEST_POSTGRES_VERSION: number = POSTGRES_MIGRATIONS.reduce((max, m) => Math.max(max, m.version), 0);

/**
 * Opens the store on a PostgreSQL database shared by every instance of the service, bringing the
 * schema up to date first (several instances may start at once: one migrates, the others wait; see
 * postgres-migrations.ts). Rejects with `StoreTooNewError` when the schema was written by a newer
 * release, and with the connection's error when the database cannot be reached; the pool is closed
 * either way.
 *
 * Same contract as the SQLite store (store.ts): each write is one transaction, and its promise
 * resolves only after COMMIT returned, with `synchronous_commit = on` (postgres-pool.ts). Writes that
 * spend one client's quota or share are ordered by that client's advisory lock across instances and
 * by a queue per client within one, so they are answered first come, first served, as on SQLite.
 */
export async function openPostgresStore(options: PostgresStoreOptions): Promise<Store> {
  const pool = createStorePool(options);
  const where = describeDatabase(options.connectionString, options.schema);
  try {
    const client = await pool.connect();
    try {
      await migratePostgres(client, where, options.schema === undefined ? {} : { schema: options.schema });
    } finally {
      client.release();
    }
  } catch (error) {
    await pool.end();
    throw error;
  }
  return assemblePostgresStore(pool);
}

function assemblePostgresStore(pool: pg.Pool): Store {
  const queries = postgresQueries(pool);
  const inOrder = createKeyedQueue();
  const inFlight = new Set<Promise<unknown>>();
  let closing: Promise<void> | undefined;

  /** Every call is counted until it settles, so close() ends the pool only after the last one. */
  function track<T>(work: () => Promise<T>): Promise<T> {
    if (closing !== undefined) {
      return Promise.reject(new Error('store: the store is closed'));
    }
    const running = work();
    const settled = running.then(
      () => undefined,
      () => undefined,
    );
    inFlight.add(settled);
    void settled.then(() => inFlight.delete(settled));
    return running;
  }

  return {
    recordAdvisories: (records) =>
      track(async () => {
        // Mapped first: a record that cannot be stored refuses the whole call before anything is sent.
        const rows = records.map(advisoryToRow);
        await inTransaction(pool, (client) => insertAdvisories(client, rows));
      }),
    recordFeedback: (identity, items, receivedAt, limits) =>
      track(async () => {
        checkFeedbackArguments(items, receivedAt, limits);
        return inOrder(feedbackClientKey(identity), () =>
          inTransaction(pool, (client) => writeFeedback(client, identity, items, receivedAt, limits)),
        );
      }),
    checkAndRememberJti: (clientKey, jti, expiresAt, now, maxPerClient) =>
      track(async () => {
        checkReplayArguments(expiresAt, now, maxPerClient);
        return inOrder(replayClientKey(clientKey), () =>
          inTransaction(pool, (client) => checkAndRememberJtiIn(client, clientKey, jti, expiresAt, now, maxPerClient)),
        );
      }),
    rememberJtiAndRecordAdvisories: (token, records) =>
      track(async () => {
        checkReplayArguments(token.expiresAt, token.now, token.maxPerClient);
        const rows = records.map(advisoryToRow);
        // Under the client's replay lock and queue, as checkAndRememberJti; the cards in the same
        // transaction, only after a fresh id.
        return inOrder(replayClientKey(token.clientKey), () =>
          inTransaction(pool, async (client) => {
            const check = await checkAndRememberJtiIn(
              client,
              token.clientKey,
              token.jti,
              token.expiresAt,
              token.now,
              token.maxPerClient,
            );
            if (check.kind === 'fresh') {
              await insertAdvisories(client, rows);
            }
            return check;
          }),
        );
      }),
    listAdvisories: (query) => track(() => queries.listAdvisories(query)),
    getAdvisory: (cardUuid) => track(() => queries.getAdvisory(cardUuid)),
    listUnmatchedFeedback: (limit, offset) => track(() => queries.listUnmatchedFeedback(limit, offset)),
    summarise: (query) => track(() => queries.summarise(query)),
    facets: () => track(() => queries.facets()),
    purge: (cutoff, now) => track(() => purge(pool, cutoff, now)),
    isEmpty: () => track(() => queries.isEmpty()),
    readiness: () =>
      track(async () => ({ schemaVersion: await versionNow(pool), latestSchemaVersion: LATEST_POSTGRES_VERSION })),
    close: () => {
      closing ??= (async () => {
        // Calls already made are answered (their writes committed or refused) before the pool ends.
        while (inFlight.size > 0) {
          await Promise.all(inFlight);
        }
        await pool.end();
      })();
      return closing;
    },
  };
}

/** The advisory columns in the order `advisoryValues` gives them. */
const ADVISORY_COLUMNS = `card_uuid, service_id, hook, hook_instance, client_iss, client_tenant, rule_id, rule_version,
  indicator, summary, detail, workings, suggestion_uuids_json, key_numbers_json, series_json, policy_id,
  policy_version, policy_content_hash, unit, issued_at, issued_at_ms, patient_key`;
const ADVISORY_COLUMN_COUNT = 22;

function advisoryValues(row: AdvisoryRow): unknown[] {
  return [
    row.card_uuid,
    row.service_id,
    row.hook,
    row.hook_instance,
    row.client_iss,
    row.client_tenant,
    row.rule_id,
    row.rule_version,
    row.indicator,
    row.summary,
    row.detail,
    row.workings,
    row.suggestion_uuids_json,
    row.key_numbers_json,
    row.series_json,
    row.policy_id,
    row.policy_version,
    row.policy_content_hash,
    row.unit,
    row.issued_at,
    row.issued_at_ms,
    row.patient_key,
  ];
}

/**
 * A hook call's cards in one statement (one round trip however many cards), inside the caller's
 * transaction; a card uuid already held is left as is.
 */
async function insertAdvisories(client: pg.ClientBase, rows: readonly AdvisoryRow[]): Promise<void> {
  const first = rows[0];
  if (first === undefined) {
    return;
  }
  const tuples = rows.map((_row, r) => {
    const base = r * ADVISORY_COLUMN_COUNT;
    return `(${Array.from({ length: ADVISORY_COLUMN_COUNT }, (_unused, c) => `$${String(base + c + 1)}`).join(', ')})`;
  });
  await client.query(
    `INSERT INTO advisory (${ADVISORY_COLUMNS}) VALUES ${tuples.join(', ')} ON CONFLICT (card_uuid) DO NOTHING`,
    rows.flatMap(advisoryValues),
  );
  await client.query(
    `INSERT INTO store_meta (key, value) VALUES ('first_advisory_recorded', $1) ON CONFLICT (key) DO NOTHING`,
    [first.issued_at],
  );
}

/**
 * Retention, as on SQLite: advisories issued before the cutoff go with all their feedback; feedback
 * received before it goes too (an advisory that keeps some has its latest outcome worked out again),
 * in one transaction. Expired replay ids then go client by client, each under that client's replay
 * lock (postgres-replay.ts), in a short transaction of its own: an expired id guards nothing, so a
 * purge cut short there loses nothing, and no replay check waits on the whole purge.
 */
async function purge(pool: pg.Pool, cutoff: Date, now: Date): Promise<PurgeResult> {
  if (!Number.isFinite(cutoff.getTime()) || !Number.isFinite(now.getTime())) {
    throw new RangeError('store: purge needs valid cutoff and now dates');
  }
  const cutoffMs = cutoff.getTime();
  const nowMs = now.getTime();
  const audit = await inTransaction(pool, async (client) => {
    let feedback =
      (
        await client.query(
          `DELETE FROM feedback WHERE advisory_card_uuid IN
            (SELECT card_uuid FROM advisory WHERE issued_at_ms < $1)`,
          [cutoffMs],
        )
      ).rowCount ?? 0;
    // In card order, as every transaction that locks several advisories does, so two never wait on
    // each other in a cycle.
    const cards = (
      await client.query<{ card: string }>(
        `SELECT DISTINCT advisory_card_uuid AS card FROM feedback
          WHERE received_at_ms < $1 AND advisory_card_uuid IS NOT NULL ORDER BY 1`,
        [cutoffMs],
      )
    ).rows.map((row) => row.card);
    feedback += (await client.query('DELETE FROM feedback WHERE received_at_ms < $1', [cutoffMs])).rowCount ?? 0;
    for (const card of cards) {
      await refreshLatest(client, card);
    }
    const advisories = (await client.query('DELETE FROM advisory WHERE issued_at_ms < $1', [cutoffMs])).rowCount ?? 0;
    return { advisories, feedback };
  });

  const clients = (
    await pool.query<{ client_key: string }>(
      `SELECT DISTINCT client_key FROM replay_id WHERE expires_at_ms <= $1
        UNION SELECT client_key FROM replay_client WHERE held <= 0`,
      [nowMs],
    )
  ).rows.map((row) => row.client_key);
  let replayIds = 0;
  for (const clientKey of clients) {
    replayIds += await inTransaction(pool, async (client) => {
      await lockReplayClient(client, clientKey);
      const removed = await client.query('DELETE FROM replay_id WHERE client_key = $1 AND expires_at_ms <= $2', [
        clientKey,
        nowMs,
      ]);
      await client.query('DELETE FROM replay_client WHERE client_key = $1 AND held <= 0', [clientKey]);
      return removed.rowCount ?? 0;
    });
  }
  return { ...audit, replayIds };
}
