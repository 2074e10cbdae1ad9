import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { BULK_POLICIES, bulkSplit, runChild, SEED, steadyState } from './bulk-cases.js';
import type { BulkChildResult } from './bulk-child.js';
import { prepareService } from './service-process.js';
import { writeDemoExport } from '../src/bulk/write-demo-export.js';

/**
 * The bench's bulk part alone, for work on `simulate`: the same children as `npm run bench`
 * (bench/bulk-child.ts) over the same invented export, taking turns, optionally with an earlier build
 * as a third arm so before and after are measured in one interleaved run:
 *
 *   node --import tsx bench/bulk-alone.ts [--orders 300] [--rounds 3] [--before CODE_ROOT]
 *
 * CODE_ROOT is a folder of compiled modules (as `tsc -p tsconfig.build.json --outDir DIR` writes,
 * with a package.json of `"type": "module"` and node_modules reachable above it). The current code is
 * built into a private folder as the bench builds it. Prints each turn, then the best (least disturbed)
 * of each arm: wall ms, CPU ms of the timed part, NDJSON lines a second, and each simulate arm's
 * throughput as a ratio of the read-and-parse loop's (issue 9's target: at least 0.5), with its index
 * build and replay as multiples of the loop's time, and the replay's first and last block of orders.
 */

const ROOT = new URL('../', import.meta.url).pathname;

const { values } = parseArgs({
  options: { orders: { type: 'string', default: '300' }, rounds: { type: 'string', default: '3' }, before: { type: 'string' } },
});
const orders = Number(values.orders);
const rounds = Number(values.rounds);
if (!Number.isInteger(orders) || orders < 1 || !Number.isInteger(rounds) || rounds < 1) {
  process.stderr.write('usage: bulk-alone.ts [--orders N] [--rounds R] [--before CODE_ROOT]\n');
  process.exit(2);
}

/** A simulate turn's index build, replay and replay blocks, as the child reported them. */
function partsText(r: BulkChildResult): string {
  if (r.indexMs === undefined || r.replayMs === undefined) return '';
  const blocks = (r.replayBlocks ?? []).map((b) => `${Math.round(b.ms)}`).join(', ');
  return `; index ${Math.round(r.indexMs)} ms, replay ${Math.round(r.replayMs)} ms (blocks of ${r.replayBlocks?.[0]?.orders ?? 0} orders: ${blocks} ms)`;
}

/** A simulate arm's parts against the read arm, and the pace of its last block against its first. */
function splitText(r: BulkChildResult, read: BulkChildResult): string {
  const split = bulkSplit(r, read);
  const steady = steadyState(r, read);
  if (split === undefined || steady === undefined) return '';
  return (
    `\n    index ${split.indexTimesFloor.toFixed(2)} × read + replay ${split.replayTimesFloor.toFixed(2)} × read;` +
    ` last ${steady.last.orders} orders ${steady.firstOverLast.toFixed(2)} × the pace of the first ${steady.first.orders};` +
    ` at the last block's pace: index ${steady.indexTimesFloor.toFixed(2)} × + replay ${steady.lastPaceReplayTimesFloor.toFixed(2)} ×` +
    ` = ${(steady.indexTimesFloor + steady.lastPaceReplayTimesFloor).toFixed(2)} ×, about ${steady.estimatedRatio.toFixed(3)} × read's throughput`
  );
}

const built = prepareService(ROOT, 'dist');
const scratch = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-bulk-alone-'));
try {
  const exportDir = join(scratch, 'export');
  await writeDemoExport(exportDir, orders, SEED);
  const policy = join(ROOT, 'policies', BULK_POLICIES[0]);
  const proposed = join(ROOT, 'policies', BULK_POLICIES[1]);
  const cards = join(ROOT, 'cards');
  const arms: Record<string, string[]> = {
    read: ['read', exportDir, built.codeRoot],
    simulate: ['simulate', exportDir, built.codeRoot, policy, cards, proposed],
    ...(values.before === undefined ? {} : { 'simulate (before)': ['simulate', exportDir, values.before, policy, cards, proposed] }),
  };
  const names = Object.keys(arms);
  const best = new Map<string, BulkChildResult>();
  for (let round = 0; round < rounds; round += 1) {
    // Each round starts with a different arm, so a machine getting busier favours none.
    const order = names.map((_, i) => names[(i + round) % names.length] ?? 'read');
    for (const name of order) {
      const result = runChild(ROOT, built, arms[name] ?? []);
      process.stdout.write(`${name}: ${Math.round(result.ms)} ms, ${Math.round(result.cpuMs ?? 0)} ms CPU, peak ${Math.round(result.maxRssKb / 1024)} MB${partsText(result)}\n`);
      const kept = best.get(name);
      if (kept === undefined || result.ms < kept.ms) best.set(name, result);
    }
  }
  const read = best.get('read');
  const linesPerS = (r: BulkChildResult): number => r.lines / (r.ms / 1000);
  process.stdout.write(`\nbest of ${rounds} (${orders} orders, ${read?.lines ?? 0} NDJSON lines):\n`);
  for (const [name, r] of best) {
    const ratio =
      read === undefined || name === 'read'
        ? ''
        : `, ${(linesPerS(r) / linesPerS(read)).toFixed(3)} × read (CPU ${((read.cpuMs ?? 0) / (r.cpuMs ?? 1)).toFixed(3)} ×)${splitText(r, read)}`;
    process.stdout.write(`  ${name}: ${Math.round(r.ms)} ms, ${Math.round(r.cpuMs ?? 0)} ms CPU, ${Math.round(linesPerS(r))} lines/s${ratio}\n`);
  }
} finally {
  rmSync(scratch, { recursive: true, force: true });
  built.cleanUp();
}
