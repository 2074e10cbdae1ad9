import type pg from 'pg';
import { checkSchemaName, LOCK_CLASS } from './postgres-pool.js';
import { StoreTooNewError, type Migration } from './migrations.js';

/**
 * The PostgreSQL schema: the same versioned steps as the SQLite schema (migrations.ts), one for one,
 * with the same versions and descriptions and the same tables, columns and indexes in PostgreSQL's
 * dialect. A released step is never edited; a change is a new step here and in migrations.ts (a test
 * checks that the two lists keep the same versions and descriptions).
 *
 * Differences from SQLite, each for a reason: epoch-ms columns are `bigint` (they pass 2^31);
 * `feedback.seq` is an identity column; the version reached is the highest row of `schema_migration`
 * (PostgreSQL has no `user_version`), and that table is created before step 1 so the version can be
 * read under the migration lock. JSON columns stay `text`, read and written exactly as on SQLite.
 */
export const POSTGRES_MIGRATIONS: readonly Migration[] = [
  {
    version: 1,
    description: 'audit trail of advisories, feedback, replay ids',
    sql: `
      CREATE TABLE advisory (
        card_uuid text PRIMARY KEY,
        service_id text NOT NULL,
        hook text NOT NULL,
        hook_instance text NOT NULL,
        client_iss text NOT NULL,
        client_tenant text NOT NULL,
        rule_id text NOT NULL,
        rule_version integer NOT NULL,
        indicator text NOT NULL CHECK (indicator IN ('info', 'warning', 'critical')),
        summary text NOT NULL,
        detail text NOT NULL,
        workings text NOT NULL,
        suggestion_uuids_json text NOT NULL,
        key_numbers_json text NOT NULL,
        series_json text NOT NULL,
        policy_id text NOT NULL,
        policy_version text NOT NULL,
        policy_content_hash text NOT NULL,
        unit text,
        issued_at text NOT NULL,
        issued_at_ms bigint NOT NULL,
        patient_key text NOT NULL,
        latest_outcome text CHECK (latest_outcome IN ('accepted', 'overridden')),
        latest_override_reason_code text,
        feedback_count integer NOT NULL DEFAULT 0
      );
      CREATE INDEX advisory_issued ON advisory (issued_at_ms);
      CREATE INDEX advisory_unit ON advisory (unit, issued_at_ms);
      CREATE INDEX advisory_rule ON advisory (rule_id, issued_at_ms);
      CREATE INDEX advisory_indicator ON advisory (indicator, issued_at_ms);
      CREATE INDEX advisory_outcome ON advisory (latest_outcome, issued_at_ms);
      CREATE INDEX advisory_patient ON advisory (patient_key, issued_at_ms);

      CREATE TABLE feedback (
        seq bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
        id text NOT NULL UNIQUE,
        dedup_key text NOT NULL UNIQUE,
        client_iss text NOT NULL,
        client_tenant text NOT NULL,
        service_id text NOT NULL,
        card_uuid text NOT NULL,
        advisory_card_uuid text REFERENCES advisory (card_uuid) ON DELETE CASCADE,
        outcome text NOT NULL CHECK (outcome IN ('accepted', 'overridden')),
        accepted_suggestion_ids_json text NOT NULL,
        override_reason_system text,
        override_reason_code text,
        outcome_timestamp text NOT NULL,
        outcome_at_ms bigint NOT NULL,
        received_at text NOT NULL,
        received_at_ms bigint NOT NULL
      );
      CREATE INDEX feedback_advisory ON feedback (advisory_card_uuid, outcome_at_ms, received_at_ms);
      CREATE INDEX feedback_client_day ON feedback (client_iss, client_tenant, received_at_ms);
      CREATE INDEX feedback_received ON feedback (received_at_ms);
      CREATE INDEX feedback_unmatched ON feedback (received_at_ms) WHERE advisory_card_uuid IS NULL;

      CREATE TABLE replay_id (
        client_key text NOT NULL,
        jti text NOT NULL,
        expires_at_ms bigint NOT NULL,
        PRIMARY KEY (client_key, jti)
      );
      CREATE INDEX replay_id_client_expiry ON replay_id (client_key, expires_at_ms);
      CREATE INDEX replay_id_expiry ON replay_id (expires_at_ms);

      CREATE TABLE store_meta (
        key text PRIMARY KEY,
        value text NOT NULL
      );
    `,
  },
  {
    version: 2,
    description: 'count of replay ids held per client, kept by triggers',
    sql: `
      CREATE TABLE replay_client (
        client_key text PRIMARY KEY,
        held integer NOT NULL
      );
      INSERT INTO replay_client (client_key, held)
        SELECT client_key, count(*) FROM replay_id GROUP BY client_key;
      CREATE FUNCTION replay_id_added() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        INSERT INTO replay_client (client_key, held) VALUES (NEW.client_key, 1)
          ON CONFLICT (client_key) DO UPDATE SET held = replay_client.held + 1;
        RETURN NULL;
      END $$;
      CREATE FUNCTION replay_id_removed() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        UPDATE replay_client SET held = held - 1 WHERE client_key = OLD.client_key;
        RETURN NULL;
      END $$;
      CREATE TRIGGER replay_id_added AFTER INSERT ON replay_id
        FOR EACH ROW EXECUTE FUNCTION replay_id_added();
      CREATE TRIGGER replay_id_removed AFTER DELETE ON replay_id
        FOR EACH ROW EXECUTE FUNCTION replay_id_removed();
    `,
  },
  {
    version: 3,
    description: 'one covering index on issue time in place of the issue-time, indicator and outcome indexes',
    sql: `
      -- As migrations.ts step 3: fewer indexes written per card, the review filters and the summary
      -- read from one index within the time window.
      CREATE INDEX advisory_window ON advisory
        (issued_at_ms, unit, rule_id, indicator, latest_outcome, latest_override_reason_code);
      DROP INDEX advisory_issued;
      DROP INDEX advisory_indicator;
      DROP INDEX advisory_outcome;
    `,
  },
];

