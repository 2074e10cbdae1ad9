import { spawn, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { makeTempDataDir } from '../../helpers/temp-store.js';

/**
 * The real service as a child process (`node --import tsx src/server.ts`) on a free loopback port with
 * its own data directory, and its pino lines read back as they come. Tests that send it signals use
 * this; `killServerProcesses` in an `afterEach` ends any a test left running.
 */

const ROOT = fileURLToPath(new URL('../../../', import.meta.url));
const children: ChildProcess[] = [];

export interface ServerProcess {
  readonly child: ChildProcess;
  readonly lines: () => Record<string, unknown>[];
  /** The first log line whose message starts with `msgStart`, once it has been written. */
  readonly waitForLine: (msgStart: string) => Promise<Record<string, unknown>>;
  readonly exit: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
}

export function runServerProcess(env: Record<string, string>): ServerProcess {
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/server.ts'], {
    cwd: ROOT,
    env: { PATH: process.env['PATH'] ?? '', HOST: '127.0.0.1', PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(), ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  let stdout = '';
  const waiters: (() => void)[] = [];
  child.stdout?.on('data', (chunk: Buffer) => {
    stdout += chunk.toString();
    for (const waiter of waiters.splice(0)) waiter();
  });
  const lines = (): Record<string, unknown>[] =>
    stdout
      .split('\n')
      .filter((line) => line.trim() !== '')
      .map((line) => JSON.parse(line) as Record<string, unknown>);
  let exited: { code: number | null; signal: NodeJS.Signals | null } | undefined;
  // A process that ends before the line is awaited fails the wait at once, rather than at the test's timeout.
  const waitForLine = (msgStart: string): Promise<Record<string, unknown>> =>
    new Promise((resolve, reject) => {
      const check = (): void => {
        const found = lines().find((line) => String(line['msg']).startsWith(msgStart));
        if (found !== undefined) resolve(found);
        else if (exited !== undefined) reject(new Error(`the service ended (${String(exited.code ?? exited.signal)}) before logging "${msgStart}"`));
        else waiters.push(check);
      };
      check();
    });
  const exit = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => {
    child.on('exit', (code, signal) => {
      exited = { code, signal };
      for (const waiter of waiters.splice(0)) waiter();
      resolve({ code, signal });
    });
  });
  return { child, lines, waitForLine, exit };
}

/** Kills every server process still running (for `afterEach`). */
export function killServerProcesses(): void {
  for (const child of children.splice(0)) {
    if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
  }
}
