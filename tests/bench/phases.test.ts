import { describe, expect, it } from 'vitest';
import type { LoadResult } from '../../bench/load-test.js';
import type { MicroResult } from '../../bench/micro.js';
import { renderPerformanceDoc } from '../../bench/performance-doc.js';
import { engineLimit, phaseFindings, phaseTable, type RunReport } from '../../bench/report.js';
import { inventedMachine } from './support/invented-machine.js';
import { inventedPhased, inventedTiming } from './support/invented-micro.js';

/**
 * How the page splits evaluateHook's median into phases, from figures it is given. No timing is taken
 * here; every input is invented. The limit is issue 9's ("Targets"): evaluateHook ≤ 3 × JSON.parse of
 * the same request text.
 */

const timing = inventedTiming;
const phased = inventedPhased;

/** A result saved before the phases were timed, as older runs hold it. */
const older = (name: string, evaluateUs: number, parseUs?: number): MicroResult => ({
  name,
  requestBytes: 1000,
  cards: 2,
  baseline: timing(20),
  ...(parseUs === undefined ? {} : { parseOnly: timing(parseUs) }),
  evaluate: timing(evaluateUs),
  wholePath: timing(evaluateUs * 2),
});

const slow = phased('sign-a', { parse: 10, facts: 40, factsAndRules: 60, evaluate: 100 });
const quick = phased('sign-b', { parse: 20, facts: 15, factsAndRules: 25, evaluate: 50 });

describe('phaseTable', () => {
  it('prints each phase median with its multiple of JSON.parse, and cards and the rest as evaluateHook minus facts + rules', () => {
    const rows = phaseTable([slow, quick]).split('\n');
    expect(rows[0]).toBe(
      '| example | JSON.parse µs | facts µs (× parse) | facts + rules µs (× parse) | cards and the rest µs (× parse) | evaluateHook µs (× parse) |',
    );
    // 40 / 10 = 4; 60 / 10 = 6; 100 − 60 = 40, 40 / 10 = 4; 100 / 10 = 10.
    expect(rows[2]).toBe('| sign-a | 10.0 | 40.0 (4.00 ×) | 60.0 (6.00 ×) | 40.0 (4.00 ×) | 100 (10.0 ×) |');
    // 15 / 20 = 0.75; 25 / 20 = 1.25; 50 − 25 = 25, 25 / 20 = 1.25; 50 / 20 = 2.5.
    expect(rows[3]).toBe('| sign-b | 20.0 | 15.0 (0.75 ×) | 25.0 (1.25 ×) | 25.0 (1.25 ×) | 50.0 (2.50 ×) |');
  });

  it('shows a difference of medians below zero with its sign rather than hiding it', () => {
    const noisy = phased('sign-c', { parse: 10, facts: 20, factsAndRules: 28, evaluate: 27 });
    // 27 − 28 = −1, −1 / 10 = −0.10.
    expect(phaseTable([noisy]).split('\n')[2]).toBe('| sign-c | 10.0 | 20.0 (2.00 ×) | 28.0 (2.80 ×) | −1.0 (−0.10 ×) | 27.0 (2.70 ×) |');
  });

  it('says not measured for a result saved before the phases were timed, or before JSON.parse was', () => {
    const rows = phaseTable([older('sign-d', 50, 10), older('sign-e', 50)]).split('\n');
    expect(rows[2]).toBe('| sign-d | 10.0 | not measured | not measured | not measured | 50.0 (5.00 ×) |');
    expect(rows[3]).toBe('| sign-e | not measured | not measured | not measured | not measured | 50.0 |');
  });
});

