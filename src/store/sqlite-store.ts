import Database from 'better-sqlite3';
import { createGroupCommit } from './group-commit.js';
import { LATEST_SCHEMA_VERSION, migrate, userVersion } from './migrations.js';
import { prepareFeedbackWriter, prepareLatestRefresh } from './sqlite-feedback.js';
import { prepareQueries } from './sqlite-queries.js';
import { prepareReplayCheck } from './sqlite-replay.js';
import { advisoryToRow, type AdvisoryRow } from './sqlite-rows.js';
import type { AdvisoryRecord, PurgeResult, Store } from './store.js';

export interface SqliteStoreOptions {
  /** A file path, or `:memory:` for a store that lives as long as the process (tests). */
  readonly file: string;
  /** How long a write waits for another process's lock before failing; default 5 s. */
  readonly busyTimeoutMs?: number;
}

/**
 * Runs synchronous work (a read, or the purge in its own transaction) and hands back its result, or
 * its exception, as a promise. The work is done (and committed) before this returns.
 */
function settled<T>(work: () => T): Promise<T> {
  return new Promise<T>((resolve) => {
    resolve(work());
  });
}

/**
 * Opens (creating if needed) the embedded SQLite store and brings its schema up to date.
 *
 * Durability: WAL journal with `synchronous = FULL`, so every commit is fsynced to the WAL before
 * a write's promise resolves: an acknowledged write survives kill -9 and power loss (SQLite docs,
 * "Write-Ahead Logging" and "PRAGMA synchronous": NORMAL in WAL mode may lose the last commits on
 * power loss). The writes asked for in one event-loop turn share one commit (group-commit.ts).
 * Throws `StoreTooNewError` when the file was written by a newer release.
 */
export function openSqliteStore(options: SqliteStoreOptions): Store {
  return assembleStore(openSqliteDatabase(options));
}

/**
 * The connection as the store uses it: lock wait, WAL, `synchronous = FULL`, foreign keys, schema
 * migrated. Throws (having closed the connection) `StoreTooNewError` for a file written by a newer
 * release, or SQLite's error for a file that is not a database.
 */
export function openSqliteDatabase(options: SqliteStoreOptions): Database.Database {
  const db = new Database(options.file);
  try {
    // The wait comes first, so switching to WAL and migrating also wait for another process's lock.
    db.pragma(`busy_timeout = ${String(Math.trunc(options.busyTimeoutMs ?? 5000))}`);
    db.pragma('journal_mode = WAL');
    db.pragma('synchronous = FULL');
    db.pragma('foreign_keys = ON');
    migrate(db, options.file);
    return db;
  } catch (error) {
    db.close();
    throw error;
  }
}

