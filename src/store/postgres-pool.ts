import pg from 'pg';
import type { PoolClient } from 'pg';

/**
 * The PostgreSQL connection pool as the store uses it, and the few helpers its parts share: one
 * transaction on one connection, the advisory-lock keys, and a description of the database that is
 * safe to print (no password, no query string).
 */

export interface PostgresStoreOptions {
  /** A `postgres://` or `postgresql://` URL (libpq's connection URI), e.g. from `DATABASE_URL`. */
  readonly connectionString: string;
  /**
   * The schema the store's tables live in (created if missing); default: the server's search path,
   * normally `public`. Tests give each store a schema of its own.
   */
  readonly schema?: string;
  /** Connections held at most; default 10, pg's own default. */
  readonly maxConnections?: number;
}

/** PostgreSQL's int8 type (pg_type.oid 20): `count(*)` and the epoch-ms columns. */
const INT8_OID = 20;

/**
 * int8 arrives as text by default (pg keeps values past 2^53 exact). Every int8 the store reads is an
 * epoch ms (|t| ≤ 8.64e15, ECMA-262 Time Values) or a count of rows, both well inside 2^53.
 */
const builtInParser = pg.types.getTypeParser.bind(pg.types) as (oid: number, format?: 'text' | 'binary') => unknown;
const storeTypes = {
  getTypeParser: ((oid: number, format?: 'text' | 'binary') =>
    oid === INT8_OID && format !== 'binary' ? (text: string) => Number(text) : builtInParser(oid, format)) as
    typeof pg.types.getTypeParser,
};

/** A schema name the store may put in SQL: lower-case letters, digits and underscores only. */
const SCHEMA_NAME = /^[a-z_][a-z0-9_]{0,62}$/;

export function checkSchemaName(schema: string): string {
  if (!SCHEMA_NAME.test(schema)) {
    throw new RangeError('store: the PostgreSQL schema name must be lower-case letters, digits and underscores');
  }
  return schema;
}

/**
 * The database as a person can be told about it: user, host, port, database and schema, never the
 * password or the query string (which may carry one too). Falls back to a fixed phrase for a URL that
 * does not parse, rather than echoing it.
 */
export function describeDatabase(connectionString: string, schema?: string): string {
  let where = 'the PostgreSQL database in DATABASE_URL';
  try {
    const url = new URL(connectionString);
    const user = url.username === '' ? '' : `${decodeURIComponent(url.username)}@`;
    const database = url.pathname.replace(/^\//, '');
    where = `the PostgreSQL database ${user}${url.host}/${decodeURIComponent(database)}`;
  } catch {
    // keep the fixed phrase
  }
  return schema === undefined ? where : `${where} (schema ${schema})`;
}

/**
 * Opens the pool. Every connection sets `synchronous_commit = on` whatever the server's, the role's
 * or the URL's setting, so a COMMIT returns only once its WAL is flushed to disk (PostgreSQL docs,
 * "synchronous_commit"): an acknowledged write survives a crash of the database server as well as of
 * this process. It is a statement sent first on each new connection, not a startup option, because
 * pg lets an `options` parameter in the URL replace startup options given here.
 */
export function createStorePool(options: PostgresStoreOptions): pg.Pool {
  const pool = new pg.Pool({
    connectionString: options.connectionString,
    max: options.maxConnections ?? 10,
    // A pool checkout that waits this long means the database is gone or saturated: fail the call.
    connectionTimeoutMillis: 5000,
    ...(options.schema === undefined ? {} : { options: `-c search_path=${checkSchemaName(options.schema)}` }),
    types: storeTypes,
  });
  pool.on('connect', (client) => {
    // Sent before any query of the caller's on this connection (pg runs a client's queries in order).
    // Should it fail, the connection is broken and the caller's own query fails with it.
    client.query('SET synchronous_commit = on').catch(() => undefined);
  });
  // An idle connection the server dropped (restart, failover) is removed from the pool by pg; without a
  // listener its 'error' event would end the process. The next call opens a fresh connection, and a
  // call on a broken one fails and is answered as a failure (fail closed for the replay check).
  pool.on('error', () => undefined);
  return pool;
}

/**
 * Runs `work` in one transaction on one connection: COMMIT when it returns, ROLLBACK when it throws.
 * The promise resolves only after COMMIT has returned, so a caller answering after `await` never
 * acknowledges a write that is not committed.
 */
export async function inTransaction<T>(
  pool: pg.Pool,
  work: (client: PoolClient) => Promise<T>,
  begin = 'BEGIN',
): Promise<T> {
  const client = await pool.connect();
  let broken: Error | undefined;
  try {
    try {
      await client.query(begin);
    } catch (error) {
      // A connection that cannot even begin is not given to the next caller.
      broken = error instanceof Error ? error : new Error(String(error));
      throw error;
    }
    try {
      const result = await work(client);
      await client.query('COMMIT');
      return result;
    } catch (error) {
      try {
        await client.query('ROLLBACK');
      } catch (rollbackError) {
        // The connection is unusable: it must not go back to the pool.
        broken = rollbackError instanceof Error ? rollbackError : new Error(String(rollbackError));
      }
      throw error;
    }
  } finally {
    client.release(broken);
  }
}

/**
 * Advisory-lock classes (the first key of `pg_advisory_xact_lock(int, int)`); the second key is
 * `hashtext` of what is locked. Arbitrary constants, chosen to be unlikely in another application
 * sharing the database; a collision would only make two unrelated transactions wait for each other.
 */
export const LOCK_CLASS = {
  /** The schema migrations of one schema: one instance migrates, the others wait. */
  migrate: 0x4f32_0a01,
  /** One client's feedback quota. */
  feedback: 0x4f32_0a02,
  /** One client's replay ids and their count. */
  replay: 0x4f32_0a03,
} as const;

/**
 * Runs the calls given the same key one after another, in the order asked for, on this instance.
 * The advisory lock orders them across instances; this keeps this instance's own calls in call order
 * (a quota or a share is spent first come, first served) and leaves one pool connection per key.
 */
export function createKeyedQueue(): <T>(key: string, work: () => Promise<T>) => Promise<T> {
  const tails = new Map<string, Promise<unknown>>();
  return <T>(key: string, work: () => Promise<T>): Promise<T> => {
    const previous = tails.get(key) ?? Promise.resolve();
    const run = previous.then(work, work);
    const tail = run.then(
      () => undefined,
      () => undefined,
    );
    tails.set(key, tail);
    void tail.then(() => {
      if (tails.get(key) === tail) {
        tails.delete(key);
      }
    });
    return run;
  };
}
