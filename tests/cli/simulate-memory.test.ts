import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeDemoExport } from '../../src/bulk/write-demo-export.js';

/**
 * Peak memory stays flat as the export grows: `simulate` runs in a child process on an export of N
 * orders and on one of 10 × N, and the larger's peak RSS (process.resourceUsage().maxRSS, printed by
 * the child) is at most 1.2 × the smaller's (the requirement). A memory check, not a timing:
 * nothing here depends on how fast the machine is.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const SMALL = 200;
const LARGE = 10 * SMALL;

const work = mkdtempSync(join(tmpdir(), 'simulate-memory-test-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

beforeAll(async () => {
  await writeDemoExport(join(work, 'small'), SMALL, 11);
  await writeDemoExport(join(work, 'large'), LARGE, 11);
}, 120_000);

/** The child: runs the real command line in its own process, then prints its peak RSS. */
const CHILD = `
import { runCli } from ${JSON.stringify(join(ROOT, 'src/cli/run-cli.ts'))};
import { readFileSync } from 'node:fs';
const [exportDir, jsonFile] = process.argv.slice(-2);
const code = await runCli(['simulate', '--quiet', '--policy', ${JSON.stringify(join(ROOT, 'policies/based-on-tsanz-2015.yaml'))}, '--json', jsonFile, exportDir], {
  stdout: () => undefined, stderr: (t) => process.stderr.write(t), readFile: (p) => readFileSync(p, 'utf8'), now: () => new Date(),
});
process.stdout.write(JSON.stringify({ code, maxRssKb: process.resourceUsage().maxRSS }));
`;

function simulateInChild(name: string): { code: number; maxRssKb: number; ordersSeen: number } {
  const jsonFile = join(work, `${name}.json`);
  const child = spawnSync(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', CHILD, '--', join(work, name), jsonFile], {
    cwd: ROOT,
    encoding: 'utf8',
    env: { PATH: process.env['PATH'] ?? '', TMPDIR: work },
  });
  expect(child.stderr).toBe('');
  const result = JSON.parse(child.stdout) as { code: number; maxRssKb: number };
  return { ...result, ordersSeen: JSON.parse(readFileSync(jsonFile, 'utf8')).tally.ordersSeen };
}

describe('simulate memory', () => {
  it('peaks at no more than 1.2 times the memory on an export ten times larger', () => {
    const small = simulateInChild('small');
    const large = simulateInChild('large');
    expect(small.code).toBe(0);
    expect(large.code).toBe(0);
    expect(small.ordersSeen).toBe(SMALL);
    expect(large.ordersSeen).toBe(LARGE);
    expect(large.maxRssKb).toBeLessThanOrEqual(1.2 * small.maxRssKb);
  }, 300_000);
});
