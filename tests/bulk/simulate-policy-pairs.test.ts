import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildExportIndex, type ExportIndex } from '../../src/bulk/export-index.js';
import { sameFactsInputs } from '../../src/bulk/facts-policy-inputs.js';
import { runSimulation, type SimulationPolicy } from '../../src/bulk/simulate.js';
import type { TallySnapshot } from '../../src/bulk/simulation-tally.js';
import { writeDemoExport } from '../../src/bulk/write-demo-export.js';
import { loadPolicyAndCards } from '../../src/config/load-files.js';

/**
 * A replay under two policies gives each policy the advice it gets when replayed against itself,
 * whether the two share each order's facts (they read the record alike) or each reads its own (a
 * different freshness window). An invented Larkspur Bay export; the policies are the bundled BTS 2017
 * one, TSANZ 2015 (other targets, same windows) and BTS 2017 with SpO2 current for 15 minutes only
 * instead of 240 (a made-up window for the test), so older readings are no longer current under it.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const work = mkdtempSync(join(tmpdir(), 'simulate-policy-pairs-test-'));
let index: ExportIndex;
let bts: SimulationPolicy;
let tsanz: SimulationPolicy;
let shortWindow: SimulationPolicy;

async function side(file: string): Promise<SimulationPolicy> {
  const loaded = await loadPolicyAndCards({ policyPath: join(ROOT, 'policies', file), cardsDir: join(ROOT, 'cards') });
  if (loaded.kind !== 'ok') throw new Error(`${file} does not load`);
  return { file, policy: loaded.policy, policyContentHash: loaded.policyContentHash, templates: loaded.templates };
}

/** One side's advisory counts by rule and indicator. */
function counts(tally: TallySnapshot, which: 'baseline' | 'proposed'): Map<string, number> {
  return new Map(tally.byRuleIndicator.filter((r) => r[which] > 0).map((r) => [`${r.ruleId} ${r.indicator}`, r[which]]));
}

beforeAll(async () => {
  await writeDemoExport(join(work, 'export'), 80, 21);
  index = await buildExportIndex(join(work, 'export'), { indexDir: work });
  bts = await side('based-on-bts-2017.yaml');
  tsanz = await side('based-on-tsanz-2015.yaml');
  shortWindow = { ...bts, file: 'bts-short-window', policy: { ...bts.policy, freshness: { ...bts.policy.freshness, vitalSignsMinutes: 15 } } };
}, 120_000);

afterAll(() => {
  index.close();
  rmSync(work, { recursive: true, force: true });
});

describe('runSimulation under a pair of policies', () => {
  it('gives each policy its own advice when the two read the record alike', async () => {
    expect(sameFactsInputs(bts.policy, tsanz.policy)).toBe(true);
    const pair = (await runSimulation(index, bts, tsanz)).tally;
    const btsAlone = (await runSimulation(index, bts, bts)).tally;
    const tsanzAlone = (await runSimulation(index, tsanz, tsanz)).tally;
    expect(pair.ordersEvaluated).toBe(80);
    expect(counts(pair, 'baseline')).toStrictEqual(counts(btsAlone, 'proposed'));
    expect(counts(pair, 'proposed')).toStrictEqual(counts(tsanzAlone, 'baseline'));
    expect(pair.ordersChanged).toBeGreaterThan(0);
  });

  it('gives each policy its own advice when a freshness window differs, so each reads its own facts', async () => {
    expect(sameFactsInputs(bts.policy, shortWindow.policy)).toBe(false);
    const pair = (await runSimulation(index, bts, shortWindow)).tally;
    const btsAlone = (await runSimulation(index, bts, bts)).tally;
    const shortAlone = (await runSimulation(index, shortWindow, shortWindow)).tally;
    expect(counts(pair, 'baseline')).toStrictEqual(counts(btsAlone, 'baseline'));
    expect(counts(pair, 'proposed')).toStrictEqual(counts(shortAlone, 'proposed'));
    // The shorter window must change the facts (readings no longer current), or this case tests nothing.
    expect(counts(pair, 'proposed')).not.toStrictEqual(counts(pair, 'baseline'));
    expect(pair.noCurrentSpo2).toBe(btsAlone.noCurrentSpo2);
  });
});