describe('phaseFindings', () => {
  it('uses issue 9’s engine limit as bench/targets.ts judges it', () => {
    expect(engineLimit()).toBe(3);
  });

  it('gives what each example over the limit would have to lose, and which examples’ facts + rules alone exceed it', () => {
    // sign-a: 3 × 10 = 30 µs allowed, 100 − 30 = 70 to lose; facts + rules 60 > 30.
    // sign-b: 3 × 20 = 60 µs allowed, 50 is within; facts + rules 25 ≤ 60.
    expect(phaseFindings([slow, quick])).toEqual([
      "To reach 3 × JSON.parse, evaluateHook's median would have to lose 70.0 µs of 100 in sign-a (to 30.0 µs); sign-b is already within it.",
      'Facts + rules alone already take more than 3 × JSON.parse in 1 of 2 examples (sign-a 6.00 ×): there evaluateHook would stay above the target even if the cards cost nothing.',
    ]);
  });

  it('follows the figures: every example within the limit, and none whose facts + rules exceed it', () => {
    expect(phaseFindings([quick])).toEqual([
      "evaluateHook's median is within 3 × JSON.parse in every example.",
      'Facts + rules alone take at most 3 × JSON.parse in every example.',
    ]);
    // Over the limit only because of the cards: 3 × 10 = 30 allowed, facts + rules 25, evaluateHook 45.
    const cardsOnly = phased('sign-f', { parse: 10, facts: 10, factsAndRules: 25, evaluate: 45 });
    expect(phaseFindings([cardsOnly, older('sign-d', 50, 10)])).toEqual([
      "To reach 3 × JSON.parse, evaluateHook's median would have to lose 15.0 µs of 45.0 in sign-f (to 30.0 µs).",
      'Facts + rules alone take at most 3 × JSON.parse in every example.',
    ]);
  });

  it('says the phases were not timed when no result has them', () => {
    expect(phaseFindings([older('sign-d', 50, 10)])).toEqual(['The phases of evaluateHook were not timed in this run.']);
  });
});

describe('the performance page', () => {
  const HEALTHZ: LoadResult = {
    label: 'GET /healthz',
    url: 'http://127.0.0.1:1/healthz',
    method: 'GET',
    requestBytes: 0,
    reqPerSec: 4000,
    reqPerSecStddev: 0,
    latencyMs: { p50: 1, p97_5: 2, p99: 2, max: 3 },
    completed: 32_000,
    durationS: 8,
    non2xx: 0,
    errors: 0,
    timeouts: 0,
  };
  const report = (micro: MicroResult[]): RunReport => ({
    machine: inventedMachine('2026-12-05T18:00:00.000Z', 'abc1234'),
    settings: { runner: 'dist', connections: 10, durationS: 8, warmupS: 2, buildS: 30, microIterations: 2000 },
    rows: [],
    baseline: {
      first: HEALTHZ,
      last: HEALTHZ,
      meanReqPerSec: 4000,
      driftPercent: 0,
    },
    echo: undefined,
    logLinesDuringLoad: 0,
    micro,
    serviceProfile: undefined,
    microProfile: undefined,
    profiledExample: undefined,
  });
  const between = (page: string, from: string, to: string): string => page.slice(page.indexOf(from), page.indexOf(to));

  it('puts the phases under the pure-pipeline table, before the audit trail, and calls cards and the rest an estimate', () => {
    const page = renderPerformanceDoc(report([slow, quick]));
    const pure = page.indexOf('### Pure pipeline, in process');
    const phases = page.indexOf("#### Where an evaluation's time goes");
    expect(pure).toBeGreaterThan(0);
    expect(phases).toBeGreaterThan(pure);
    expect(page.indexOf('### Audit trail')).toBeGreaterThan(phases);
    const section = between(page, "#### Where an evaluation's time goes", '### Audit trail');
    expect(section).toContain('a difference of medians, so an estimate rather than a timed loop');
    expect(section).toContain('| sign-a | 10.0 | 40.0 (4.00 ×) | 60.0 (6.00 ×) | 40.0 (4.00 ×) | 100 (10.0 ×) |');
    expect(section).toContain('- Facts + rules alone already take more than 3 × JSON.parse in 1 of 2 examples');
  });

  it('still renders a run saved before the phases were timed', () => {
    const section = between(renderPerformanceDoc(report([older('sign-d', 50, 10)])), "#### Where an evaluation's time goes", '### Audit trail');
    expect(section).toContain('| sign-d | 10.0 | not measured | not measured | not measured | 50.0 (5.00 ×) |');
    expect(section).toContain('- The phases of evaluateHook were not timed in this run.');
  });
});
