import { execFileSync } from 'node:child_process';
import { closeSync, constants, mkdtempSync, openSync, rmSync } from 'node:fs';
import { open, type FileHandle } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/**
 * Keeps every thread of libuv's pool busy until released, with no timing involved: each thread is
 * given the open of a named pipe for reading, which blocks in open(2) until the pipe has a writer
 * (POSIX open(), "O_RDONLY ... for a FIFO ... shall block until a thread opens the file for
 * writing"). Work queued meanwhile (node:crypto's asynchronous verify, say) waits in the pool's queue,
 * as it does when the pool is busy under load. Release opens the pipe read-write, which Linux
 * never blocks on, so every held open returns.
 */
export interface ThreadPoolHold {
  readonly release: () => Promise<void>;
}

/** libuv's pool size: UV_THREADPOOL_SIZE when set, else 4 (libuv's documented default). */
export function threadPoolSize(): number {
  const set = Number(process.env['UV_THREADPOOL_SIZE']);
  return Number.isInteger(set) && set > 0 ? set : 4;
}

export function holdThreadPool(): ThreadPoolHold {
  const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-pool-hold-'));
  const fifo = join(dir, 'hold');
  execFileSync('mkfifo', [fifo]);
  const held: Promise<FileHandle>[] = Array.from({ length: threadPoolSize() }, () => open(fifo, 'r'));
  return {
    release: async () => {
      const writer = openSync(fifo, constants.O_RDWR);
      try {
        for (const handle of await Promise.all(held)) {
          await handle.close();
        }
      } finally {
        closeSync(writer);
        rmSync(dir, { recursive: true, force: true });
      }
    },
  };
}
