import { describe, expect, it } from 'vitest';
import { bulkSplit, steadyState, timesFloor, type BulkMeasurements } from '../../bench/bulk-cases.js';
import type { BulkChildResult, ReplayBlock } from '../../bench/bulk-child.js';
import { failingTargetsSummary, renderTargetsSection } from '../../bench/targets-doc.js';
import { bulkFigures } from '../../bench/targets.js';
import { inventedPhased } from './support/invented-micro.js';

/**
 * Where simulate's time goes, from figures it is given: the index build and the replay each against
 * the read-and-parse loop, the larger export's replay block by block, and the steady-state estimate.
 * No timing is taken here; every input is invented, and each expected value is the arithmetic of the
 * inputs, worked out in the comment beside it.
 */

const read: BulkChildResult = { mode: 'read', ms: 100, lines: 1000, bytes: 500_000, orders: 0, maxRssKb: 60_000 };
/** The loop over the larger export: 0.05 ms a line, twice the smaller's pace, as the loop warms up too. */
const readLarge: BulkChildResult = { ...read, ms: 200, lines: 4000, bytes: 2_000_000 };

function simulate(lines: number, indexMs: number, blocks: readonly ReplayBlock[]): BulkChildResult {
  const replayMs = blocks.reduce((sum, b) => sum + b.ms, 0);
  const orders = blocks.reduce((sum, b) => sum + b.orders, 0);
  return { mode: 'simulate', ms: indexMs + replayMs, lines, bytes: lines * 500, orders, maxRssKb: 120_000, indexMs, replayMs, replayBlocks: blocks };
}

const block = (orders: number, ms: number): ReplayBlock => ({ orders, ms });

/** 300 orders in blocks of 75, then 1200 in blocks of 300 whose last runs three times the first's pace. */
const small = simulate(1000, 150, [block(75, 200), block(75, 100), block(75, 80), block(75, 70)]);
const large = simulate(4000, 400, [block(300, 360), block(300, 150), block(300, 130), block(300, 120)]);
const measured: BulkMeasurements = { smallOrders: 300, largeOrders: 1200, read, simulate: small, simulateLarge: large, readLarge };

describe('the split of simulate against the read-and-parse loop', () => {
  it('gives each part as a multiple of the loop’s time for as many lines, adding up to the inverse of the target’s ratio', () => {
    // 4000 lines at the loop's 0.1 ms a line is 400 ms, so 200 ms is half of it.
    expect(timesFloor(200, 4000, read)).toBe(0.5);
    const split = bulkSplit(small, read);
    // Index 150 ms and replay 450 ms over the loop's 100 ms for the same 1000 lines.
    expect(split?.indexTimesFloor).toBe(1.5);
    expect(split?.replayTimesFloor).toBe(4.5);
    const throughput = bulkFigures(measured).find((f) => f.id === 'bulk-throughput')?.value ?? Number.NaN;
    expect((split?.indexTimesFloor ?? 0) + (split?.replayTimesFloor ?? 0)).toBeCloseTo(1 / throughput, 10);
  });

  it('estimates the ratio on a very large export from the index build and the last block’s pace', () => {
    const steady = steadyState(large, readLarge);
    // First block 1.2 ms an order, last 0.4: three times the pace.
    expect(steady?.firstOverLast).toBeCloseTo(3, 10);
    // Index 400 ms over the larger loop's 200 ms.
    expect(steady?.indexTimesFloor).toBe(2);
    // 1200 orders at 0.4 ms is 480 ms, over 200: 2.4; the ratio is 1 / (2 + 2.4).
    expect(steady?.lastPaceReplayTimesFloor).toBeCloseTo(2.4, 10);
    expect(steady?.estimatedRatio).toBeCloseTo(1 / 4.4, 10);
  });

  it('has nothing to split in a run from before the parts were kept, or with one block only', () => {
    const older: BulkChildResult = { mode: 'simulate', ms: 600, lines: 1000, bytes: 500_000, orders: 300, maxRssKb: 120_000 };
    expect(bulkSplit(older, read)).toBeUndefined();
    expect(steadyState(older, read)).toBeUndefined();
    expect(steadyState(simulate(1000, 150, [block(300, 450)]), read)).toBeUndefined();
  });
});

