import { describe, expect, it } from 'vitest';
import { changeKind, SimulationTally, type Advisory } from '../../src/bulk/simulation-tally.js';

/** The simulation's counters: how a change of advice is classed, and that memory stays bounded. */

const a = (ruleId: string, indicator: Advisory['indicator'] = 'warning'): Advisory => ({ ruleId, indicator });

describe('changeKind', () => {
  it.each([
    ['the same advice in another order is no change', [a('x'), a('y')], [a('y'), a('x')], undefined],
    ['an advisory more is added', [a('x')], [a('x'), a('y')], 'added'],
    ['a repeat of the same rule is added', [a('x')], [a('x'), a('x')], 'added'],
    ['an advisory fewer is removed', [a('x'), a('y')], [a('x')], 'removed'],
    ['the same rule at another indicator is an indicator change', [a('x', 'critical')], [a('x', 'warning')], 'indicator-changed'],
    ['one rule for another is replaced', [a('x')], [a('y')], 'replaced'],
    ['none before, none after is no change', [], [], undefined],
  ] as const)('%s', (_name, before, after, expected) => {
    expect(changeKind(before, after)).toBe(expected);
  });
});

describe('SimulationTally', () => {
  const order = (n: number, baseline: Advisory[], proposed: Advisory[], spo2Percent?: number) => ({
    orderReference: `ServiceRequest/o-${n}`,
    authoredOn: '2026-11-01T10:00:00.000Z',
    ward: 'Ward 7 Respiratory',
    spo2Percent,
    baseline,
    proposed,
  });

  it('counts advisories by rule and indicator on each side, changed orders by kind, and skips by reason', () => {
    const tally = new SimulationTally();
    tally.add(order(1, [a('x', 'critical')], [a('x', 'warning')], 89));
    tally.add(order(2, [a('x', 'critical')], [a('x', 'critical')], 85));
    tally.add(order(3, [], [a('y', 'info')]));
    tally.skip('required-data-missing');
    tally.skipBeforeReplay('no-authored-on', 2);
    const s = tally.snapshot();
    expect(s.ordersSeen).toBe(6);
    expect(s.ordersEvaluated).toBe(3);
    expect(s.ordersChanged).toBe(2);
    expect(s.changedByKind).toStrictEqual({ added: 1, removed: 0, 'indicator-changed': 1, replaced: 0 });
    expect(s.byRuleIndicator).toStrictEqual([
      { ruleId: 'x', indicator: 'critical', baseline: 2, proposed: 1 },
      { ruleId: 'x', indicator: 'warning', baseline: 0, proposed: 1 },
      { ruleId: 'y', indicator: 'info', baseline: 0, proposed: 1 },
    ]);
    expect(s.skipped['required-data-missing']).toBe(1);
    expect(s.skipped['no-authored-on']).toBe(2);
    expect(s.spo2Histogram[89]).toBe(1);
    expect(s.spo2Histogram[85]).toBe(1);
    expect(s.noCurrentSpo2).toBe(1);
    expect(s.examples['indicator-changed'][0]).toStrictEqual({
      orderReference: 'ServiceRequest/o-1',
      authoredOn: '2026-11-01T10:00:00.000Z',
      ward: 'Ward 7 Respiratory',
      spo2Percent: 89,
      before: ['x (critical)'],
      after: ['x (warning)'],
    });
  });

  it('keeps a bounded number of examples however many orders change', () => {
    const tally = new SimulationTally();
    for (let n = 0; n < 1000; n += 1) tally.add(order(n, [], [a('y')]));
    const s = tally.snapshot();
    expect(s.changedByKind.added).toBe(1000);
    expect(s.examples.added).toHaveLength(SimulationTally.EXAMPLES_PER_KIND);
    expect(s.spo2Histogram).toHaveLength(101);
  });
});
