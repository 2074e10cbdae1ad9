import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/escalated-support-failing.js';
import { rule as highOxygenRequirement } from '../../../src/core/rules/high-oxygen-requirement.js';
import { rule as spo2BelowTarget } from '../../../src/core/rules/spo2-below-target.js';
import type { Facts, OxygenOrder } from '../../../src/core/types.js';
import {
  BTS,
  activeOrder,
  buildFacts,
  condition,
  fio2,
  minutesAgo,
  o2Flow,
  oxygenOrder,
  respRate,
  spo2,
  withPolicy,
} from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

/** The value type an arbitrary generates. */
type ValueOf<A> = A extends fc.Arbitrary<infer T> ? T : never;

// Invented patients on the Larkspur Bay General Hospital respiratory ward (demo).
const hfnc = (set: number, hoursAgo = 6): OxygenOrder =>
  activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 45, setFio2Fraction: set, authoredOn: minutesAgo(hoursAgo * 60) });
const hfncDraft = (set: number): OxygenOrder =>
  oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 45, setFio2Fraction: set });
const niv = (): OxygenOrder => activeOrder({ device: 'cpap-niv', flowLPerMin: undefined, setFio2Fraction: 0.4 });

/** The three rules that could speak about a low SpO2 on escalated support. */
function lowSpo2Cards(facts: Facts, policy = BTS): string[] {
  return [rule, spo2BelowTarget, highOxygenRequirement].flatMap((r) => runRule(r, facts, { policy }).map((f) => f.ruleId));
}

