import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { requireTestDatabaseUrl } from './store-kinds.js';

/** A database of its own on the test cluster, for a test that runs whole service processes on it. */
export interface ScratchDatabase {
  readonly name: string;
  /** The test database URL with this database's name in place of the one it named. */
  readonly url: string;
  /** Drops it, ending any connection still open to it. */
  readonly drop: () => Promise<void>;
}

export async function createScratchDatabase(prefix: string): Promise<ScratchDatabase> {
  const adminUrl = requireTestDatabaseUrl();
  const admin = new pg.Client({ connectionString: adminUrl });
  await admin.connect();
  const name = `${prefix}_${randomBytes(6).toString('hex')}`;
  try {
    await admin.query(`CREATE DATABASE ${name}`);
  } catch (error) {
    await admin.end();
    throw error;
  }
  const target = new URL(adminUrl);
  target.pathname = `/${name}`;
  return {
    name,
    url: target.href,
    drop: async () => {
      try {
        await admin.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
      } finally {
        await admin.end();
      }
    },
  };
}
