import { spawn, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { afterEach, describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { DEMO_MODE_NOTICE, startServer } from '../../src/server.js';
import { createMemoryLog } from '../log/memory-log.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const children: ChildProcess[] = [];

afterEach(() => {
  for (const child of children.splice(0)) {
    if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
  }
});

/** Runs src/server.ts in its own node process (node directly, not npm, so its pid is the server's). */
function runServer(env: Record<string, string>): {
  child: ChildProcess;
  firstLine: Promise<Record<string, unknown>>;
  exit: Promise<{ code: number | null; stdout: string; stderr: string }>;
} {
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/server.ts'], {
    cwd: ROOT,
    env: { PATH: process.env['PATH'] ?? '', HOST: '127.0.0.1', PORT: '0', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  let stdout = '';
  let stderr = '';
  const firstLine = new Promise<Record<string, unknown>>((resolve) => {
    child.stdout?.on('data', (chunk: Buffer) => {
      stdout += chunk.toString();
      const line = stdout.split('\n')[0];
      if (stdout.includes('\n') && line !== undefined) resolve(JSON.parse(line) as Record<string, unknown>);
    });
  });
  child.stderr?.on('data', (chunk: Buffer) => {
    stderr += chunk.toString();
  });
  const exit = new Promise<{ code: number | null; stdout: string; stderr: string }>((resolve) => {
    child.on('exit', (code) => resolve({ code, stdout, stderr }));
  });
  return { child, firstLine, exit };
}

describe('startServer', () => {
  it('listens on loopback, serves liveness and logs the demo-mode notice', async () => {
    const log = createMemoryLog();
    const result = await startServer({ PORT: '0' }, ROOT, createLogger({ level: 'info', destination: log.stream }));
    if (result.kind !== 'started') throw new Error(result.problems);
    try {
      expect(result.started.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+$/);
      const response = await fetch(`${result.started.url}/healthz`);
      expect(response.status).toBe(200);
      expect(await response.json()).toStrictEqual({ status: 'ok' });
    } finally {
      await result.started.close();
    }
    expect(log.lines()[0]).toMatchObject({
      msg: `oxygen-order-checker listening; ${DEMO_MODE_NOTICE}`,
      policyId: 'bts-2017-default',
      policyVersion: '1.0.0',
    });
    expect(log.lines().at(-1)?.['msg']).toBe('oxygen-order-checker stopped');
  });

  it('refuses to start with every configuration problem listed', async () => {
    const result = await startServer({ PORT: 'eighty', LOG_LEVEL: 'chatty' }, ROOT);
    expect(result).toStrictEqual({
      kind: 'refused',
      problems:
        'PORT: must be a whole number from 0 to 65535\n' +
        'LOG_LEVEL: must be one of fatal, error, warn, info, debug, trace, silent',
    });
  });

  describe('edge cases', () => {
    it('runs as a process that stops cleanly on SIGTERM', async () => {
      const run = runServer({});
      const start = await run.firstLine;
      expect(start['msg']).toBe(`oxygen-order-checker listening; ${DEMO_MODE_NOTICE}`);
      const response = await fetch(`${String(start['url'])}/cds-services`);
      expect(response.status).toBe(200);
      run.child.kill('SIGTERM');
      const exit = await run.exit;
      expect(exit.code).toBe(0);
      expect(exit.stdout).toContain('oxygen-order-checker stopped');
      expect(exit.stderr).toBe('');
    });

    it('exits 1 naming the file when the policy cannot be read', async () => {
      const run = runServer({ O2CHECK_POLICY: '/nonexistent/larkspur-bay-policy.yaml' });
      const exit = await run.exit;
      expect(exit.code).toBe(1);
      expect(exit.stderr).toBe(
        'oxygen-order-checker refused to start:\n/nonexistent/larkspur-bay-policy.yaml: (file): cannot be read (ENOENT)\n',
      );
      expect(exit.stdout).toBe('');
    });
  });
});
