import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/time-above-target-on-oxygen.js';
import { BTS, bloodGas } from '../facts-builder.js';
import { reviewFacts, steady } from '../titration/review-facts.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

// Invented Larkspur Bay patients on the medical ward, reviewed on patient-view. Look-back 8 h, a reading
// holds at most 120 min, a card when at least 50 % of at least 120 min observed was above the range on
// oxygen (titrationReview.*: local choices, the 8 h one nursing shift, common practice). Ages in minutes.
const view = { hook: 'patient-view' as const };
const AGES = [300, 240, 180, 120, 60, 10];

describe('time-above-target-on-oxygen', () => {
  it('runs on patient-view only, as information by default', () => {
    expect(rule.hooks).toStrictEqual(['patient-view']);
    expect(rule.defaultIndicator).toBe('info');
    expect(BTS.titrationReview.aboveTargetShareAtLeastPercent).toBe(50); // local choice
    expect(BTS.titrationReview.lookbackHours).toBe(8); // one nursing shift (common practice)
  });

  it('offers one litre less for a convalescent patient above 94-98 % on 4 L/min for hours', () => {
    // BTS 2017 (Tables 1-3): target 94-98 %; above it, lower the oxygen (weaning advice, from memory).
    // SpO2 99, 99, 98, 99, 99, 99 % at 300, 240, 180, 120, 60, 10 min ago on 4 L/min:
    // above 60 + 60 + 60 + 50 + 10 = 240 min; in range 60 (the 98 % reading); observed 300; 80 %.
    const facts = reviewFacts({ spo2: [[99, 300], [99, 240], [98, 180], [99, 120], [99, 60], [99, 10]], flows: steady(4, AGES) });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.indicator).toBe('info');
    expect(finding.values.aboveTime).toBe('4 h');
    expect(finding.values.observedTime).toBe('5 h');
    expect(finding.values.aboveShare).toBe('80 %');
    // One nasal-cannula step is 1 L/min (nasalCannulaStepDownLPerMin, common practice): 4 → 3 L/min.
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 3 });
    expect(finding.sourceKeys).toStrictEqual(['bts-2017', 'bmj-2018', 'local-policy']);
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('SpO2 above target 94–98 % on oxygen for 4 h of 5 h observed: consider stepping down');
    expect(card.label).toBe('Lower the flow to 3 L/min');
    // The split is the card's computation (shown under "Based on" and in the workings).
    expect(finding.computations.map((c) => c.result)).toStrictEqual([
      'in range 1 h, above on oxygen 4 h, below 0 min, not observed 3 h (of the last 8 h; 6 SpO2 readings; target 94–98 %)',
    ]);
  });

  it('warns for a patient at risk of hypercapnic failure above 88-92 %, stepping down towards 1 L/min', () => {
    // BTS 2017, Table 4: 88-92 % for COPD; Echevarria 2021: SpO2 > 92 % linked with higher mortality.
    // SpO2 95 % throughout on 2 L/min: above for all 300 min observed (100 %).
    // Stepping down to about 1 L/min before stopping in at-risk patients (BTS 2017, from memory).
    const facts = reviewFacts({
      order: { flowLPerMin: 2, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } },
      conditions: ['copd'],
      spo2: steady(95, AGES),
      flows: steady(2, AGES),
    });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.indicator).toBe('warning');
    expect(finding.values.targetRange).toBe('88–92 %');
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 1 });
    expectCardRenders(finding);
  });

  it('offers to stop from 2 L/min when the last two readings are not below the range', () => {
    // BTS 2017 (from memory): most stable patients are stepped down to about 2 L/min before stopping;
    // stop when in range on two consecutive observations, then check SpO2 on air.
    const facts = reviewFacts({ order: { flowLPerMin: 2 }, spo2: steady(99, AGES), flows: steady(2, AGES) });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.change).toStrictEqual({ kind: 'stop-oxygen' });
    expect(expectCardRenders(finding).label).toBe('Stop the oxygen; check SpO2 on air');
  });

  it('keeps the card but offers no change when the gas shows acidosis', () => {
    // pH 7.28 < 7.35 (RCEM normal range, check-values 3g): acidosis; PaCO2 4.0 kPa is not hypercapnic
    // (BTS 2017: >= 6.0 kPa), so this is the metabolic kind: review before any step down (common practice).
    const facts = reviewFacts({
      spo2: steady(99, AGES),
      flows: steady(4, AGES),
      gases: [bloodGas({ ageMinutes: 30, ph: 7.28, paco2Kpa: 4.0, pao2Kpa: 14, hco3: 14 })],
    });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.change).toBeUndefined();
    expect(finding.values.stepAdvice).toContain('the current gas shows acidosis (pH 7.28)');
  });

  it('offers no change when any reading in the window was below the range', () => {
    // 93 % < 94 % (BTS 2017 Tables 1-3) 300 min ago, then 99 % for the rest: still above > 50 %,
    // but no step down after a reading below target in the window.
    const facts = reviewFacts({ spo2: [[93, 300], [99, 240], [99, 180], [99, 120], [99, 60], [99, 10]], flows: steady(4, AGES) });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.change).toBeUndefined();
    expect(finding.values.stepAdvice).toContain('below the target range');
  });

  describe('names the next step in bedside terms where it offers no one-click change', () => {
    // SpO2 99-100 % above 94-98 % (BTS 2017 Tables 1-3) for 5 h on each device.
    const above = [[100, 300], [99, 240], [100, 180], [100, 120], [99, 60], [100, 10]] as const;

    it('a 15 L/min reservoir mask: nasal cannulae 2-6 L/min or a simple mask 5-10 L/min, not air', () => {
      // BTS 2017, Table 2: nasal cannulae 2-6 L/min, simple face mask 5-10 L/min; stepping a reservoir
      // mask down to one of them rather than to air is BTS 2017 weaning advice, from memory.
      const facts = reviewFacts({ order: { device: 'reservoir-mask', flowLPerMin: 15 }, spo2: above, flows: steady(15, AGES) });
      const finding = onlyFinding(runRule(rule, facts, view));
      expect(finding.change).toBeUndefined();
      expect(finding.values.stepAdvice).toBe(
        'Consider changing the reservoir mask to nasal cannulae at 2–6 L/min or a simple face mask at 5–10 L/min, one step, ' +
          'and rechecking SpO2; not straight to air (no one-click change: a change of device is left to the team)',
      );
    });

    it.each([
      // [setting %, next lower setting and its minimum flow]: BTS 2017 Table 4 (24 % at 2, 28 % at 4);
      // device labelling, common practice (31 % at 6, 35 % at 8, 40 % at 10).
      [28, '24 % at 2 L/min'],
      [35, '31 % at 6 L/min'],
      [40, '35 % at 8 L/min'],
      [60, '50 % at 12 L/min'], // 50 % at 12 L/min: from memory
    ])('a Venturi at %i percent: the next lower setting, %s', (percent, next) => {
      const facts = reviewFacts({
        order: { device: 'venturi-mask', setFio2Fraction: percent / 100, flowLPerMin: 8 },
        spo2: above,
        fio2: steady(percent / 100, AGES),
      });
      const finding = onlyFinding(runRule(rule, facts, view));
      expect(finding.change).toBeUndefined();
      expect(finding.values.stepAdvice).toContain(`Consider the next lower Venturi setting, ${next} or more`);
    });

    it('a cannula charted at 8 L/min: into its 1-6 L/min range, never a one-click 7 L/min on a cannula', () => {
      // BTS 2017, Tables 2 and 4: nasal cannulae 1-6 L/min in adults.
      const facts = reviewFacts({ order: { flowLPerMin: 8 }, spo2: above, flows: steady(8, AGES) });
      const finding = onlyFinding(runRule(rule, facts, view));
      expect(finding.change).toBeUndefined();
      expect(finding.values.stepAdvice).toContain('Consider bringing the cannula within its 1–6 L/min range (6 L/min or less)');
    });

    it('high flow at FiO2 0.5: the FiO2 first, with the team, no one-click change', () => {
      // Common practice: high flow is weaned by FiO2 first, then flow; a change of support is the team's.
      const facts = reviewFacts({
        order: { device: 'high-flow-nasal-cannula', setFio2Fraction: 0.5, flowLPerMin: 50 },
        spo2: above,
        fio2: steady(0.5, AGES),
      });
      const finding = onlyFinding(runRule(rule, facts, view));
      expect(finding.change).toBeUndefined();
      expect(finding.values.stepAdvice).toContain('Consider lowering the FiO2 first');
    });

    it('hypercapnic acidosis: do not stop, review for NIV', () => {
      // BTS/ICS 2016: pH < 7.35 with PaCO2 > 6.5 kPa is acute hypercapnic respiratory failure, consider
      // NIV; BTS 2017 (from memory): never stop oxygen suddenly in hypercapnia (rebound hypoxaemia).
      const facts = reviewFacts({
        order: { device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 4, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } },
        conditions: ['copd'],
        spo2: steady(95, AGES),
        fio2: steady(0.28, AGES),
        gases: [bloodGas({ ageMinutes: 40, ph: 7.29, paco2Kpa: 8.1, pao2Kpa: 9.4, hco3: 30 })],
      });
      const finding = onlyFinding(runRule(rule, facts, view));
      expect(finding.change).toBeUndefined();
      expect(finding.values.stepAdvice).toMatch(/^Do not stop the oxygen .*consider NIV/);
    });

    it('a falling or unsafe patient gets no bedside step named: a reading below range earlier', () => {
      // BTS 2017: below the target range calls for review, never a step down.
      const facts = reviewFacts({
        order: { device: 'reservoir-mask', flowLPerMin: 15 },
        spo2: [[92, 300], [99, 240], [100, 180], [100, 120], [99, 60], [100, 10]],
        flows: steady(15, AGES),
      });
      const finding = onlyFinding(runRule(rule, facts, view));
      expect(finding.values.stepAdvice).toMatch(/^Consider lowering the oxygen by one step \(no one-click change: an SpO2/);
    });
  });

  describe('stays quiet', () => {
    it('when the latest reading is back in range (the oxygen was already lowered)', () => {
      // Above for 4 h, then 96 % on 3 L/min 10 min ago: in 94-98 % (BTS 2017), nothing to add.
      const facts = reviewFacts({
        spo2: [[99, 300], [99, 240], [99, 180], [99, 120], [99, 60], [96, 10]],
        flows: [[4, 300], [4, 240], [4, 180], [4, 120], [4, 60], [3, 10]],
      });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('when less than half of the observed time was above the range', () => {
      // 99 % at 300 (60 min above), 97 % at 240, 180, 120, 60 (60 + 60 + 60 + 50 = 230 min in range),
      // 99 % at 10 (10 min to now): above 70 of 300 observed = 23 % < 50 % (local choice).
      const facts = reviewFacts({ spo2: [[99, 300], [97, 240], [97, 180], [97, 120], [97, 60], [99, 10]], flows: steady(4, AGES) });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('when the readings above the range were taken on air', () => {
      // Recorded flow 0 L/min (LOINC 3151-8) with each reading: above on air is no excess oxygen.
      const facts = reviewFacts({ spo2: steady(99, AGES), flows: steady(0, AGES) });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('with a single reading, or less than 120 min observed', () => {
      // One reading shows no course; two readings 60 and 10 min ago observe only 60 min (< 120).
      expect(runRule(rule, reviewFacts({ spo2: [[99, 100]], flows: [[4, 100]] }), view)).toStrictEqual([]);
      expect(runRule(rule, reviewFacts({ spo2: [[99, 60], [99, 10]], flows: steady(4, [60, 10]) }), view)).toStrictEqual([]);
    });

    it('for a comfort order', () => {
      // BTS 2017: in terminal palliative care oxygen is for comfort, not titrated to a saturation.
      const facts = reviewFacts({ order: { purpose: 'comfort' }, spo2: steady(99, AGES), flows: steady(4, AGES) });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });
  });
});
