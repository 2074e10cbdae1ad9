import { spawn } from 'node:child_process';
import { once } from 'node:events';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { setTimeout as sleep } from 'node:timers/promises';
import { freePort } from './child-server.js';
import { BENCH_PUBLIC_URL, signCalls, type BenchClient, type CallSource } from './bench-client.js';
import type { BuiltService } from './service-process.js';
import { productionServiceEnv } from './service-process.js';

/**
 * Cold start: the time from spawning the service (`node dist/server.js` as `npm start` runs it, in
 * production mode, with a new data directory) to its first 200, on `GET /healthz` in one start and on
 * a signed hook call in another. Each start is a new process; the median of the starts is reported.
 */

export interface ColdStartResult {
  /** Milliseconds to the first 200 on /healthz, one per start. */
  readonly healthzMs: readonly number[];
  /** Milliseconds to the first 200 on a hook call, one per start. */
  readonly hookMs: readonly number[];
}

const POLL_MS = 5;
const GIVE_UP_MS = 30_000;

async function timeOneStart(
  root: string,
  built: BuiltService,
  trustFile: string,
  probe: (baseUrl: string) => Promise<number>,
): Promise<number> {
  const port = await freePort();
  const dataDir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-bench-cold-'));
  const start = performance.now();
  const child = spawn(process.execPath, [...built.nodeArgs], {
    cwd: root,
    env: productionServiceEnv(root, trustFile, BENCH_PUBLIC_URL, dataDir, port),
    detached: true,
    stdio: 'ignore',
  });
  const exited = once(child, 'exit').catch(() => undefined);
  const kill = (signal: NodeJS.Signals): void => {
    if (child.pid !== undefined && child.exitCode === null && child.signalCode === null) {
      try {
        process.kill(-child.pid, signal);
      } catch {
        // Already gone.
      }
    }
  };
  const onExit = (): void => kill('SIGKILL');
  process.once('exit', onExit);
  try {
    const baseUrl = `http://127.0.0.1:${port}`;
    while (performance.now() - start < GIVE_UP_MS) {
      if (child.exitCode !== null) {
        throw new Error(`the service exited (code ${child.exitCode}) before its first 200`);
      }
      let status = 0;
      try {
        status = await probe(baseUrl);
      } catch {
        // Not listening yet.
      }
      if (status === 200) {
        return performance.now() - start;
      }
      await sleep(POLL_MS);
    }
    throw new Error(`no 200 within ${GIVE_UP_MS} ms of the spawn`);
  } finally {
    kill('SIGTERM');
    const timer = setTimeout(() => kill('SIGKILL'), 5000);
    await exited;
    clearTimeout(timer);
    process.removeListener('exit', onExit);
    rmSync(dataDir, { recursive: true, force: true });
  }
}

export async function measureColdStart(
  root: string,
  built: BuiltService,
  client: BenchClient,
  trustFile: string,
  source: CallSource,
  starts: number,
): Promise<ColdStartResult> {
  const healthzMs: number[] = [];
  const hookMs: number[] = [];
  for (let i = 0; i < starts; i += 1) {
    healthzMs.push(
      await timeOneStart(root, built, trustFile, async (baseUrl) => {
        const response = await fetch(`${baseUrl}/healthz`, { signal: AbortSignal.timeout(2000) });
        await response.arrayBuffer();
        return response.status;
      }),
    );
    // A call refused before it reaches the service (not listening yet) burns no jti; one it answers
    // does, so the next token is taken only after an answer. Signed before the spawn.
    const calls = signCalls(client, [source], 20);
    let next = 0;
    hookMs.push(
      await timeOneStart(root, built, trustFile, async (baseUrl) => {
        const call = calls[next];
        if (call === undefined) {
          throw new Error('every token of the cold start was answered without a 200');
        }
        const response = await fetch(`${baseUrl}${call.path}`, {
          method: 'POST',
          headers: { 'content-type': 'application/json', authorization: call.authorization },
          body: call.body,
          signal: AbortSignal.timeout(5000),
        });
        next += 1;
        await response.arrayBuffer();
        return response.status;
      }),
    );
  }
  return { healthzMs, hookMs };
}
