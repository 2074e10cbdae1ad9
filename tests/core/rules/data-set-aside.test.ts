import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/data-set-aside.js';
import type { SetAsideNote } from '../../../src/core/types.js';
import { buildFacts } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const notes: SetAsideNote[] = [
  { what: 'SpO2 41 %', reason: 'implausible', detail: 'below the plausible range for a living adult on the ward', reference: 'Observation/spo2-7' },
  { what: 'PaCO2 6.2 kPa', reason: 'stale', detail: 'taken 3 days ago', reference: 'Observation/gas-2' },
  { what: 'FiO2 28', reason: 'unreadable-unit', detail: "unit '{ratio}' not recognised", reference: undefined },
];

describe('data-set-aside', () => {
  it('runs on order-sign as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('lists what was set aside and why', () => {
    const finding = onlyFinding(runRule(rule, buildFacts({ setAside: notes })));
    expect(finding.values).toStrictEqual({
      setAsideCount: '3',
      setAsideList:
        'SpO2 41 %: implausible (below the plausible range for a living adult on the ward); ' +
        'PaCO2 6.2 kPa: too old to be current (taken 3 days ago); ' +
        "FiO2 28: unit not readable (unit '{ratio}' not recognised)",
    });
    expect(expectCardRenders(finding).summary).toBe('3 item(s) of patient data were set aside and not used in these checks');
  });

  it('does not fire when nothing was set aside', () => {
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('fires once, not per order', () => {
      expect(runRule(rule, buildFacts({ setAside: notes.slice(0, 1), orders: [] }))).toHaveLength(1);
    });
  });
});
