import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { selectExamples } from '../../bench/cases.js';
import { LARGE_REQUEST_OBSERVATIONS, largeExample, largeObservationSeries } from '../../bench/large-request.js';
import { evaluatePrepared, loadBundledFiles, prepareCase, runMicro, runPhases, runRulesPrepared } from '../../bench/micro.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));

/**
 * The bench's large request (issue 9: "a 70 KB request with 200 observations") must be a call the
 * service accepts and evaluates, of the size and make-up the issue names, for any order time.
 */

// LOINC: 59408-5 SpO2 by pulse oximetry, 9279-1 respiratory rate, 2744-1 arterial pH, 2019-8 PaCO2,
// 2703-7 PaO2, 1960-4 arterial bicarbonate (loinc.org), as the examples code them.
const LOINC_CODES = new Set(['59408-5', '9279-1', '2744-1', '2019-8', '2703-7', '1960-4']);

type Entry = { resource: { id: string; code: { coding: { code: string }[] }; effectiveDateTime: string; valueQuantity: { value: number; code: string } } };

const NOW_CASES = [new Date('2026-11-30T09:40:00Z'), new Date('2027-02-28T23:59:59Z'), new Date()];

describe('largeExample', () => {
  it.each(NOW_CASES)('is about 70 KB with 200 observations, all coded, distinct, before the order and newest first (now %s)', (now) => {
    const example = largeExample(now);
    // Issue 9: "a 70 KB request with 200 observations".
    expect(example.requestBytes).toBeGreaterThan(60_000);
    expect(example.requestBytes).toBeLessThan(80_000);
    const request = JSON.parse(example.body) as { prefetch: { observations: { total: number; entry: Entry[] } } };
    const entries = request.prefetch.observations.entry;
    expect(entries).toHaveLength(LARGE_REQUEST_OBSERVATIONS);
    expect(request.prefetch.observations.total).toBe(LARGE_REQUEST_OBSERVATIONS);
    expect(new Set(entries.map((e) => e.resource.id)).size).toBe(entries.length);
    const kinds = new Set(entries.map((e) => e.resource.code.coding[0]?.code));
    expect(kinds).toEqual(LOINC_CODES);
    const times = entries.map((e) => Date.parse(e.resource.effectiveDateTime));
    expect(times.every((t) => t < now.getTime())).toBe(true);
    expect(times.every((t, i) => i === 0 || t <= (times[i - 1] as number))).toBe(true);
  });

  it('makes exactly the number of observations asked for', () => {
    for (const count of [1, 2, 7, 57, 200, 333]) {
      expect(largeObservationSeries(Date.parse('2026-11-30T09:40:00Z'), count)).toHaveLength(count);
    }
  });

  it('is a request the service validates, gathers and evaluates to cards, in process', async () => {
    const files = await loadBundledFiles();
    const now = new Date();
    const prepared = await prepareCase(largeExample(now));
    expect(prepared.request.hook).toBe('order-sign');
    expect(evaluatePrepared(prepared, files, now)).toBeGreaterThan(0);
  });
});

describe('runMicro', () => {
  it('times the parse-only yardstick beside the older parse + stringify, the same number of times', async () => {
    const files = await loadBundledFiles();
    const now = new Date();
    const result = await runMicro(largeExample(now, 20), files, now, { iterations: 4, rounds: 2, warmupIterations: 1, maxMsPerLoop: 60_000 });
    expect(result.parseOnly?.iterations).toBe(4);
    expect(result.baseline.iterations).toBe(4);
    expect(result.evaluate.iterations).toBe(4);
    expect(result.cards).toBeGreaterThan(0);
  });

  it('times the phase pass: JSON.parse, facts, facts + rules and evaluateHook as often, each taking some time', async () => {
    const files = await loadBundledFiles();
    const now = new Date();
    const example = largeExample(now, 20);
    const phases = runPhases(await prepareCase(example), files, now, { iterations: 4, rounds: 2, warmupIterations: 1, maxMsPerLoop: 60_000 });
    for (const phase of [phases.parseOnly, phases.facts, phases.factsAndRules, phases.evaluate]) {
      expect(phase.iterations).toBe(4);
      expect(phase.p50Us).toBeGreaterThan(0);
    }
  });
});

describe('the phase loops', () => {
  it('find as many findings as evaluateHook builds cards, for order-sign and order-select alike', async () => {
    const files = await loadBundledFiles();
    const now = new Date();
    const { sign, select } = selectExamples(ROOT, now, false);
    expect(select.length).toBeGreaterThan(0);
    for (const example of [...sign, ...select]) {
      const prepared = await prepareCase(example);
      // evaluateHook builds one card per finding (src/cds/evaluate-hook.ts), so the counts agree.
      expect(runRulesPrepared(prepared, files, now), example.name).toBe(evaluatePrepared(prepared, files, now));
    }
  });
});
