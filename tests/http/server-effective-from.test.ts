import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { startServer } from '../../src/server.js';
import { makeTempDataDir } from '../helpers/temp-store.js';
import { createMemoryLog } from '../log/memory-log.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));

/** The bundled BTS 2017 preset with another effectiveFrom date, written to a temporary file. */
function presetEffectiveFrom(date: string): string {
  const file = join(mkdtempSync(join(tmpdir(), 'oxygen-order-checker-effective-')), 'larkspur-bay.yaml');
  writeFileSync(
    file,
    readFileSync(join(ROOT, 'policies/based-on-bts-2017.yaml'), 'utf8').replace(/^effectiveFrom: .*$/m, `effectiveFrom: ${date}`),
  );
  return file;
}

async function startLines(date: string): Promise<Record<string, unknown>[]> {
  const log = createMemoryLog();
  const result = await startServer(
    { PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(), OXYGEN_CHECKER_POLICY: presetEffectiveFrom(date) },
    ROOT,
    createLogger({ level: 'info', destination: log.stream }),
  );
  if (result.kind !== 'started') throw new Error(result.problems);
  await result.started.close();
  return log.lines();
}

describe('start-up with a policy not yet in effect', () => {
  it('starts, and warns that the policy is used ahead of its date', async () => {
    // A date no run of this suite reaches, so the test does not depend on the day it runs.
    const lines = await startLines('2999-01-01');
    const warning = lines.find((line) => line['effectiveFrom'] === '2999-01-01');
    expect(warning).toMatchObject({ level: 40, policyId: 'based-on-bts-2017' });
    expect(warning?.['msg']).toMatch(/^policy based-on-bts-2017 v1\.0\.0 is effective from 2999-01-01, but the date at the site is \d{4}-\d{2}-\d{2}: it is in use from now/);
  });

  it('gives no such warning once the date has come', async () => {
    const lines = await startLines('2020-01-01');
    expect(lines.filter((line) => 'effectiveFrom' in line)).toStrictEqual([]);
    expect(lines.some((line) => String(line['msg']).startsWith('oxygen-order-checker listening'))).toBe(true);
  });
});