describe('the bulk part of the page', () => {
  it('shows each part, the blocks, the warm-up and the estimate, computed from the run', () => {
    const page = renderTargetsSection({ figures: [], bulk: measured }, undefined);
    expect(page).toContain('| 300 orders (the run above) | 150 ms, 1.50 × | 450 ms, 4.50 × | 200, 100, 80, 70 (75 orders each) |');
    // Against the larger export's own loop, 200 ms: 400 / 200 and 760 / 200.
    expect(page).toContain('| 1,200 orders | 400 ms, 2.00 × | 760 ms, 3.80 × | 360, 150, 130, 120 (300 orders each) |');
    expect(page).toContain('| read and JSON.parse every line, 1200 orders (one turn) | 4,000 | 1,953 | 200 | 20,000 | 59 |');
    expect(page).toContain(
      'The last 300 orders of the 1,200-order run replayed 3.00 × faster than the first 300 (0.40 ms an order against 1.20 ms an order): the first ones run before V8 has optimised',
    );
    expect(page).toContain("the index build's 2.00 × the loop's time (as in the 1,200-order run)");
    expect(page).toContain("its last block's pace, 2.40 ×: 4.40 × in all (the loop's own time per line taken as at 1,200 orders), a throughput of about 0.23 × the loop's");
    // Issue 9's bulk target, 0.5 × the loop's throughput, is simulate's time at most 1 / 0.5 = 2 × the loop's.
    expect(page).toContain("a throughput of about 0.23 × the loop's (the target, 0.5 ×, needs 2.00 × or less in all)");
    expect(page).toContain('so the target needs them to add up to 2 × or less.');
    // 1 / 2: the index build's 2 × alone.
    expect(page).toContain("even a replay that cost nothing would leave the index build's 2.00 ×, at most 0.50 × the loop's throughput.");
  });

  it('says when the blocks ran at one pace, and names unequal blocks by their sizes', () => {
    const even = simulate(3900, 400, [block(300, 130), block(300, 125), block(300, 120), block(100, 40)]);
    const page = renderTargetsSection({ figures: [], bulk: { ...measured, largeOrders: 1000, simulateLarge: even } }, undefined);
    // 130 / 300 against 40 / 100: 0.43 and 0.40 ms an order, 1.08 × apart.
    expect(page).toContain(
      'The last 100 orders of the 1,000-order run replayed at about the pace of the first 300 (0.40 ms an order against 0.43 ms an order): no warm-up shows in this run.',
    );
    expect(page).toContain('| 130, 125, 120, 40 (300, 300, 300, 100 orders) |');
  });

  it('still renders a run from before the parts were kept, saying the split is missing', () => {
    const strip = ({ indexMs: _i, replayMs: _r, replayBlocks: _b, ...rest }: BulkChildResult): BulkChildResult => rest;
    const { readLarge: _l, ...older } = measured;
    const page = renderTargetsSection({ figures: [], bulk: { ...older, simulate: strip(small), simulateLarge: strip(large) } }, undefined);
    expect(page).toContain('| simulate, 1200 orders | 4,000 |');
    expect(page).toContain("Simulate's time was not split into index build and replay in this run.");
    expect(page).not.toContain('replayed');
    expect(page).not.toContain('(one turn)');
    expect(renderTargetsSection({ figures: [] }, undefined)).not.toContain('not split');
  });
});

describe('the summary of failing targets under the targets table', () => {
  const micro = [inventedPhased('sign-a', { parse: 10, facts: 10, factsAndRules: 20, evaluate: 80 })];

  it('says what each failed target would take, from the run’s own figures', () => {
    const figures = [...bulkFigures(measured), { id: 'engine-examples' as const, value: 8, basis: '' }];
    const lines = failingTargetsSummary({ figures, bulk: measured }, { micro, cpus: 2 });
    // Bulk: index 1.5 × the loop, replay 4.5 ×; a free replay leaves at most 1 / 1.5 = 0.67 ×.
    expect(lines.find((l) => l.startsWith('**Bulk.**'))).toContain('took 1.50 × the read-and-parse loop\'s time, and the replay 4.50 ×');
    expect(lines.find((l) => l.startsWith('**Bulk.**'))).toContain('at most 0.67 × the loop\'s throughput');
    // Engine: 3 × 10 µs allowed, 80 − 30 = 50 µs to lose.
    expect(lines.find((l) => l.startsWith('**Engine.**'))).toContain('would have to lose 50.0 µs of 80.0 in sign-a');
    expect(renderTargetsSection({ figures, bulk: measured }, undefined, { micro, cpus: 2 })).toContain(
      'What the targets this run failed would take, from its own figures:\n\n- **Engine.**',
    );
  });

  it('says nothing of targets that passed, or whose parts were not measured', () => {
    const passing = [{ id: 'engine-examples' as const, value: 2, basis: '' }, { id: 'bulk-throughput' as const, value: 0.6, basis: '' }];
    expect(failingTargetsSummary({ figures: passing, bulk: measured }, { micro, cpus: 2 })).toEqual([]);
    expect(renderTargetsSection({ figures: passing }, undefined)).not.toContain('What the targets this run failed would take');
    // Failed, but from a run without the phase pass or the bulk split: nothing to say.
    const failing = [{ id: 'engine-examples' as const, value: 8, basis: '' }];
    const { phases: _dropped, ...older } = inventedPhased('old', { parse: 10, facts: 10, factsAndRules: 20, evaluate: 80 });
    expect(failingTargetsSummary({ figures: failing }, { micro: [older] })).toEqual([]);
  });
});
