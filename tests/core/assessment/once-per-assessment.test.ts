import { describe, expect, it } from 'vitest';
import { buildAssessment } from '../../../src/core/assessment/build-assessment.js';
import { oncePerAssessment, type AssessmentInputs } from '../../../src/core/assessment/once-per-assessment.js';
import { BTS, buildFacts, NOW, oxygenOrder, spo2, TSANZ } from '../facts-builder.js';

/**
 * Values several rules derive from one assessment are built once per run and never served to a
 * caller whose facts, policy or clock differ. The counted build stands in for a derived value; the
 * facts are an invented patient on 2 L/min nasal cannula with an SpO2 of 93 %.
 */
describe('oncePerAssessment', () => {
  const facts = buildFacts({ orders: [oxygenOrder()], spo2Percent: [spo2(93)] });
  const assessment = buildAssessment(facts, BTS, { now: NOW });

  function counted(): { readonly derive: (inputs: AssessmentInputs) => number; readonly builds: () => number } {
    let count = 0;
    const derive = oncePerAssessment((inputs: AssessmentInputs) => {
      count += 1;
      return inputs.now.getTime();
    });
    return { derive, builds: () => count };
  }

  it('builds once for the rules of one run, which share the assessment, facts, policy and clock', () => {
    const { derive, builds } = counted();
    const inputs = { assessment, facts, policy: BTS, now: NOW };
    expect(derive(inputs)).toBe(NOW.getTime());
    expect(derive({ ...inputs })).toBe(NOW.getTime());
    expect(derive({ ...inputs, now: new Date(NOW.getTime()) })).toBe(NOW.getTime());
    expect(builds()).toBe(1);
  });

  it('builds again when the clock, the facts or the policy differ', () => {
    const { derive, builds } = counted();
    const later = new Date(NOW.getTime() + 60_000);
    expect(derive({ assessment, facts, policy: BTS, now: NOW })).toBe(NOW.getTime());
    expect(derive({ assessment, facts, policy: BTS, now: later })).toBe(later.getTime());
    expect(derive({ assessment, facts: buildFacts({ orders: [oxygenOrder()] }), policy: BTS, now: later })).toBe(later.getTime());
    expect(derive({ assessment, facts, policy: TSANZ, now: later })).toBe(later.getTime());
    expect(builds()).toBe(4);
  });
});
