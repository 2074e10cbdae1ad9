import { spawn, type ChildProcess } from 'node:child_process';
import { once } from 'node:events';
import { createServer } from 'node:net';
import { createInterface } from 'node:readline';
import { setTimeout as sleep } from 'node:timers/promises';

/**
 * A server the bench runs in its own process group (detached), so that stopping it ends the real
 * node process and anything it started, never an npm or npx wrapper only. It must print one JSON
 * line with a loopback `url` once it listens (the service's own start-up line does, at `warn`).
 */
export interface ChildServer {
  readonly name: string;
  readonly url: string;
  readonly pid: number;
  /** Lines it wrote to stdout after start-up (log lines during the load). */
  readonly linesAfterStart: () => number;
  /** The last stdout line written after start-up, if any (the service logs no identifiers). */
  readonly lastLine: () => string | undefined;
  /** The last lines of stdout and stderr, for a failure message. */
  readonly tail: () => string;
  /** SIGTERM to the group, then SIGKILL after `graceMs`; resolves when the process has exited. */
  readonly stop: (graceMs?: number) => Promise<void>;
}

export interface ChildServerSpec {
  readonly name: string;
  readonly nodeArgs: readonly string[];
  readonly env: Readonly<Record<string, string | undefined>>;
  readonly cwd: string;
  readonly startTimeoutMs: number;
  /**
   * Where it will listen, when the bench chose the port itself: for a server that prints no listening
   * line at the log level it runs at (the service in production mode logs it at `info`).
   */
  readonly knownUrl?: string;
}

const LOOPBACK = new Set(['127.0.0.1', '[::1]', 'localhost']);
const running = new Set<ChildProcess>();

function killGroup(child: ChildProcess, signal: NodeJS.Signals): void {
  if (child.pid === undefined || child.exitCode !== null || child.signalCode !== null) {
    return;
  }
  try {
    process.kill(-child.pid, signal);
  } catch {
    // The group is already gone.
  }
}

/** Last resort when the bench itself ends early: no server outlives it. */
export function killAllChildServers(): void {
  for (const child of running) {
    killGroup(child, 'SIGKILL');
  }
}
process.once('exit', killAllChildServers);

function listeningUrl(line: string): string | undefined {
  if (!line.startsWith('{')) {
    return undefined;
  }
  try {
    const parsed = JSON.parse(line) as { url?: unknown; msg?: unknown };
    return typeof parsed.url === 'string' && typeof parsed.msg === 'string' && parsed.msg.includes('listening')
      ? parsed.url
      : undefined;
  } catch {
    return undefined;
  }
}

/** A loopback port free at the moment of asking, for a server the bench tells where to listen. */
export async function freePort(): Promise<number> {
  const server = createServer();
  server.listen(0, '127.0.0.1');
  await once(server, 'listening');
  const address = server.address();
  const port = typeof address === 'object' && address !== null ? address.port : 0;
  server.close();
  await once(server, 'close');
  return port;
}

/** GET `url` until it answers 200, at most `tries` times. */
export async function waitForOk(url: string, tries: number): Promise<void> {
  for (let attempt = 1; attempt <= tries; attempt += 1) {
    try {
      const response = await fetch(url, { signal: AbortSignal.timeout(1000) });
      await response.arrayBuffer();
      if (response.status === 200) {
        return;
      }
    } catch {
      // Not ready yet.
    }
    await sleep(100);
  }
  throw new Error(`${url} did not answer 200 after ${tries} tries`);
}

export async function startChildServer(spec: ChildServerSpec): Promise<ChildServer> {
  const child = spawn(process.execPath, [...spec.nodeArgs], {
    cwd: spec.cwd,
    env: spec.env,
    detached: true,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  running.add(child);
  const exited = once(child, 'exit')
    .catch(() => undefined)
    .then(() => running.delete(child));
  const tailLines: string[] = [];
  const remember = (line: string): void => {
    tailLines.push(line.slice(0, 400));
    if (tailLines.length > 20) {
      tailLines.shift();
    }
  };
  let started = false;
  let afterStart = 0;
  let last: string | undefined;
  createInterface({ input: child.stderr }).on('line', remember);

  const stop = async (graceMs = 5000): Promise<void> => {
    killGroup(child, 'SIGTERM');
    const timer = setTimeout(() => killGroup(child, 'SIGKILL'), graceMs);
    await exited;
    clearTimeout(timer);
    // Children of the server (none today) would share its group: make sure nothing is left.
    killGroup(child, 'SIGKILL');
  };
  const tail = (): string => tailLines.join('\n');

  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(
      () => reject(new Error(`${spec.name} printed no listening line within ${spec.startTimeoutMs} ms`)),
      spec.startTimeoutMs,
    );
    if (spec.knownUrl !== undefined) {
      started = true;
      clearTimeout(timer);
      resolve(spec.knownUrl);
    }
    // Read stdout for as long as the child runs: a full pipe would stall the server.
    createInterface({ input: child.stdout }).on('line', (line) => {
      remember(line);
      if (started) {
        afterStart += 1;
        last = line;
        return;
      }
      const found = listeningUrl(line);
      if (found !== undefined) {
        started = true;
        clearTimeout(timer);
        resolve(found);
      }
    });
    void exited.then(() => {
      clearTimeout(timer);
      reject(new Error(`${spec.name} exited before it listened (code ${String(child.exitCode)})`));
    });
  }).catch(async (error: unknown) => {
    await stop(1000);
    const reason = error instanceof Error ? error.message : String(error);
    throw new Error(`${reason}\n${tail()}`);
  });

  if (!LOOPBACK.has(new URL(url).hostname)) {
    await stop(1000);
    throw new Error(`${spec.name} listens on ${url}, which is not loopback; the bench loads loopback only`);
  }
  if (child.pid === undefined) {
    throw new Error(`${spec.name} has no pid`);
  }
  return { name: spec.name, url, pid: child.pid, linesAfterStart: () => afterStart, lastLine: () => last, tail, stop };
}
