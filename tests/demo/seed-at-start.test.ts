import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { startServer } from '../../src/server.js';
import { makeTempDataDir, openTempStore } from '../helpers/temp-store.js';
import { createMemoryLog } from '../log/memory-log.js';
import { EHR_ES384, EHR_ISS } from '../security/support/fixtures.js';

/** The demo seed at start-up, through the same `startServer` the process entry point calls. */
const ROOT = fileURLToPath(new URL('../../', import.meta.url));
let dir: string;
let trustPath: string;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'oxygen-order-checker-seed-start-'));
  trustPath = join(dir, 'trust.yaml');
  await writeFile(
    trustPath,
    ['clients:', `  - iss: ${EHR_ISS}`, `    jwks: { keys: [${JSON.stringify(EHR_ES384.publicJwk)}] }`, '    fhirServers: []', ''].join('\n'),
  );
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** Starts, stops, and returns the log lines and what the store then holds. */
async function startAndStop(env: Record<string, string>): Promise<{ lines: Record<string, unknown>[]; advisories: number }> {
  const log = createMemoryLog();
  const result = await startServer(env, ROOT, createLogger({ level: 'info', destination: log.stream }));
  if (result.kind !== 'started') throw new Error(result.problems);
  await result.started.close();
  const { store } = openTempStore(env['OXYGEN_CHECKER_DATA_DIR']);
  const page = await store.listAdvisories({ limit: 1, offset: 0 });
  await store.close();
  return { lines: log.lines(), advisories: page.total };
}

describe('the demo seed at start', () => {
  it('seeds an empty store in demo mode and logs counts only, then skips it on the next start', async () => {
    const dataDir = makeTempDataDir();
    const first = await startAndStop({ PORT: '0', OXYGEN_CHECKER_DATA_DIR: dataDir });
    const seeded = first.lines.find((line) => line['demoSeed'] === 'done');
    expect(seeded).toBeDefined();
    expect(seeded?.['advisories']).toBe(first.advisories);
    expect(first.advisories).toBeGreaterThan(0);
    // counts only: no patient id, unit or rule text in the line
    expect(Object.keys(seeded ?? {}).filter((key) => !['level', 'time', 'pid', 'hostname', 'service', 'msg'].includes(key)).sort()).toStrictEqual(
      ['advisories', 'calls', 'demoSeed', 'feedback', 'rules', 'units'],
    );
    expect(JSON.stringify(seeded)).not.toMatch(/lbgh-demo|Ward|Unit/);

    const second = await startAndStop({ PORT: '0', OXYGEN_CHECKER_DATA_DIR: dataDir });
    expect(second.lines.some((line) => line['demoSeed'] === 'skipped')).toBe(true);
    expect(second.advisories).toBe(first.advisories);
  });

  it('never seeds in production, even into an empty store', async () => {
    const dataDir = makeTempDataDir();
    const production = await startAndStop({
      PORT: '0',
      OXYGEN_CHECKER_MODE: 'production',
      OXYGEN_CHECKER_POLICY: join(ROOT, 'policies', 'based-on-bts-2017.yaml'),
      OXYGEN_CHECKER_TRUST: trustPath,
      OXYGEN_CHECKER_PUBLIC_URL: 'https://cds.larkspur-bay.example',
      OXYGEN_CHECKER_DATA_DIR: dataDir,
    });
    expect(production.lines.some((line) => line['mode'] === 'production')).toBe(true);
    expect(production.lines.some((line) => 'demoSeed' in line)).toBe(false);
    expect(production.advisories).toBe(0);
  });
});
