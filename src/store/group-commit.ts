import type Database from 'better-sqlite3';

/**
 * Group commit: the writes asked for within one turn of the event loop are committed together, in
 * one transaction and so one fsync of the WAL, instead of one transaction and one fsync each. With
 * `synchronous = FULL` the fsync is most of a write's cost, and it runs on the event loop, so every
 * call in flight waits behind it; sharing it between the writes of a turn keeps that wait to one
 * per turn however many calls are in flight.
 *
 * - Each write runs inside its own SAVEPOINT: a write that throws is rolled back to its savepoint
 *   and only its own caller is rejected; the others in the batch go on and commit.
 * - Writes run in the order they were asked for, so a later write in a batch sees an earlier one
 *   (a quota count, a token id remembered a moment before), exactly as if each had committed alone.
 * - Each caller's promise settles only after the batch's COMMIT has returned (fsynced, with
 *   synchronous = FULL): an answer sent after `await` never acknowledges an uncommitted write. A
 *   failed COMMIT rejects every write of the batch.
 * - The flush is scheduled with `setImmediate`, which runs once the turn's I/O callbacks (the HTTP
 *   requests that arrived together) have each had their say, so they land in one batch.
 */
export interface GroupCommit {
  /** Queues `work` for the next batch; resolves with its result once the batch is committed. */
  enqueue<T>(work: () => T): Promise<T>;
  /** Commits whatever is queued now, synchronously (used by close). */
  flushNow(): void;
  /** Writes queued and not yet committed or refused. */
  pending(): number;
}

interface QueuedWrite {
  readonly work: () => unknown;
  readonly resolve: (value: unknown) => void;
  readonly reject: (reason: unknown) => void;
}

type Outcome = { readonly ok: true; readonly value: unknown } | { readonly ok: false; readonly error: unknown };

/** A savepoint name of our own, apart from the ones better-sqlite3 uses for nested transactions. */
const SAVEPOINT = 'group_commit_write';

export function createGroupCommit(db: Database.Database): GroupCommit {
  const begin = db.prepare('BEGIN IMMEDIATE');
  const commit = db.prepare('COMMIT');
  const rollback = db.prepare('ROLLBACK');
  const savepoint = db.prepare(`SAVEPOINT ${SAVEPOINT}`);
  const release = db.prepare(`RELEASE ${SAVEPOINT}`);
  const rollbackTo = db.prepare(`ROLLBACK TO ${SAVEPOINT}`);

  let queue: QueuedWrite[] = [];
  let scheduled: NodeJS.Immediate | undefined;

  /** Runs one write in its own savepoint inside the open transaction; never throws. */
  function runOne(write: QueuedWrite): Outcome {
    try {
      savepoint.run();
    } catch (error) {
      return { ok: false, error };
    }
    try {
      const value = write.work();
      release.run();
      return { ok: true, value };
    } catch (error) {
      // SQLite rolls the whole transaction back by itself after some errors (SQLITE_FULL, IOERR,
      // NOMEM); there is then no savepoint to return to, and the caller below sees it.
      if (db.inTransaction) {
        rollbackTo.run();
        release.run();
      }
      return { ok: false, error };
    }
  }

  /**
   * Runs the batch in as few transactions as it takes (one, unless SQLite threw a transaction away
   * under a write), then settles every caller. Writes whose transaction was lost before its COMMIT
   * are refused with the reason: what they did is gone, so they must not be acknowledged.
   */
  function flush(batch: readonly QueuedWrite[]): void {
    const outcomes: Outcome[] = [];
    let start = 0;
    while (start < batch.length) {
      let opened: Outcome = { ok: true, value: undefined };
      try {
        begin.run();
      } catch (error) {
        opened = { ok: false, error };
      }
      if (!opened.ok) {
        for (let i = start; i < batch.length; i += 1) {
          outcomes[i] = opened;
        }
        break;
      }
      let index = start;
      let lost: unknown;
      for (; index < batch.length; index += 1) {
        const write = batch[index] as QueuedWrite;
        outcomes[index] = runOne(write);
        if (!db.inTransaction) {
          const outcome = outcomes[index] as Outcome;
          lost = outcome.ok ? new Error('store: the transaction ended inside a write') : outcome.error;
          break;
        }
      }
      const end = index < batch.length ? index + 1 : batch.length;
      if (lost !== undefined) {
        refuse(outcomes, start, end, lost);
      } else {
        try {
          commit.run();
        } catch (error) {
          if (db.inTransaction) {
            rollback.run();
          }
          refuse(outcomes, start, end, error);
        }
      }
      start = end;
    }
    batch.forEach((write, i) => {
      const outcome = outcomes[i] as Outcome;
      if (outcome.ok) {
        write.resolve(outcome.value);
      } else {
        write.reject(outcome.error);
      }
    });
  }

  function flushNow(): void {
    if (scheduled !== undefined) {
      clearImmediate(scheduled);
      scheduled = undefined;
    }
    const batch = queue;
    queue = [];
    if (batch.length > 0) {
      flush(batch);
    }
  }

  return {
    enqueue<T>(work: () => T): Promise<T> {
      return new Promise<T>((resolve, reject) => {
        queue.push({ work, resolve: resolve as (value: unknown) => void, reject });
        scheduled ??= setImmediate(flushNow);
      });
    },
    flushNow,
    pending: () => queue.length,
  };
}

/** Every write of `outcomes[start..end)` that had succeeded is refused: its transaction did not commit. */
function refuse(outcomes: Outcome[], start: number, end: number, cause: unknown): void {
  for (let i = start; i < end; i += 1) {
    if ((outcomes[i] as Outcome).ok) {
      outcomes[i] = { ok: false, error: cause };
    }
  }
}
