import type Database from 'better-sqlite3';

/**
 * The store's schema, as an ordered list of versioned steps. A released step is never edited: a
 * change to the schema is a new step with the next version, so every database, whatever release
 * created it, reaches the same schema by the same path. The version reached is kept in SQLite's
 * `PRAGMA user_version` (in the database header, written in the same transaction as the step) and
 * each step is also listed in `schema_migration` for a person reading the file.
 */
export interface Migration {
  readonly version: number;
  readonly description: string;
  readonly sql: string;
}

export const MIGRATIONS: readonly Migration[] = [
  {
    version: 1,
    description: 'audit trail of advisories, feedback, replay ids',
    sql: `
      CREATE TABLE schema_migration (
        version INTEGER PRIMARY KEY,
        description TEXT NOT NULL,
        applied_at TEXT NOT NULL
      );

      -- One row per card issued. Times are kept as given (text) and as epoch ms (for filters and
      -- order, whatever offset the text used). client_tenant is '' when the token named none, so
      -- equality tests need no NULL handling. latest_* and feedback_count are the card's latest
      -- known-card feedback, refreshed in the transaction that writes or purges feedback.
      CREATE TABLE advisory (
        card_uuid TEXT PRIMARY KEY,
        service_id TEXT NOT NULL,
        hook TEXT NOT NULL,
        hook_instance TEXT NOT NULL,
        client_iss TEXT NOT NULL,
        client_tenant TEXT NOT NULL,
        rule_id TEXT NOT NULL,
        rule_version INTEGER NOT NULL,
        indicator TEXT NOT NULL CHECK (indicator IN ('info', 'warning', 'critical')),
        summary TEXT NOT NULL,
        detail TEXT NOT NULL,
        workings TEXT NOT NULL,
        suggestion_uuids_json TEXT NOT NULL,
        key_numbers_json TEXT NOT NULL,
        series_json TEXT NOT NULL,
        policy_id TEXT NOT NULL,
        policy_version TEXT NOT NULL,
        policy_content_hash TEXT NOT NULL,
        unit TEXT,
        issued_at TEXT NOT NULL,
        issued_at_ms INTEGER NOT NULL,
        patient_key TEXT NOT NULL,
        latest_outcome TEXT CHECK (latest_outcome IN ('accepted', 'overridden')),
        latest_override_reason_code TEXT,
        feedback_count INTEGER NOT NULL DEFAULT 0
      );
      CREATE INDEX advisory_issued ON advisory (issued_at_ms);
      CREATE INDEX advisory_unit ON advisory (unit, issued_at_ms);
      CREATE INDEX advisory_rule ON advisory (rule_id, issued_at_ms);
      CREATE INDEX advisory_indicator ON advisory (indicator, issued_at_ms);
      CREATE INDEX advisory_outcome ON advisory (latest_outcome, issued_at_ms);
      CREATE INDEX advisory_patient ON advisory (patient_key, issued_at_ms);

      -- One row per distinct feedback item. dedup_key is a hash of what makes an item the same item
      -- (client, service, card, outcome, reason, accepted suggestions, outcome time), so an exact
      -- repeat finds its row and a changed outcome or reason becomes a new row. advisory_card_uuid
      -- is set only when the card was issued to this client by this service (a known card);
      -- otherwise the row is kept, flagged, and touches no advisory.
      CREATE TABLE feedback (
        seq INTEGER PRIMARY KEY,
        id TEXT NOT NULL UNIQUE,
        dedup_key TEXT NOT NULL UNIQUE,
        client_iss TEXT NOT NULL,
        client_tenant TEXT NOT NULL,
        service_id TEXT NOT NULL,
        card_uuid TEXT NOT NULL,
        advisory_card_uuid TEXT REFERENCES advisory (card_uuid) ON DELETE CASCADE,
        outcome TEXT NOT NULL CHECK (outcome IN ('accepted', 'overridden')),
        accepted_suggestion_ids_json TEXT NOT NULL,
        override_reason_system TEXT,
        override_reason_code TEXT,
        outcome_timestamp TEXT NOT NULL,
        outcome_at_ms INTEGER NOT NULL,
        received_at TEXT NOT NULL,
        received_at_ms INTEGER NOT NULL
      );
      CREATE INDEX feedback_advisory ON feedback (advisory_card_uuid, outcome_at_ms, received_at_ms);
      CREATE INDEX feedback_client_day ON feedback (client_iss, client_tenant, received_at_ms);
      CREATE INDEX feedback_received ON feedback (received_at_ms);
      CREATE INDEX feedback_unmatched ON feedback (received_at_ms) WHERE advisory_card_uuid IS NULL;

      -- Token ids held until their token expires, per client.
      CREATE TABLE replay_id (
        client_key TEXT NOT NULL,
        jti TEXT NOT NULL,
        expires_at_ms INTEGER NOT NULL,
        PRIMARY KEY (client_key, jti)
      );
      CREATE INDEX replay_id_client_expiry ON replay_id (client_key, expires_at_ms);
      CREATE INDEX replay_id_expiry ON replay_id (expires_at_ms);

      -- Facts about the store itself, e.g. when the first advisory was recorded (isEmpty).
      CREATE TABLE store_meta (
        key TEXT PRIMARY KEY,
        value TEXT NOT NULL
      );
    `,
  },
  {
    version: 2,
    description: 'count of replay ids held per client, kept by triggers',
    sql: `
      -- How many replay_id rows (live or expired) each client holds, so the share check reads one row
      -- instead of counting a client's ids on every call (a full share would make every call scan it
      -- while holding the write lock).
      CREATE TABLE replay_client (
        client_key TEXT PRIMARY KEY,
        held INTEGER NOT NULL
      );
      INSERT INTO replay_client (client_key, held)
        SELECT client_key, count(*) FROM replay_id GROUP BY client_key;
      CREATE TRIGGER replay_id_added AFTER INSERT ON replay_id BEGIN
        INSERT INTO replay_client (client_key, held) VALUES (NEW.client_key, 1)
          ON CONFLICT (client_key) DO UPDATE SET held = held + 1;
      END;
      CREATE TRIGGER replay_id_removed AFTER DELETE ON replay_id BEGIN
        UPDATE replay_client SET held = held - 1 WHERE client_key = OLD.client_key;
      END;
    `,
  },
  {
    version: 3,
    description: 'one covering index on issue time in place of the issue-time, indicator and outcome indexes',
    sql: `
      -- Every index on advisory is written on every card recorded, so each one costs the hook call.
      -- This index holds, after the issue time, every column the review list filters on except the
      -- patient, and every column the summary reads: a list filtered by indicator or outcome, any
      -- mix of filters, and the summary are read from the index alone within the time window, and
      -- the table is read only for the rows shown. The unit, rule and patient indexes stay: they
      -- serve the unit and rule lists (facets) and a filter on one of them over a long window.
      CREATE INDEX advisory_window ON advisory
        (issued_at_ms, unit, rule_id, indicator, latest_outcome, latest_override_reason_code);
      DROP INDEX advisory_issued;
      DROP INDEX advisory_indicator;
      DROP INDEX advisory_outcome;
    `,
  },
];

