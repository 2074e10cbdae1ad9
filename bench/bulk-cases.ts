import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { writeDemoExport } from '../src/bulk/write-demo-export.js';
import type { BulkChildResult, ReplayBlock } from './bulk-child.js';
import type { BuiltService } from './service-process.js';

/**
 * Bulk simulation against its floor, in one run: an invented export (`demo-export`) at two sizes, the
 * larger `LARGE_FACTOR` times the smaller; at the smaller size a process that only reads and parses
 * every NDJSON line and one that runs `simulate` over the same files take turns; at both sizes the
 * simulation's peak memory (maxRSS of its own process) is kept.
 */

export const LARGE_FACTOR = 4;
/** The demo export's seed: the same seed and size give the same files. */
export const SEED = 9;

/**
 * The baseline and proposed policies of the replay: two bundled policies with different targets, as an
 * oxygen team comparing two target sets would run it (one file twice would measure a replay whose two
 * sides always agree).
 */
export const BULK_POLICIES = ['based-on-bts-2017.yaml', 'based-on-tsanz-2015.yaml'] as const;

export interface BulkMeasurements {
  readonly smallOrders: number;
  readonly largeOrders: number;
  /** Best of the rounds at the smaller size (the least disturbed by other work on the machine). */
  readonly read: BulkChildResult;
  readonly simulate: BulkChildResult;
  readonly simulateLarge: BulkChildResult;
  /**
   * The read-and-parse loop once over the larger export, just before `simulateLarge`, so the larger
   * export's parts are set against a floor of its own size; absent from older runs.
   */
  readonly readLarge?: BulkChildResult;
}

/** One bulk child on the same code as the service: the private build by plain node, or through tsx. */
export function runChild(root: string, built: BuiltService, args: readonly string[]): BulkChildResult {
  const child = spawnSync(process.execPath, [...built.benchEntry('bulk-child'), ...args], {
    cwd: root,
    encoding: 'utf8',
    timeout: 600_000,
    maxBuffer: 1024 * 1024,
  });
  if (child.status !== 0) {
    throw new Error(`bench/bulk-child ${args[0] ?? ''} failed (exit ${String(child.status)}): ${child.stderr.slice(0, 1200)}`);
  }
  const line = child.stdout.trim().split('\n').at(-1) ?? '';
  return JSON.parse(line) as BulkChildResult;
}

const faster = (a: BulkChildResult | undefined, b: BulkChildResult): BulkChildResult => (a === undefined || b.ms < a.ms ? b : a);

export async function measureBulk(
  root: string,
  built: BuiltService,
  scratch: string,
  smallOrders: number,
  rounds: number,
  progress: (line: string) => void,
): Promise<BulkMeasurements> {
  const policy = join(root, 'policies', BULK_POLICIES[0]);
  const proposed = join(root, 'policies', BULK_POLICIES[1]);
  const cards = join(root, 'cards');
  const largeOrders = smallOrders * LARGE_FACTOR;
  const smallDir = mkdtempSync(join(scratch, 'bulk-small-'));
  const largeDir = mkdtempSync(join(scratch, 'bulk-large-'));
  try {
    progress(`writing demo exports of ${smallOrders} and ${largeOrders} orders`);
    await writeDemoExport(smallDir, smallOrders, SEED);
    await writeDemoExport(largeDir, largeOrders, SEED);
    let read: BulkChildResult | undefined;
    let simulate: BulkChildResult | undefined;
    for (let round = 0; round < rounds; round += 1) {
      // Turns alternate, so a machine getting busier does not favour one side.
      const order = round % 2 === 0 ? (['read', 'simulate'] as const) : (['simulate', 'read'] as const);
      for (const mode of order) {
        const result = runChild(root, built, mode === 'read' ? [mode, smallDir, built.codeRoot] : [mode, smallDir, built.codeRoot, policy, cards, proposed]);
        progress(`bulk ${mode}, ${smallOrders} orders: ${Math.round(result.ms)} ms, ${result.lines} lines, peak ${Math.round(result.maxRssKb / 1024)} MB`);
        if (mode === 'read') {
          read = faster(read, result);
        } else {
          simulate = faster(simulate, result);
        }
      }
    }
    const readLarge = runChild(root, built, ['read', largeDir, built.codeRoot]);
    progress(`bulk read, ${largeOrders} orders: ${Math.round(readLarge.ms)} ms, ${readLarge.lines} lines`);
    const simulateLarge = runChild(root, built, ['simulate', largeDir, built.codeRoot, policy, cards, proposed]);
    progress(`bulk simulate, ${largeOrders} orders: ${Math.round(simulateLarge.ms)} ms, peak ${Math.round(simulateLarge.maxRssKb / 1024)} MB`);
    if (read === undefined || simulate === undefined) {
      throw new Error('the bulk rounds measured nothing');
    }
    return { smallOrders, largeOrders, read, simulate, simulateLarge, readLarge };
  } finally {
    rmSync(smallDir, { recursive: true, force: true });
    rmSync(largeDir, { recursive: true, force: true });
  }
}

