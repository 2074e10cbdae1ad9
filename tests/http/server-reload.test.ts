import { fileURLToPath } from 'node:url';
import { afterEach, describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { startServer, type StartedServer } from '../../src/server.js';
import { makeTempDataDir } from '../helpers/temp-store.js';
import { larkspurPolicy, policyFolder, sha256 } from '../live-policy/support/policy-files.js';
import { createMemoryLog, type MemoryLog } from '../log/memory-log.js';
import { get } from './support/app-server.js';

/**
 * The server's own reload, in-process: `reloadPolicy` as SIGHUP calls it, and the file watch when
 * `OXYGEN_CHECKER_POLICY_WATCH=true`, each ending in what `GET /policy` shows.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const running: StartedServer[] = [];

afterEach(async () => {
  for (const started of running.splice(0)) {
    await started.close();
  }
});

async function start(env: Record<string, string>): Promise<{ started: StartedServer; log: MemoryLog }> {
  const log = createMemoryLog();
  const result = await startServer(
    { PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(), ...env },
    ROOT,
    createLogger({ level: 'info', destination: log.stream }),
  );
  if (result.kind !== 'started') throw new Error(`refused: ${result.problems}`);
  running.push(result.started);
  return { started: result.started, log };
}

/** Resolves with the first log line that `matches`, as soon as it is written. */
async function lineWhere(log: MemoryLog, matches: (line: Record<string, unknown>) => boolean): Promise<Record<string, unknown>> {
  for (;;) {
    const found = log.lines().find(matches);
    if (found !== undefined) return found;
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

describe('the server reloading its policy', () => {
  it('puts a new file in force through reloadPolicy, as SIGHUP does, and GET /policy shows it', async () => {
    const folder = policyFolder(larkspurPolicy('1.0.0'));
    const { started, log } = await start({ OXYGEN_CHECKER_POLICY: folder.policyPath });
    expect(log.lines()[0]?.['policyWatch']).toBe(false);
    folder.write(larkspurPolicy('1.1.0'));
    const outcome = await started.reloadPolicy('signal');
    expect(outcome.kind).toBe('swapped');
    expect((await get(`${started.url}/policy`)).body).toMatchObject({ version: '1.1.0', contentHash: sha256(larkspurPolicy('1.1.0')) });
  });

  it('reloads on a saved file when the watch is on', async () => {
    const folder = policyFolder(larkspurPolicy('1.0.0'));
    const { started, log } = await start({ OXYGEN_CHECKER_POLICY: folder.policyPath, OXYGEN_CHECKER_POLICY_WATCH: 'true' });
    expect(log.lines()[0]?.['policyWatch']).toBe(true);
    folder.write(larkspurPolicy('1.2.0'));
    const swapped = await lineWhere(log, (line) => line['policyReload'] === 'swapped');
    expect(swapped).toMatchObject({ trigger: 'file-change', policyVersion: '1.2.0' });
    expect((await get(`${started.url}/policy`)).body).toMatchObject({ version: '1.2.0' });
  }, 30_000);
});