/** The schema version this code writes and reads. */
export const LATEST_SCHEMA_VERSION: number = MIGRATIONS.reduce((max, m) => Math.max(max, m.version), 0);

/** The database was written by a newer release; opening it with this code could damage it. */
export class StoreTooNewError extends Error {
  override readonly name = 'StoreTooNewError';
  constructor(
    readonly databaseVersion: number,
    readonly knownVersion: number,
    readonly file: string,
  ) {
    super(
      `the store ${file} has schema version ${databaseVersion}, but this release knows versions up to ` +
        `${knownVersion}; run a newer release of oxygen-order-checker (or restore a backup made by this ` +
        'one). The store was left unchanged.',
    );
  }
}

/** The schema version in the database header (`PRAGMA user_version`). */
export function userVersion(db: Database.Database): number {
  const version = db.pragma('user_version', { simple: true });
  if (typeof version !== 'number') {
    throw new Error('migrate: PRAGMA user_version did not answer a number');
  }
  return version;
}

/**
 * Brings the database to the latest version, one transaction per step. Each step takes the write
 * lock first (BEGIN IMMEDIATE) and re-reads the version inside it, so two processes opening one new
 * file at once apply each step once. Throws `StoreTooNewError`, changing nothing, when the database
 * is newer than this code.
 */
export function migrate(db: Database.Database, file: string, migrations: readonly Migration[] = MIGRATIONS): number {
  const known = migrations.reduce((max, m) => Math.max(max, m.version), 0);
  const found = userVersion(db);
  if (found > known) {
    throw new StoreTooNewError(found, known, file);
  }
  const ordered = [...migrations].sort((a, b) => a.version - b.version);
  for (const step of ordered) {
    const apply = db.transaction(() => {
      const current = userVersion(db);
      if (current > known) {
        throw new StoreTooNewError(current, known, file);
      }
      if (current >= step.version) {
        return;
      }
      db.exec(step.sql);
      db.prepare(
        "INSERT INTO schema_migration (version, description, applied_at) VALUES (?, ?, strftime('%Y-%m-%dT%H:%M:%fZ', 'now'))",
      ).run(step.version, step.description);
      // PRAGMA takes no bound parameters; the version is an integer from this file.
      db.pragma(`user_version = ${String(Math.trunc(step.version))}`);
    });
    apply.immediate();
  }
  return userVersion(db);
}
