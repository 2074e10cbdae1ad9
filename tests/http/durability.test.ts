import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { requestMoment, retimeRequest } from '../../src/cli/retime-request.js';

/**
 * Nothing acknowledged is lost: the real service (`node --import tsx src/server.ts`) takes a burst of
 * feedback from a second process, is killed with SIGKILL in the middle of it (no chance to flush or
 * close anything), and is started again on the same data directory. Every feedback item that got a
 * 200 must be there, read back through the JSON review API.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const BURST = fileURLToPath(new URL('./support/feedback-burst.ts', import.meta.url));
const EXAMPLE = join(ROOT, 'examples', 'order-sign-pneumonia-above-target.json');
const dataDir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-durability-'));
const children: ChildProcess[] = [];

afterAll(() => {
  for (const child of children) child.kill('SIGKILL');
  rmSync(dataDir, { recursive: true, force: true });
});

/** Starts the service on a free port and resolves with its base URL once it logs that it listens. */
function startService(): Promise<{ child: ChildProcess; url: string }> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/server.ts'], {
    cwd: ROOT,
    env: { PATH: process.env['PATH'] ?? '', HOST: '127.0.0.1', PORT: '0', LOG_LEVEL: 'info', OXYGEN_CHECKER_DATA_DIR: dataDir },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  return new Promise((resolve, reject) => {
    let out = '';
    let err = '';
    child.stderr?.on('data', (chunk: Buffer) => (err += chunk.toString()));
    child.stdout?.on('data', (chunk: Buffer) => {
      out += chunk.toString();
      for (const line of out.split('\n')) {
        if (!line.includes('listening')) continue;
        const parsed = JSON.parse(line) as { url?: string };
        if (parsed.url !== undefined) resolve({ child, url: parsed.url });
      }
    });
    child.once('exit', (code) => reject(new Error(`service exited (${String(code)}) before listening: ${err}`)));
  });
}

function runBurst(feedbackUrl: string, cards: readonly string[]): { child: ChildProcess; acked: () => string[] } {
  const child = spawn(process.execPath, ['--import', 'tsx', BURST, feedbackUrl, cards.join(','), '2000', '8'], {
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  children.push(child);
  let out = '';
  child.stdout?.on('data', (chunk: Buffer) => (out += chunk.toString()));
  return { child, acked: () => out.split('\n').filter((line) => line.endsWith('}')) };
}

describe('feedback survives SIGKILL', () => {
  it('keeps every feedback item that was answered 200', async () => {
    const first = await startService();
    const example = JSON.parse(readFileSync(EXAMPLE, 'utf8')) as unknown;
    const moment = requestMoment(example);
    expect(moment).toBeDefined();
    const request = retimeRequest(example, moment as Date, new Date());
    const hook = await fetch(`${first.url}/cds-services/oxygen-order-sign`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify(request),
    });
    expect(hook.status).toBe(200);
    const cards = ((await hook.json()) as { cards: { uuid: string }[] }).cards.map((card) => card.uuid);
    expect(cards.length).toBeGreaterThan(0);

    const burst = runBurst(`${first.url}/cds-services/oxygen-order-sign/feedback`, cards);
    // Kill the service once a good number of items have been acknowledged, with more still in flight.
    while (burst.acked().length < 150) {
      await new Promise((resolve) => setTimeout(resolve, 5));
    }
    first.child.kill('SIGKILL');
    await new Promise((resolve) => burst.child.once('exit', resolve));
    const acked = burst.acked().map((line) => JSON.parse(line) as { card: string; outcomeTimestamp: string });
    // The kill landed mid-burst: not every item of the 2,000 was answered.
    expect(acked.length).toBeGreaterThanOrEqual(150);
    expect(acked.length).toBeLessThan(2000);

    const second = await startService();
    const stored = new Set<string>();
    for (const card of cards) {
      const answer = await fetch(`${second.url}/review/api/advisories/${card}`);
      expect(answer.status).toBe(200);
      const advisory = (await answer.json()) as { feedback: { outcomeTimestamp: string }[] };
      for (const record of advisory.feedback) stored.add(`${card} ${record.outcomeTimestamp}`);
    }
    const lost = acked.filter((item) => !stored.has(`${item.card} ${item.outcomeTimestamp}`));
    expect(lost).toEqual([]);
    second.child.kill('SIGTERM');
  }, 60_000);
});
