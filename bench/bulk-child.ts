import { createReadStream, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { pathToFileURL } from 'node:url';
import type * as LoadFilesModule from '../src/config/load-files.js';
import type * as ExportIndexModule from '../src/bulk/export-index.js';
import type * as SimulateModule from '../src/bulk/simulate.js';

/**
 * One bulk measurement in a process of its own, so its peak memory (maxRSS) is its own:
 *
 *   node BUILD/bench/bulk-child.js read EXPORT_DIR CODE_ROOT
 *     the floor: read every NDJSON line of the export and JSON.parse it, nothing else
 *   node BUILD/bench/bulk-child.js simulate EXPORT_DIR CODE_ROOT POLICY CARDS_DIR [PROPOSED_POLICY]
 *     what `oxygen-order-checker simulate` does: index the export, then replay every order under a
 *     baseline (POLICY) and a proposed policy (PROPOSED_POLICY, or POLICY again), keeping only the tally
 *
 * The service's modules come from CODE_ROOT (the bench's build, or src/), as the rest of the run. The
 * bench runs this file from the same build by plain node (`--runner dist`, both modes alike, so
 * neither side pays for a loader), or through tsx as `node --import tsx bench/bulk-child.ts ...`
 * (`--runner tsx`).
 * Prints one JSON line: { mode, ms, lines, bytes, orders, maxRssKb, cpuMs }, and in simulate mode also
 * { indexMs, replayMs, replayBlocks }.
 */

export interface BulkChildResult {
  readonly mode: 'read' | 'simulate';
  readonly ms: number;
  /** NDJSON lines in the export (read: lines parsed). */
  readonly lines: number;
  readonly bytes: number;
  /** Oxygen orders replayed (simulate only). */
  readonly orders: number;
  readonly maxRssKb: number;
  /** CPU time (user + system, all threads) of the timed part: steadier than `ms` on a busy machine. */
  readonly cpuMs?: number;
  /**
   * Simulate only, absent from older runs: `ms` split into building the index (read, parse, insert into
   * SQLite) and replaying the orders, so each part can be set against the read-and-parse floor.
   */
  readonly indexMs?: number;
  readonly replayMs?: number;
  /**
   * Simulate only, absent from older runs: the replay's ms for each successive block of orders, in the
   * order replayed. V8 optimises the replay's functions only after they have run many times, so on a
   * larger export the first block against the last shows what that warm-up costs. The first block also
   * carries the full garbage collection the replay makes of what indexing left behind.
   */
  readonly replayBlocks?: readonly ReplayBlock[];
}

export interface ReplayBlock {
  /** Orders streamed in this block, skipped ones included (each costs its share of the replay). */
  readonly orders: number;
  readonly ms: number;
}

/** Blocks of 300 orders, or a quarter of the export when it is smaller, so a short run still has four. */
const MAX_BLOCK_ORDERS = 300;
const blockOrders = (total: number): number => Math.max(1, Math.min(MAX_BLOCK_ORDERS, Math.ceil(total / 4)));

/**
 * A progress listener for runSimulation that closes a block every `size` orders and at the last one;
 * `finish` closes a block the count of orders never reached (should the index's count ever differ).
 */
function blockClock(size: number): { blocks: ReplayBlock[]; onProgress: (done: number, total: number) => void; finish: () => void } {
  const blocks: ReplayBlock[] = [];
  let blockStart = performance.now();
  let blockStartDone = 0;
  let lastDone = 0;
  const close = (): void => {
    const now = performance.now();
    blocks.push({ orders: lastDone - blockStartDone, ms: now - blockStart });
    blockStart = now;
    blockStartDone = lastDone;
  };
  const onProgress = (done: number, total: number): void => {
    lastDone = done;
    if (done % size === 0 || done === total) {
      close();
    }
  };
  const finish = (): void => {
    if (lastDone > blockStartDone) {
      close();
    }
  };
  return { blocks, onProgress, finish };
}

export function ndjsonFiles(dir: string): string[] {
  return readdirSync(dir)
    .filter((file) => file.endsWith('.ndjson'))
    .sort()
    .map((file) => join(dir, file));
}

/**
 * The floor reads each file a chunk at a time and splits the lines itself, as simulate's own reader
 * does (src/bulk/ndjson-reader.ts), so the floor is no slower than the reading inside what it is
 * compared with (node:readline, awaited once per line, cost more than the JSON.parse).
 */
async function readAndParse(dir: string): Promise<{ lines: number; bytes: number }> {
  let lines = 0;
  let bytes = 0;
  const parseLine = (text: string): void => {
    const line = text.endsWith('\r') ? text.slice(0, -1) : text;
    if (line.trim() === '') {
      return;
    }
    const parsed = JSON.parse(line) as { resourceType?: unknown };
    if (typeof parsed.resourceType === 'string') {
      lines += 1;
    }
  };
  for (const file of ndjsonFiles(dir)) {
    bytes += statSync(file).size;
    let rest = '';
    for await (const chunk of createReadStream(file, { encoding: 'utf8' })) {
      const parts = (rest + (chunk as string)).split('\n');
      rest = parts.pop() ?? '';
      for (const part of parts) {
        parseLine(part);
      }
    }
    parseLine(rest);
  }
  return { lines, bytes };
}

interface SimulateParts {
  readonly orders: number;
  readonly indexMs: number;
  readonly replayMs: number;
  readonly replayBlocks: readonly ReplayBlock[];
}

async function simulate(dir: string, codeRoot: string, policyPaths: readonly [string, string], cardsDir: string): Promise<SimulateParts> {
  const load = async <T>(path: string): Promise<T> => (await import(pathToFileURL(join(codeRoot, path)).href)) as T;
  const { loadPolicyAndCards } = await load<typeof LoadFilesModule>('config/load-files.js');
  const { buildExportIndex } = await load<typeof ExportIndexModule>('bulk/export-index.js');
  const { runSimulation } = await load<typeof SimulateModule>('bulk/simulate.js');
  const side = async (policyPath: string): Promise<SimulateModule.SimulationPolicy> => {
    const loaded = await loadPolicyAndCards({ policyPath, cardsDir });
    if (loaded.kind === 'invalid') {
      throw new Error(`${policyPath} does not load`);
    }
    return { file: policyPath, policy: loaded.policy, policyContentHash: loaded.policyContentHash, templates: loaded.templates };
  };
  const baseline = await side(policyPaths[0]);
  const proposed = await side(policyPaths[1]);
  const start = performance.now();
  const cpuStart = process.cpuUsage();
  const index = await buildExportIndex(dir, {});
  const indexed = performance.now();
  try {
    const clock = blockClock(blockOrders(index.counts.oxygenOrders));
    const report = await runSimulation(index, baseline, proposed, clock.onProgress);
    const end = performance.now();
    clock.finish();
    timedMs = end - start;
    timedCpuMs = cpuMs(process.cpuUsage(cpuStart));
    return { orders: report.tally.ordersEvaluated, indexMs: indexed - start, replayMs: end - indexed, replayBlocks: clock.blocks };
  } finally {
    index.close();
  }
}

let timedMs = 0;
let timedCpuMs = 0;
const cpuMs = (usage: NodeJS.CpuUsage): number => (usage.user + usage.system) / 1000;

async function main(): Promise<void> {
  const [mode, dir, codeRoot, policyPath, cardsDir, proposedPath] = process.argv.slice(2);
  if ((mode !== 'read' && mode !== 'simulate') || dir === undefined || codeRoot === undefined) {
    process.stderr.write('usage: bulk-child.ts read|simulate EXPORT_DIR CODE_ROOT [POLICY CARDS_DIR [PROPOSED_POLICY]]\n');
    process.exit(2);
  }
  let parts: SimulateParts | undefined;
  let counted: { lines: number; bytes: number };
  if (mode === 'read') {
    const start = performance.now();
    const cpuStart = process.cpuUsage();
    counted = await readAndParse(dir);
    timedMs = performance.now() - start;
    timedCpuMs = cpuMs(process.cpuUsage(cpuStart));
  } else {
    if (policyPath === undefined || cardsDir === undefined) {
      process.stderr.write('simulate needs POLICY and CARDS_DIR\n');
      process.exit(2);
    }
    parts = await simulate(dir, codeRoot, [policyPath, proposedPath ?? policyPath], cardsDir);
    // Counted after the timed part, so the count is not in the figure.
    counted = await readAndParse(dir);
  }
  const result: BulkChildResult = {
    mode,
    ms: timedMs,
    lines: counted.lines,
    bytes: counted.bytes,
    orders: parts?.orders ?? 0,
    maxRssKb: process.resourceUsage().maxRSS,
    cpuMs: timedCpuMs,
    ...(parts === undefined ? {} : { indexMs: parts.indexMs, replayMs: parts.replayMs, replayBlocks: parts.replayBlocks }),
  };
  process.stdout.write(`${JSON.stringify(result)}\n`);
}

await main();