const CREATE_MIGRATION_TABLE = `CREATE TABLE IF NOT EXISTS schema_migration (
  version integer PRIMARY KEY,
  description text NOT NULL,
  applied_at timestamptz NOT NULL DEFAULT now()
)`;

/**
 * Takes the migration lock of the schema for the rest of the transaction: the schema named, else the
 * current one (a schema not yet created is not current, so it is named).
 */
const LOCK = `SELECT pg_advisory_xact_lock(${String(LOCK_CLASS.migrate)}, hashtext(coalesce($1::text, current_schema(), '')))`;

/** The highest step recorded in `schema_migration`: the schema version reached. */
export async function versionNow(client: pg.ClientBase | pg.Pool): Promise<number> {
  const result = await client.query<{ version: number | null }>('SELECT max(version) AS version FROM schema_migration');
  return result.rows[0]?.version ?? 0;
}

/**
 * Brings the schema to the latest version, one transaction per step, as several instances starting
 * together may all ask at once. Each transaction first takes an advisory lock on the schema
 * (`pg_advisory_xact_lock`, released at COMMIT or ROLLBACK), then reads the version: the first
 * instance applies the step, the others wait on the lock, then find it applied and go on. DDL is
 * transactional in PostgreSQL, so a step that fails leaves the schema at the previous version.
 * Throws `StoreTooNewError`, changing nothing, when the schema is newer than this code; `where`
 * names the database in that message (without credentials).
 */
export async function migratePostgres(
  client: pg.ClientBase,
  where: string,
  options: { readonly schema?: string; readonly migrations?: readonly Migration[] } = {},
): Promise<number> {
  const migrations = options.migrations ?? POSTGRES_MIGRATIONS;
  const schema = options.schema === undefined ? null : checkSchemaName(options.schema);
  const known = migrations.reduce((max, m) => Math.max(max, m.version), 0);
  const ordered = [...migrations].sort((a, b) => a.version - b.version);
  // The statements that wait on the lock must not be cut short by a statement timeout: another
  // instance may be running a long step.
  const run = async (step: (current: number) => Promise<void>): Promise<number> => {
    await client.query('BEGIN');
    try {
      await client.query('SET LOCAL statement_timeout = 0');
      await client.query(LOCK, [schema]);
      if (schema !== null) {
        // Checked above: lower-case letters, digits and underscores only.
        await client.query(`CREATE SCHEMA IF NOT EXISTS ${schema}`);
      }
      await client.query(CREATE_MIGRATION_TABLE);
      const current = await versionNow(client);
      if (current > known) {
        throw new StoreTooNewError(current, known, where);
      }
      await step(current);
      await client.query('COMMIT');
      return current;
    } catch (error) {
      await client.query('ROLLBACK');
      throw error;
    }
  };

  await run(() => Promise.resolve());
  for (const migration of ordered) {
    await run(async (current) => {
      if (current >= migration.version) {
        return;
      }
      await client.query(migration.sql);
      await client.query('INSERT INTO schema_migration (version, description) VALUES ($1, $2)', [
        migration.version,
        migration.description,
      ]);
    });
  }
  return versionNow(client);
}