/**
 * A part's time as a multiple of the read-and-parse floor's time for as many NDJSON lines. Each export
 * size needs a floor of its own size: the loop warms up too (it ran 86,000 lines a second at 300
 * orders and 187,000 at 1200 in one hand run), so a floor scaled by lines would flatter the larger
 * export's parts. Because the floor's throughput over simulate's is the inverse of simulate's time
 * over the floor's, the parts add up: index + replay = 1 / the ratio issue 9 judges.
 */
export function timesFloor(ms: number, lines: number, floor: BulkChildResult): number {
  return ms / ((floor.ms * lines) / floor.lines);
}

export interface BulkSplit {
  readonly indexMs: number;
  readonly replayMs: number;
  readonly indexTimesFloor: number;
  readonly replayTimesFloor: number;
  readonly blocks: readonly ReplayBlock[];
}

/** One simulate run split into its parts; undefined for a run from before the parts were kept. */
export function bulkSplit(simulate: BulkChildResult, floor: BulkChildResult): BulkSplit | undefined {
  const { indexMs, replayMs, replayBlocks } = simulate;
  if (indexMs === undefined || replayMs === undefined || replayBlocks === undefined) {
    return undefined;
  }
  return {
    indexMs,
    replayMs,
    indexTimesFloor: timesFloor(indexMs, simulate.lines, floor),
    replayTimesFloor: timesFloor(replayMs, simulate.lines, floor),
    blocks: replayBlocks,
  };
}

export interface SteadyState {
  readonly first: ReplayBlock;
  readonly last: ReplayBlock;
  /** The first block's ms per order over the last's: above 1 when the last ran faster. */
  readonly firstOverLast: number;
  readonly indexTimesFloor: number;
  /** The whole replay at the last block's ms per order, as a multiple of the floor. */
  readonly lastPaceReplayTimesFloor: number;
  /** 1 / (index + replay at the last block's pace): the ratio a very large export would tend to. */
  readonly estimatedRatio: number;
}

const msPerOrder = (block: ReplayBlock): number => block.ms / block.orders;

/**
 * What the ratio would be on an export so large that the replay's warm-up no longer counts: the index
 * build at the cost per line this run measured, the replay at its last block's pace. An estimate that
 * assumes the index build's cost per line stays as measured; undefined without two blocks to compare.
 */
export function steadyState(simulate: BulkChildResult, floor: BulkChildResult): SteadyState | undefined {
  const split = bulkSplit(simulate, floor);
  const first = split?.blocks[0];
  const last = split?.blocks.at(-1);
  if (split === undefined || first === undefined || last === undefined || split.blocks.length < 2 || first.orders === 0 || last.orders === 0) {
    return undefined;
  }
  const orders = split.blocks.reduce((sum, block) => sum + block.orders, 0);
  const lastPaceReplayTimesFloor = timesFloor(msPerOrder(last) * orders, simulate.lines, floor);
  return {
    first,
    last,
    firstOverLast: msPerOrder(first) / msPerOrder(last),
    indexTimesFloor: split.indexTimesFloor,
    lastPaceReplayTimesFloor,
    estimatedRatio: 1 / (split.indexTimesFloor + lastPaceReplayTimesFloor),
  };
}