function assembleStore(db: Database.Database): Store {
  const insertAdvisory = db.prepare<AdvisoryRow>(
    `INSERT OR IGNORE INTO advisory (card_uuid, service_id, hook, hook_instance, client_iss,
        client_tenant, rule_id, rule_version, indicator, summary, detail, workings,
        suggestion_uuids_json, key_numbers_json, series_json, policy_id, policy_version,
        policy_content_hash, unit, issued_at, issued_at_ms, patient_key)
      VALUES (@card_uuid, @service_id, @hook, @hook_instance, @client_iss, @client_tenant, @rule_id,
        @rule_version, @indicator, @summary, @detail, @workings, @suggestion_uuids_json,
        @key_numbers_json, @series_json, @policy_id, @policy_version, @policy_content_hash, @unit,
        @issued_at, @issued_at_ms, @patient_key)`,
  );
  const markRecorded = db.prepare<[string]>(
    "INSERT OR IGNORE INTO store_meta (key, value) VALUES ('first_advisory_recorded', ?)",
  );
  const recordAdvisories = db.transaction((records: readonly AdvisoryRecord[]) => {
    for (const record of records) {
      insertAdvisory.run(advisoryToRow(record));
    }
    const first = records[0];
    if (first !== undefined) {
      markRecorded.run(first.issuedAt);
    }
  });

  const recordFeedback = prepareFeedbackWriter(db);
  const checkAndRememberJti = prepareReplayCheck(db);
  const queries = prepareQueries(db);
  const purge = preparePurge(db);
  const group = createGroupCommit(db);

  let closed = false;
  /** The hook's and the feedback route's writes share one commit per event-loop turn (group-commit.ts). */
  const write = <T>(work: () => T): Promise<T> =>
    closed ? Promise.reject(new Error('store: the store is closed')) : group.enqueue(work);
  return {
    recordAdvisories: (records) => write(() => recordAdvisories.immediate(records)),
    recordFeedback: (client, items, receivedAt, limits) =>
      write(() => recordFeedback(client, items, receivedAt, limits)),
    checkAndRememberJti: (clientKey, jti, expiresAt, now, maxPerClient) =>
      write(() => checkAndRememberJti(clientKey, jti, expiresAt, now, maxPerClient)),
    // One savepoint in the batch's transaction: cards written only after a fresh id, and a failure
    // of either rolls both back.
    rememberJtiAndRecordAdvisories: (token, records) =>
      write(() => {
        const check = checkAndRememberJti(token.clientKey, token.jti, token.expiresAt, token.now, token.maxPerClient);
        if (check.kind === 'fresh') {
          recordAdvisories.immediate(records);
        }
        return check;
      }),
    listAdvisories: (query) => settled(() => queries.listAdvisories(query)),
    getAdvisory: (cardUuid) => settled(() => queries.getAdvisory(cardUuid)),
    listUnmatchedFeedback: (limit, offset) => settled(() => queries.listUnmatchedFeedback(limit, offset)),
    summarise: (query) => settled(() => queries.summarise(query)),
    facets: () => settled(() => queries.facets()),
    purge: (cutoff, now) => settled(() => purge(cutoff, now)),
    isEmpty: () => settled(() => queries.isEmpty()),
    readiness: () =>
      settled(() => {
        if (closed) {
          throw new Error('store: the store is closed');
        }
        return { schemaVersion: userVersion(db), latestSchemaVersion: LATEST_SCHEMA_VERSION };
      }),
    close: () =>
      settled(() => {
        if (closed) {
          return;
        }
        closed = true;
        // Writes already asked for are committed (and their callers answered) before the close.
        group.flushNow();
        // Fold the WAL back into the main file so the file alone is a complete copy.
        db.pragma('wal_checkpoint(TRUNCATE)');
        db.close();
      }),
  };
}

/**
 * Retention: advisories issued before the cutoff go with all their feedback; feedback received
 * before it goes too (an advisory that keeps some feedback has its latest outcome worked out again);
 * expired replay ids go. One transaction, so a crash leaves all or none of it.
 */
function preparePurge(db: Database.Database): (cutoff: Date, now: Date) => PurgeResult {
  const feedbackOfOldAdvisories = db.prepare<[number]>(
    `DELETE FROM feedback WHERE advisory_card_uuid IN
      (SELECT card_uuid FROM advisory WHERE issued_at_ms < ?)`,
  );
  const cardsLosingFeedback = db.prepare<[number], { card: string }>(
    `SELECT DISTINCT advisory_card_uuid AS card FROM feedback
      WHERE received_at_ms < ? AND advisory_card_uuid IS NOT NULL`,
  );
  const oldFeedback = db.prepare<[number]>('DELETE FROM feedback WHERE received_at_ms < ?');
  const oldAdvisories = db.prepare<[number]>('DELETE FROM advisory WHERE issued_at_ms < ?');
  const expiredIds = db.prepare<[number]>('DELETE FROM replay_id WHERE expires_at_ms <= ?');
  const idleClients = db.prepare('DELETE FROM replay_client WHERE held <= 0');
  const refreshLatest = prepareLatestRefresh(db);

  const run = db.transaction((cutoffMs: number, nowMs: number): PurgeResult => {
    let feedback = feedbackOfOldAdvisories.run(cutoffMs).changes;
    const cards = cardsLosingFeedback.all(cutoffMs).map((row) => row.card);
    feedback += oldFeedback.run(cutoffMs).changes;
    for (const card of cards) {
      refreshLatest(card);
    }
    const result = {
      advisories: oldAdvisories.run(cutoffMs).changes,
      feedback,
      replayIds: expiredIds.run(nowMs).changes,
    };
    idleClients.run();
    return result;
  });

  return (cutoff, now) => {
    if (!Number.isFinite(cutoff.getTime()) || !Number.isFinite(now.getTime())) {
      throw new RangeError('store: purge needs valid cutoff and now dates');
    }
    return run.immediate(cutoff.getTime(), now.getTime());
  };
}