describe('escalated-support-failing', () => {
  it('runs on order-sign as a critical card', () => {
    expect(rule.hooks).toStrictEqual(['order-sign', 'patient-view']);
    expect(rule.defaultIndicator).toBe('critical');
  });

  it('fires for high flow at 45 L/min and FiO2 0.70 with SpO2 86 %, and is the only card that says so', () => {
    // Policy highFlowFailingFio2AtLeast 0.6 (local choice); target 94-98 % (BTS 2017 Tables 1-3).
    // HFNC median 45 L/min at FiO2 about 0.62 in AHRF (Li 2021, check-values 2a).
    const facts = buildFacts({
      orders: [hfncDraft(0.7)],
      activeOrders: [hfnc(0.7)],
      spo2Percent: [spo2(86)],
      fio2Fraction: [fio2(0.7)],
      respRatePerMin: [respRate(32)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('critical');
    expect(finding.change).toBeUndefined();
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('SpO2 86 % (10 min ago) below 94–98 % on high flow at FiO2 0.70: support failing, critical-care review now');
    expect(finding.values.why).toBe('on high-flow nasal oxygen (FiO2 0.70 recorded at the reading), policy threshold FiO2 0.60 or more');
    // Roca 2019 with the set FiO2: (86 / 0.7) / 32 = 3.84, above the 6-h failure threshold 3.47
    expect(finding.values.roxStatus).toBe(
      '3.84, not below the failure threshold; 6 h on high flow (from the earliest high-flow order, written 6 h ago): the 6-h threshold, 3.47',
    );
    expect(lowSpo2Cards(facts)).toStrictEqual(['escalated-support-failing']);
  });

  it('fires for CPAP or NIV with SpO2 below target', () => {
    // BTS/ICS 2016: NIV is the ward's top step; SpO2 91 % is below 94-98 % (BTS 2017 Tables 1-3)
    const facts = buildFacts({ orders: [oxygenOrder({ device: 'cpap-niv', flowLPerMin: undefined, setFio2Fraction: 0.5 })], activeOrders: [niv()], spo2Percent: [spo2(91)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.support).toBe('CPAP/NIV');
    expect(finding.values.roxStatus).toBe('not applicable (ROX is validated on high flow only)');
    expect(finding.sourceKeys).toContain('bts-ics-2016');
    expectCardRenders(finding);
    expect(lowSpo2Cards(facts)).toStrictEqual(['escalated-support-failing']);
  });

  it('leaves high flow at FiO2 0.40 below target to spo2-below-target, as a warning with room to titrate', () => {
    // FiO2 0.40 is below the 0.6 failing threshold (local choice); SpO2 91 % is 3 points below 94-98 %
    // (BTS 2017 Tables 1-3), within the 4-point warning band (local choice)
    const facts = buildFacts({ orders: [hfncDraft(0.4)], activeOrders: [hfnc(0.4)], spo2Percent: [spo2(91)], fio2Fraction: [fio2(0.4)] });
    expect(runRule(rule, facts)).toStrictEqual([]);
    expect(onlyFinding(runRule(spo2BelowTarget, facts)).indicator).toBe('warning');
  });

  it('does not fire for a patient on high flow at FiO2 0.70 within target', () => {
    // 95 % is within 94-98 % (BTS 2017 Tables 1-3)
    const facts = buildFacts({ orders: [hfncDraft(0.7)], activeOrders: [hfnc(0.7)], spo2Percent: [spo2(95)], fio2Fraction: [fio2(0.7)] });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it.each([
      // Policy highFlowFailingFio2AtLeast 0.6 (local choice): at the threshold fires, just below does not
      [0.6, true],
      [0.59, false],
    ])('on high flow at recorded FiO2 %s with SpO2 90 percent, fires: %s', (set, fires) => {
      expect(BTS.thresholds.highFlowFailingFio2AtLeast).toBe(0.6);
      const facts = buildFacts({ orders: [hfncDraft(set)], activeOrders: [hfnc(set)], spo2Percent: [spo2(90)], fio2Fraction: [fio2(set)] });
      expect(runRule(rule, facts).length).toBe(fires ? 1 : 0);
    });

    it.each([
      // BTS 2017 Tables 1-3: 94-98 %; SpO2 at the lower bound is within target
      [94, false],
      [93, true],
    ])('at SpO2 %s percent on high flow at FiO2 0.8, fires: %s', (value, fires) => {
      const facts = buildFacts({ orders: [hfncDraft(0.8)], activeOrders: [hfnc(0.8)], spo2Percent: [spo2(value)], fio2Fraction: [fio2(0.8)] });
      expect(runRule(rule, facts).length).toBe(fires ? 1 : 0);
    });

    it('judges a CO2 retainer on NIV against 88-92 %', () => {
      // BTS 2017 Table 4: COPD -> 88-92 %; 89 % is within it, 86 % below it
      const copd = { conditions: [condition('copd')], activeOrders: [niv()], orders: [oxygenOrder({ device: 'cpap-niv', flowLPerMin: undefined, setFio2Fraction: 0.35, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })] };
      expect(runRule(rule, buildFacts({ ...copd, spo2Percent: [spo2(89)] }))).toStrictEqual([]);
      expect(onlyFinding(runRule(rule, buildFacts({ ...copd, spo2Percent: [spo2(86)] }))).values.targetRange).toBe('88–92 %');
    });

    it('does not call a new high-flow order written after the reading a failure: it is the response', () => {
      // The reading was taken before high flow began; spo2-below-target speaks instead
      const facts = buildFacts({ orders: [hfncDraft(0.8)], spo2Percent: [spo2(86, 15)] });
      expect(runRule(rule, facts)).toStrictEqual([]);
      expect(runRule(spo2BelowTarget, facts).map((f) => f.ruleId)).toStrictEqual(['spo2-below-target']);
    });

    it('fires when this order raises a high-flow patient below target to FiO2 0.6 or more', () => {
      // Needing FiO2 >= 0.6 on high flow to approach target (policy 0.6, local choice)
      const facts = buildFacts({ orders: [hfncDraft(0.65)], activeOrders: [hfnc(0.5)], spo2Percent: [spo2(91)], fio2Fraction: [fio2(0.5)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.values.why).toBe('on high-flow nasal oxygen (FiO2 0.50 recorded at the reading; this order sets FiO2 0.65), policy threshold FiO2 0.60 or more');
      expect(finding.values.support).toBe('high flow at FiO2 0.65');
    });

    it('reads high flow from a recorded flow only high flow reaches when no high-flow order is on record', () => {
      // 50 L/min is above every conventional device's range (check-values 2a); recorded FiO2 0.75
      const facts = buildFacts({ orders: [hfncDraft(0.75)], o2FlowLPerMin: [o2Flow(50, 12)], fio2Fraction: [fio2(0.75, 12)], spo2Percent: [spo2(88)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.values.support).toBe('high flow at FiO2 0.75');
    });

    it.each([
      // Roca 2019 (check-values 3e, V): failure below 2.85 at 2 h, 3.47 at 6 h, 3.85 at 12 h
      [2, 84, 0.9, 34, '2.75, below the 2.85 failure threshold; 2 h on high flow'], // (84/0.9)/34 = 2.75
      [6, 88, 0.8, 32, '3.44, below the 3.47 failure threshold; 6 h on high flow'], // (88/0.8)/32 = 3.44
      [12, 90, 0.7, 34, '3.78, below the 3.85 failure threshold; 12 h on high flow'], // (90/0.7)/34 = 3.78
    ])('shows ROX after %s h against the Roca threshold for that time', (hours, sat, set, rr, shown) => {
      const facts = buildFacts({ orders: [hfncDraft(set)], activeOrders: [hfnc(set, hours)], spo2Percent: [spo2(sat)], fio2Fraction: [fio2(set)], respRatePerMin: [respRate(rr)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.values.roxStatus?.startsWith(shown)).toBe(true);
      expect(finding.sourceKeys).toContain('roca-2019');
      expectCardRenders(finding);
    });

    it('says which ROX threshold was used when the start of high flow is unknown', () => {
      // Roca 2019: 12-h threshold 3.85, the strictest; (88/0.7)/34 = 3.70
      const facts = buildFacts({
        orders: [hfncDraft(0.7)],
        activeOrders: [activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 45, setFio2Fraction: 0.7, authoredOn: undefined })],
        spo2Percent: [spo2(88)],
        respRatePerMin: [respRate(34)],
      });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.values.roxStatus).toBe(
        '3.7, below the 3.85 failure threshold; start of high flow unknown (no high-flow order in force says when it was written): the 12-h threshold, 3.85, the strictest, was used',
      );
    });

    it('hands the message back to spo2-below-target when the hospital switches this rule off', () => {
      const policy = withPolicy(BTS, { disabledRules: ['escalated-support-failing'] });
      const facts = buildFacts({ orders: [hfncDraft(0.7)], activeOrders: [hfnc(0.7)], spo2Percent: [spo2(86)], fio2Fraction: [fio2(0.7)] });
      expect(lowSpo2Cards(facts, policy)).toStrictEqual(['escalated-support-failing', 'spo2-below-target', 'high-oxygen-requirement']);
      expect(onlyFinding(runRule(spo2BelowTarget, facts, { policy })).indicator).toBe('critical');
    });

    it('does not speak for a comfort order', () => {
      // BTS 2017: in terminal palliative care oxygen is for comfort, not titration
      const facts = buildFacts({ orders: [oxygenOrder({ device: 'cpap-niv', flowLPerMin: undefined, setFio2Fraction: 0.4, purpose: 'comfort' })], activeOrders: [niv()], spo2Percent: [spo2(85)] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });
  });

  describe('invariants', () => {
    const scenario = fc.record({
      support: fc.constantFrom('none', 'hfnc', 'niv', 'reservoir'),
      setFio2: fc.constantFrom(0.3, 0.4, 0.5, 0.59, 0.6, 0.7, 0.9, 1),
      spo2: fc.integer({ min: 75, max: 100 }),
      atRisk: fc.boolean(),
      recordFio2: fc.boolean(),
    });
    const factsOf = (s: ValueOf<typeof scenario>): Facts => {
      const active =
        s.support === 'hfnc' ? [hfnc(s.setFio2)] : s.support === 'niv' ? [niv()] : s.support === 'reservoir' ? [activeOrder({ device: 'reservoir-mask', flowLPerMin: 15 })] : [activeOrder()];
      return buildFacts({
        orders: [oxygenOrder({ device: active[0]?.device, flowLPerMin: active[0]?.flowLPerMin, setFio2Fraction: active[0]?.setFio2Fraction })],
        activeOrders: active,
        conditions: s.atRisk ? [condition('copd')] : [],
        spo2Percent: [spo2(s.spo2)],
        fio2Fraction: s.recordFio2 && s.support === 'hfnc' ? [fio2(s.setFio2)] : [],
      });
    };

    it('never repeats its message on a second card, and never leaves a low SpO2 on NIV unsaid', () => {
      fc.assert(
        fc.property(scenario, (s) => {
          const facts = factsOf(s);
          const cards = lowSpo2Cards(facts);
          const failing = cards.includes('escalated-support-failing');
          if (failing) {
            expect(cards).toStrictEqual(['escalated-support-failing']);
          }
          const low = s.spo2 < (s.atRisk ? 88 : 94); // BTS 2017 Tables 1-4
          if (s.support === 'niv' && low) {
            expect(failing).toBe(true);
          }
          if (!low) {
            expect(failing).toBe(false);
          }
        }),
        { seed: 6003, numRuns: 300 },
      );
    });

    it('is always critical and never offers a change', () => {
      fc.assert(
        fc.property(scenario, (s) => {
          for (const finding of runRule(rule, factsOf(s))) {
            expect(finding.indicator).toBe('critical');
            expect(finding.change).toBeUndefined();
          }
        }),
        { seed: 6004, numRuns: 200 },
      );
    });
  });
});
