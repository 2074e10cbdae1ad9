import { describe, expect, it } from 'vitest';
import { CORPUS } from './corpus/index.js';
import { ruleOf, runScenario } from './support/run-scenario.js';

/**
 * The clinical scenario corpus: one test per scenario, so failures are countable, each failing with
 * a report of what was expected (and why) against what came back. See tests/scenarios/README.md.
 */

describe('clinical scenarios', () => {
  it.each(CORPUS.map((s) => [s.id, s] as const))('%s', (_id, s) => {
    const outcome = runScenario(s);
    expect(outcome.problems, outcome.report).toStrictEqual([]);
  });
});

describe('false alarms on benign scenarios', () => {
  it('raises no warning or critical card on any order a consultant would sign as it is', () => {
    // Alert fatigue is a harm (common practice): the false-alarm rate on benign orders must be 0.
    const benign = CORPUS.filter((s) => s.benign);
    const alarms = benign.flatMap((s) => {
      const loud = runScenario(s).cards.filter((c) => c.indicator !== 'info');
      return loud.length === 0 ? [] : [`${s.id}: ${loud.map((c) => `${c.indicator} ${ruleOf(c)}`).join(', ')}`];
    });
    const rate = `${alarms.length}/${benign.length} benign scenarios raised a warning or critical card`;
    expect(alarms, `${rate}:\n${alarms.join('\n')}`).toStrictEqual([]);
  });
});

describe('the corpus itself', () => {
  it('holds at least 150 scenarios with distinct ids', () => {
    // Issue 6: a corpus of at least 150 invented scenarios.
    expect(CORPUS.length).toBeGreaterThanOrEqual(150);
    expect(new Set(CORPUS.map((s) => s.id)).size).toBe(CORPUS.length);
  });

  it('is at least one third benign orders', () => {
    expect(CORPUS.filter((s) => s.benign).length * 3).toBeGreaterThanOrEqual(CORPUS.length);
  });

  it('is written from each point of view roughly a third of the time (at least a quarter each)', () => {
    for (const pov of ['ward doctor', 'respiratory therapist', 'pharmacist'] as const) {
      expect(CORPUS.filter((s) => s.pov === pov).length * 4, pov).toBeGreaterThanOrEqual(CORPUS.length);
    }
  });

  it('names a source beside every expectation and asserts something in every scenario', () => {
    for (const s of CORPUS) {
      expect(s.expect.length, s.id).toBeGreaterThan(0);
      for (const e of s.expect) {
        expect(e.source.trim().length, `${s.id}: an expectation without a source`).toBeGreaterThan(3);
      }
    }
  });

  it('includes order-select and patient-view calls as well as order-sign', () => {
    expect(CORPUS.some((s) => s.hook === 'order-select')).toBe(true);
    expect(CORPUS.some((s) => s.hook === 'patient-view')).toBe(true);
  });

  it('has benign patient-view scenarios among them, at least a third', () => {
    // The titration review fires on every record opened: quiet patients must stay quiet (common practice).
    const view = CORPUS.filter((s) => s.hook === 'patient-view');
    expect(view.filter((s) => s.benign).length * 3).toBeGreaterThanOrEqual(view.length);
  });
});
