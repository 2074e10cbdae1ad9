import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { afterEach, describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { DEMO_MODE_NOTICE, startServer } from '../../src/server.js';
import { LATEST_SCHEMA_VERSION } from '../../src/store/migrations.js';
import { STORE_FILE_NAME } from '../../src/store/open-store.js';
import { makeTempDataDir } from '../helpers/temp-store.js';
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
    env: { PATH: process.env['PATH'] ?? '', HOST: '127.0.0.1', PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(), ...env },
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
    const result = await startServer({ PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir() }, ROOT, createLogger({ level: 'info', destination: log.stream }));
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
      policyId: 'based-on-bts-2017',
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

  it('purges expired records at start, logging counts only, and closes the store after the HTTP server', async () => {
    const log = createMemoryLog();
    const dataDir = makeTempDataDir();
    const result = await startServer({ PORT: '0', OXYGEN_CHECKER_DATA_DIR: dataDir }, ROOT, createLogger({ level: 'info', destination: log.stream }));
    if (result.kind !== 'started') throw new Error(result.problems);
    await result.started.close();
    const messages = log.lines().map((line) => line['msg']);
    const purge = log.lines().find((line) => line['purge'] === 'done');
    expect(purge).toMatchObject({ advisories: 0, feedback: 0, replayIds: 0 });
    // the default retention: 400 days before now (src/config/env-config.ts ENV_DEFAULTS)
    const cutoffAgeDays = (Date.now() - Date.parse(String(purge?.['cutoff']))) / 86_400_000;
    expect(Math.round(cutoffAgeDays)).toBe(400);
    expect(messages.indexOf('oxygen-order-checker stopping: no new connections')).toBeLessThan(
      messages.indexOf('oxygen-order-checker stopped'),
    );
    // SQLite removes the WAL file when its last connection closes cleanly (SQLite docs, "Write-Ahead Logging")
    expect(existsSync(join(dataDir, `${STORE_FILE_NAME}-wal`))).toBe(false);
    expect(existsSync(join(dataDir, STORE_FILE_NAME))).toBe(true);
  });

  it('refuses to start, with the store\'s own message, on a store written by a newer release', async () => {
    const dataDir = makeTempDataDir();
    const raw = new Database(join(dataDir, STORE_FILE_NAME));
    raw.pragma(`user_version = ${String(LATEST_SCHEMA_VERSION + 1)}`);
    raw.close();
    const result = await startServer({ PORT: '0', OXYGEN_CHECKER_DATA_DIR: dataDir }, ROOT, createLogger({ level: 'silent' }));
    expect(result.kind).toBe('refused');
    const problems = result.kind === 'refused' ? result.problems : '';
    expect(problems).toMatch(/^OXYGEN_CHECKER_DATA_DIR: the store .* has schema version \d+, but this release knows versions up to \d+/);
    expect(problems).toContain('run a newer release');
  });

  it('refuses to start when the configured patient-key file is missing', async () => {
    const dataDir = makeTempDataDir();
    const missing = join(dataDir, 'no-such-secret');
    const result = await startServer(
      { PORT: '0', OXYGEN_CHECKER_DATA_DIR: dataDir, OXYGEN_CHECKER_PATIENT_KEY_FILE: missing },
      ROOT,
      createLogger({ level: 'silent' }),
    );
    expect(result).toStrictEqual({
      kind: 'refused',
      problems: `OXYGEN_CHECKER_PATIENT_KEY_FILE: the patient-key secret ${missing} (configured) cannot be read (ENOENT)`,
    });
  });

  describe('the variables it is given', () => {
    it('refuses production without an explicit policy, before opening anything', async () => {
      const dataDir = join(makeTempDataDir(), 'never-created');
      const result = await startServer(
        {
          PORT: '0',
          OXYGEN_CHECKER_MODE: 'production',
          OXYGEN_CHECKER_TRUST: join(ROOT, 'no-trust-file-needed-to-refuse.yaml'),
          OXYGEN_CHECKER_PUBLIC_URL: 'https://cds.larkspur-bay.example',
          OXYGEN_CHECKER_DATA_DIR: dataDir,
        },
        ROOT,
        createLogger({ level: 'silent' }),
      );
      expect(result).toStrictEqual({
        kind: 'refused',
        problems:
          'OXYGEN_CHECKER_POLICY: production mode needs the local policy file set explicitly; the bundled demo policy is not used in production (see docs/policy.md)',
      });
      expect(existsSync(dataDir)).toBe(false);
    });

    it('refuses a misspelt setting with a suggestion, listed with the other problems', async () => {
      const result = await startServer(
        { PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(), OXYGEN_CHECKER_BODY_LIMIT_BYTE: '65536', LOG_LEVEL: 'loud' },
        ROOT,
        createLogger({ level: 'silent' }),
      );
      expect(result).toStrictEqual({
        kind: 'refused',
        problems:
          'LOG_LEVEL: must be one of fatal, error, warn, info, debug, trace, silent\n' +
          'OXYGEN_CHECKER_BODY_LIMIT_BYTE: is not a setting of this service, so it would be ignored; did you mean OXYGEN_CHECKER_BODY_LIMIT_BYTES?',
      });
    });

    it('starts with the variables of the rest of the system around it', async () => {
      const result = await startServer(
        { PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(), PATH: '/usr/bin:/bin', HOME: '/home/larkspur', NODE_ENV: 'production' },
        ROOT,
        createLogger({ level: 'silent' }),
      );
      if (result.kind !== 'started') throw new Error(result.problems);
      await result.started.close();
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
      const run = runServer({ OXYGEN_CHECKER_POLICY: '/nonexistent/larkspur-bay-policy.yaml' });
      const exit = await run.exit;
      expect(exit.code).toBe(1);
      expect(exit.stderr).toBe(
        'oxygen-order-checker refused to start:\n/nonexistent/larkspur-bay-policy.yaml: (file): cannot be read (ENOENT)\n',
      );
      expect(exit.stdout).toBe('');
    });

    it('exits 1 on a misspelt setting, as a process', async () => {
      const run = runServer({ OXYGEN_CHECKER_SHUTDOWN_GRACE: '500' });
      const exit = await run.exit;
      expect(exit.code).toBe(1);
      expect(exit.stderr).toBe(
        'oxygen-order-checker refused to start:\n' +
          'OXYGEN_CHECKER_SHUTDOWN_GRACE: is not a setting of this service, so it would be ignored; did you mean OXYGEN_CHECKER_SHUTDOWN_GRACE_MS?\n',
      );
    });
  });
});
