import { spawn, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { afterEach, describe, expect, it } from 'vitest';
import type { Card } from '../../src/cds/schemas.js';
import { makeTempDataDir, openTempStore } from '../helpers/temp-store.js';
import { loadExamples } from './support/fuzz-requests.js';

/**
 * Nothing acknowledged is lost: the service runs as its own process on a data directory, feedback is
 * posted to it in a burst, and the process is killed with SIGKILL in the middle. Every card it
 * answered and every feedback item it answered 200 must be in the store afterwards.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const children: ChildProcess[] = [];

afterEach(() => {
  for (const child of children.splice(0)) {
    if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
  }
});

function startService(dataDir: string): Promise<{ child: ChildProcess; url: string }> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/server.ts'], {
    cwd: ROOT,
    env: { PATH: process.env['PATH'] ?? '', HOST: '127.0.0.1', PORT: '0', O2CHECK_DATA_DIR: dataDir, LOG_LEVEL: 'warn' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  return new Promise((resolve, reject) => {
    let stdout = '';
    child.stdout?.on('data', (chunk: Buffer) => {
      stdout += chunk.toString();
      const line = stdout.split('\n').find((l) => l.includes('"url"'));
      if (line !== undefined) resolve({ child, url: String((JSON.parse(line) as { url: unknown }).url) });
    });
    child.once('exit', (code) => reject(new Error(`service exited (${String(code)}) before listening`)));
  });
}

const exited = (child: ChildProcess): Promise<void> =>
  new Promise((resolve) => {
    if (child.exitCode !== null || child.signalCode !== null) resolve();
    else child.once('exit', () => resolve());
  });

describe('durability', () => {
  it('keeps every card answered and every feedback item acknowledged when the service is killed mid-burst', async () => {
    const example = loadExamples().find((e) => e.file === 'order-sign-pneumonia-above-target.json');
    if (example === undefined) throw new Error('example missing');
    const dataDir = makeTempDataDir();
    const { child, url } = await startService(dataDir);

    const hook = await fetch(`${url}/cds-services/${example.serviceId}`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify(example.body),
    });
    expect(hook.status).toBe(200);
    const cards = ((await hook.json()) as { cards: Card[] }).cards;
    const card = cards[0]?.uuid ?? '';

    // Each item is a distinct record: the same card overridden at a different minute and second.
    const acknowledged: string[] = [];
    const post = async (n: number): Promise<void> => {
      const at = new Date(Date.UTC(2026, 10, 30, 10, 0, n)).toISOString();
      const body = { feedback: [{ card, outcome: 'overridden', outcomeTimestamp: at }] };
      try {
        const response = await fetch(`${url}/cds-services/${example.serviceId}/feedback`, {
          method: 'POST',
          headers: { 'Content-Type': 'application/json' },
          body: JSON.stringify(body),
        });
        if (response.status === 200) acknowledged.push(at);
      } catch {
        // the connection died with the process: not acknowledged, so nothing is owed
      }
    };
    const burst = (async () => {
      for (let n = 0; n < 2000 && child.exitCode === null && child.signalCode === null; n += 4) {
        await Promise.all([post(n), post(n + 1), post(n + 2), post(n + 3)]);
      }
    })();
    while (acknowledged.length < 40 && child.exitCode === null) {
      await new Promise((resolve) => setTimeout(resolve, 5));
    }
    child.kill('SIGKILL');
    await burst;
    await exited(child);

    const { store } = openTempStore(dataDir);
    const advisory = await store.getAdvisory(card);
    expect(advisory?.ruleId).toBe(cards[0]?.source.topic?.code);
    for (const other of cards) {
      expect(await store.getAdvisory(other.uuid ?? '')).toBeDefined();
    }
    const kept = new Set(advisory?.feedback.map((f) => f.outcomeTimestamp));
    const lost = acknowledged.filter((at) => !kept.has(at));
    expect(lost).toStrictEqual([]);
    expect(acknowledged.length).toBeGreaterThanOrEqual(40);
  });
});
