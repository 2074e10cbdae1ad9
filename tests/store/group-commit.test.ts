import { join } from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, describe, expect, it } from 'vitest';
import { createGroupCommit } from '../../src/store/group-commit.js';
import { useTempDirs } from './support/temp-dir.js';

/**
 * The writes of one event-loop turn share one transaction: seen from a second connection, none of
 * them is there while the batch runs and all of them are once their promises resolve. Each write has
 * its own savepoint, so a failure refuses only its own caller.
 */

const dbs: Database.Database[] = [];
afterEach(() => {
  for (const db of dbs.splice(0)) {
    db.close();
  }
});

const tempDir = useTempDirs();

function twoConnections(): { writer: Database.Database; reader: Database.Database } {
  const file = join(tempDir(), 'group.sqlite');
  const writer = new Database(file);
  // SQLite, "Write-Ahead Logging": a reader sees the last commit, never a transaction in progress
  writer.pragma('journal_mode = WAL');
  writer.pragma('synchronous = FULL');
  writer.exec('CREATE TABLE item (n INTEGER PRIMARY KEY)');
  const reader = new Database(file, { readonly: true });
  dbs.push(reader, writer);
  return { writer, reader };
}

const countFrom = (db: Database.Database): number =>
  (db.prepare('SELECT count(*) AS n FROM item').get() as { n: number }).n;

describe('createGroupCommit', () => {
  it('commits the writes asked for in one turn together, and resolves each only after the commit', async () => {
    const { writer, reader } = twoConnections();
    const group = createGroupCommit(writer);
    const insert = writer.prepare('INSERT INTO item (n) VALUES (?)');
    const seenByReader: number[] = [];
    const writes = [1, 2, 3].map((n) =>
      group.enqueue(() => {
        insert.run(n);
        seenByReader.push(countFrom(reader));
        return n;
      }),
    );
    expect(group.pending()).toBe(3);
    expect(countFrom(reader)).toBe(0);

    expect(await Promise.all(writes)).toStrictEqual([1, 2, 3]);
    // while the batch ran, the other connection saw none of it: one transaction, not three
    expect(seenByReader).toStrictEqual([0, 0, 0]);
    expect(countFrom(reader)).toBe(3);
    expect(writer.inTransaction).toBe(false);
  });

  it('runs the writes in the order asked, each seeing the ones before it', async () => {
    const { writer } = twoConnections();
    const group = createGroupCommit(writer);
    const counts = await Promise.all(
      [1, 2, 3].map((n) =>
        group.enqueue(() => {
          writer.prepare('INSERT INTO item (n) VALUES (?)').run(n);
          return countFrom(writer);
        }),
      ),
    );
    expect(counts).toStrictEqual([1, 2, 3]);
  });

  it('rolls back and refuses only the write that threw; the rest of the batch commits', async () => {
    const { writer, reader } = twoConnections();
    const group = createGroupCommit(writer);
    const insert = writer.prepare('INSERT INTO item (n) VALUES (?)');
    const results = await Promise.allSettled([
      group.enqueue(() => insert.run(1)),
      group.enqueue(() => {
        insert.run(2);
        // a duplicate key after a good insert: the whole write goes, its first insert included
        insert.run(1);
      }),
      group.enqueue(() => insert.run(3)),
    ]);
    expect(results.map((r) => r.status)).toStrictEqual(['fulfilled', 'rejected', 'fulfilled']);
    expect(reader.prepare('SELECT n FROM item ORDER BY n').pluck().all()).toStrictEqual([1, 3]);
  });

  it('refuses the writes whose transaction was thrown away, and commits the later ones in a new one', async () => {
    const { writer, reader } = twoConnections();
    const group = createGroupCommit(writer);
    const insert = writer.prepare('INSERT INTO item (n) VALUES (?)');
    const results = await Promise.allSettled([
      group.enqueue(() => insert.run(1)),
      // stands for SQLite rolling the whole transaction back itself (SQLITE_FULL, SQLITE_IOERR)
      group.enqueue(() => {
        insert.run(2);
        writer.exec('ROLLBACK');
      }),
      group.enqueue(() => insert.run(3)),
    ]);
    // write 1 was done but never committed: acknowledging it would be a lie
    expect(results.map((r) => r.status)).toStrictEqual(['rejected', 'rejected', 'fulfilled']);
    expect(reader.prepare('SELECT n FROM item ORDER BY n').pluck().all()).toStrictEqual([3]);
    expect(writer.inTransaction).toBe(false);
  });

  it('commits what is queued when flushed at once, as close does', async () => {
    const { writer, reader } = twoConnections();
    const group = createGroupCommit(writer);
    const write = group.enqueue(() => writer.prepare('INSERT INTO item (n) VALUES (1)').run());
    group.flushNow();
    expect(group.pending()).toBe(0);
    expect(countFrom(reader)).toBe(1);
    await expect(write).resolves.toMatchObject({ changes: 1 });
  });

  it('keeps batches of later turns apart: a write asked for after a commit goes in the next one', async () => {
    const { writer, reader } = twoConnections();
    const group = createGroupCommit(writer);
    await group.enqueue(() => writer.prepare('INSERT INTO item (n) VALUES (1)').run());
    expect(countFrom(reader)).toBe(1);
    await group.enqueue(() => writer.prepare('INSERT INTO item (n) VALUES (2)').run());
    expect(countFrom(reader)).toBe(2);
  });
});
