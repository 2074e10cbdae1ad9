import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/spo2-below-target.js';
import type { Facts } from '../../../src/core/types.js';
import { BTS, activeOrder, buildFacts, condition, fio2, minutesAgo, o2Flow, oxygenOrder, spo2, withPolicy } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';
import { policyWithDevices, venturiLines } from '../devices/catalogue-policy.js';

const onOxygen = { activeOrders: [activeOrder()] };

describe('spo2-below-target', () => {
  it('runs on order-sign as a warning by default', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('asks for review when SpO2 is below 94 % on oxygen', () => {
    // BTS 2017: a fall below the target range prompts reassessment (94-98 %, Tables 1-3)
    const finding = onlyFinding(runRule(rule, buildFacts({ ...onOxygen, spo2Percent: [spo2(92)] })));
    expect(finding.indicator).toBe('warning');
    expect(finding.values.urgency).toBe('below the target range');
    expect(finding.change).toBeUndefined();
    expect(expectCardRenders(finding).summary).toBe('SpO2 92 % (10 min ago) is below the target 94–98 %: review the patient');
  });

  it.each([
    // Policy thresholds: criticalSpo2BelowPercent 85 (BTS 2017, Table 2); criticalPointsBelowTarget 4 (local choice)
    [90, 'warning'], // 4 points below 94: not more than 4
    [89, 'critical'], // 5 points below 94
    [85, 'critical'], // more than 4 below; not below 85 itself
    [84, 'critical'], // below 85 % (BTS 2017, Table 2)
  ])('grades SpO2 %s %% against 94-98 %% as %s', (value, indicator) => {
    expect(BTS.thresholds.criticalSpo2BelowPercent).toBe(85);
    expect(BTS.thresholds.criticalPointsBelowTarget).toBe(4);
    const finding = onlyFinding(runRule(rule, buildFacts({ ...onOxygen, spo2Percent: [spo2(value)] })));
    expect(finding.indicator).toBe(indicator);
    expectCardRenders(finding);
  });

  it('suggests a reservoir mask at 15 L/min below 85 % when not at risk of hypercapnia', () => {
    // BTS 2017, Table 2: SpO2 < 85 % -> reservoir mask at 15 L/min
    const finding = onlyFinding(runRule(rule, buildFacts({ ...onOxygen, spo2Percent: [spo2(82)] })));
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'reservoir-mask', flowLPerMin: 15 });
    expect(expectCardRenders(finding).label).toBe('Change to Reservoir mask at 15 L/min');
  });

  it('does not suggest a reservoir mask for a patient at risk of hypercapnia', () => {
    // BTS 2017, Table 4: controlled oxygen in at-risk patients
    const facts = buildFacts({ ...onOxygen, conditions: [condition('copd')], spo2Percent: [spo2(82)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('critical');
    expect(finding.change).toBeUndefined();
  });

  it('does not fire within the target range', () => {
    expect(runRule(rule, buildFacts({ ...onOxygen, spo2Percent: [spo2(94)] }))).toStrictEqual([]);
  });

  describe('88-92 % ordered with no documented hypercapnic risk', () => {
    const lowerRange = [oxygenOrder({ target: { lowPercent: 88, highPercent: 92, readFrom: 'text' } })];
    it.each([
      // BTS 2017, Tables 1-3: 94-98 % applies without a documented risk (Table 4 lists the risks);
      // policy criticalPointsBelowTarget 4 (local choice), criticalSpo2BelowPercent 85 (BTS 2017, Table 2)
      [93, 'warning'], // above the ordered 88-92 %, yet 1 point below the 94 % that applies
      [91, 'warning'], // inside the ordered 88-92 %, yet 3 points below the 94 % that applies
      [90, 'warning'], // 4 points below 94: not more than 4
      [89, 'critical'], // 5 points below 94
      [85, 'critical'], // 9 points below 94; against the ordered 88 % it would be only 3
    ])('judges SpO2 %s %% against the 94-98 %% that applies, as %s', (value, indicator) => {
      const facts = buildFacts({ ...onOxygen, orders: lowerRange, spo2Percent: [spo2(value)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.indicator).toBe(indicator);
      expect(finding.values.comparedWith).toBe('the target that applies, 94–98 % (88–92 % ordered)');
      expectCardRenders(finding);
    });

    it('gives the same severity before and after the range is raised to 94-98 %', () => {
      // BTS 2017, Tables 1-3: accepting lower-range-without-risk's suggestion must not change the verdict
      for (const value of [80, 84, 85, 87, 89, 90, 92, 93]) {
        const before = runRule(rule, buildFacts({ ...onOxygen, orders: lowerRange, spo2Percent: [spo2(value)] }));
        const after = runRule(rule, buildFacts({ ...onOxygen, spo2Percent: [spo2(value)] }));
        expect(before.map((f) => f.indicator), `SpO2 ${value} %`).toStrictEqual(after.map((f) => f.indicator));
      }
    });

    it('still judges a patient at risk against the ordered 88-92 %', () => {
      // BTS 2017, Table 4: COPD, 88-92 %; SpO2 90 % is in range
      const facts = buildFacts({ ...onOxygen, orders: lowerRange, conditions: [condition('copd')], spo2Percent: [spo2(90)] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });
  });

  describe('edge cases', () => {
    it('judges an at-risk patient against 88-92 % even when 94-98 % was ordered', () => {
      // BTS 2017, Table 4: chest wall deformity puts the patient at risk; 93 % is above 88-92 %, so
      // "below the ordered 94 %" would prompt more oxygen for the patient it can harm.
      const ordered9498 = [oxygenOrder({ flowLPerMin: 3, target: { lowPercent: 94, highPercent: 98, readFrom: 'text' } })];
      const facts = buildFacts({ ...onOxygen, orders: ordered9498, conditions: [condition('chest-wall-deformity')], spo2Percent: [spo2(93)] });
      expect(runRule(rule, facts)).toStrictEqual([]);
      const low = onlyFinding(runRule(rule, buildFacts({ ...onOxygen, orders: ordered9498, conditions: [condition('chest-wall-deformity')], spo2Percent: [spo2(87)] })));
      expect(low.values.comparedWith).toBe('the advised target 88–92 %');
    });

    it('is critical when already on a high FiO2 at the reading', () => {
      // FiO2 0.70 recorded: at or above the policy's 0.40 high-requirement threshold (local choice)
      const facts = buildFacts({ orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })], spo2Percent: [spo2(92)], fio2Fraction: [fio2(0.7)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.indicator).toBe('critical');
      expect(finding.values.urgency).toBe('already on FiO2 0.70 when it was read');
      expect(finding.change).toBeUndefined();
    });

    it('is critical when a reservoir mask order on record was running at the reading', () => {
      const facts = buildFacts({
        ...onOxygen,
        activeOrders: [activeOrder({ device: 'reservoir-mask', flowLPerMin: 15 })],
        spo2Percent: [spo2(92)],
      });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.indicator).toBe('critical');
      expect(finding.values.urgency).toBe('already on a reservoir mask, high-flow or NIV');
    });

    it('is a warning, not critical, when SpO2 is one point low and the new order starts CPAP', () => {
      // The CPAP order is the response to the reading; nothing shows the patient was on it yet.
      // 93 % against 94-98 % (BTS 2017 Tables 1-3) is within the 4-point warning band (local choice).
      const facts = buildFacts({ orders: [oxygenOrder({ device: 'cpap-niv', flowLPerMin: 4 })], spo2Percent: [spo2(93)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.indicator).toBe('warning');
      expect(finding.values.urgency).toBe('below the target range');
    });

    it('never offers a reservoir mask in place of a new high-flow order', () => {
      // BTS 2017 Table 2: reservoir mask below 85 %; a high-flow order already gives more
      const facts = buildFacts({
        orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.6 })],
        spo2Percent: [spo2(82)],
      });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.indicator).toBe('critical');
      expect(finding.change).toBeUndefined();
    });

    it('never offers a reservoir mask when a recorded flow shows the patient on high flow', () => {
      // 45 L/min: only high flow reaches it (HFNC median 45 L/min, Li 2021; check-values 2a); a mask is
      // a step down in support (common practice) even below 85 % (BTS 2017 Table 2)
      const facts = buildFacts({ orders: [oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 6 })], o2FlowLPerMin: [o2Flow(45, 30)], spo2Percent: [spo2(82)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.indicator).toBe('critical');
      expect(finding.change).toBeUndefined();
      expect(finding.values.suggestedDevice).toBeUndefined();
      // One point below 94-98 % (BTS 2017) is critical on recorded high flow, as on an ordered one
      const onePointLow = buildFacts({ orders: [oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 6 })], o2FlowLPerMin: [o2Flow(45, 30)], spo2Percent: [spo2(93)] });
      expect(onlyFinding(runRule(rule, onePointLow)).values.urgency).toBe('already on a reservoir mask, high-flow or NIV');
    });

    describe('on high flow, graded by the set FiO2 against the policy failing level', () => {
      // Policy highFlowFailingFio2AtLeast 0.6 (local choice); target 94-98 % (BTS 2017 Tables 1-3);
      // criticalSpo2BelowPercent 85 (BTS 2017 Table 2); criticalPointsBelowTarget 4 (local choice)
      const onHighFlow = (set: number, recorded?: number): Partial<Facts> => ({
        orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 40, setFio2Fraction: set })],
        activeOrders: [activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 40, setFio2Fraction: set, authoredOn: minutesAgo(240) })],
        ...(recorded === undefined ? {} : { fio2Fraction: [fio2(recorded)] }),
      });

      it.each([
        [0.45, 92, 'warning'], // room to titrate the blender up; 2 points below 94
        [0.59, 90, 'warning'], // just below the failing level; 4 points below is not more than 4
        [0.45, 89, 'critical'], // 5 points below the target
        [0.3, 84, 'critical'], // below 85 % (BTS 2017 Table 2)
      ])('at set FiO2 %s with SpO2 %s %% is %s', (set, value, indicator) => {
        expect(BTS.thresholds.highFlowFailingFio2AtLeast).toBe(0.6);
        const finding = onlyFinding(runRule(rule, buildFacts({ ...onHighFlow(set), spo2Percent: [spo2(value)] })));
        expect(finding.indicator).toBe(indicator);
        expect(finding.change).toBeUndefined();
        expect(finding.values.urgency).toContain(`on high flow at FiO2 ${set.toFixed(2)}, below the 0.60 failing level`);
        expectCardRenders(finding);
      });

      it('uses the FiO2 recorded at the reading over the order: a recorded 0.45 on an order for 0.30 is still a warning', () => {
        // A recorded FiO2 (LOINC 3150-0) is what was delivered (common practice)
        const finding = onlyFinding(runRule(rule, buildFacts({ ...onHighFlow(0.3, 0.45), spo2Percent: [spo2(92)] })));
        expect(finding.indicator).toBe('warning');
        expect(finding.values.urgency).toContain('FiO2 0.45');
      });

      it('is silent at the failing level, where escalated-support-failing speaks, and critical if that rule is off', () => {
        const facts = buildFacts({ ...onHighFlow(0.6), spo2Percent: [spo2(92)] });
        expect(runRule(rule, facts)).toStrictEqual([]);
        const policy = withPolicy(BTS, { disabledRules: ['escalated-support-failing'] });
        expect(onlyFinding(runRule(rule, facts, { policy })).indicator).toBe('critical');
      });

      it('stays critical when nobody knows the FiO2 on high flow: it may be at the failing level', () => {
        // 45 L/min recorded: only high flow reaches it (Li 2021, check-values 2a); no FiO2 recorded or set
        const facts = buildFacts({ orders: [oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 6 })], o2FlowLPerMin: [o2Flow(45, 30)], spo2Percent: [spo2(92)] });
        expect(onlyFinding(runRule(rule, facts)).indicator).toBe('critical');
      });

      it('never offers a reservoir mask on high flow below the failing FiO2, even below 85 %', () => {
        // A reservoir mask is a lower tier than high flow (common practice; issue 6 class 3)
        const finding = onlyFinding(runRule(rule, buildFacts({ ...onHighFlow(0.4), spo2Percent: [spo2(82)] })));
        expect(finding.change).toBeUndefined();
        expect(finding.values.suggestedDevice).toBeUndefined();
      });
    });

    it('reports a reading taken on air before oxygen starts only when critical', () => {
      expect(runRule(rule, buildFacts({ spo2Percent: [spo2(91)], fio2Fraction: [fio2(0.21)] }))).toStrictEqual([]);
      expect(onlyFinding(runRule(rule, buildFacts({ spo2Percent: [spo2(83)], fio2Fraction: [fio2(0.21)] }))).indicator).toBe('critical');
    });

    it('checks only the 85 % level where no SpO2 target applies', () => {
      const pneumothorax = { conditions: [condition('pneumothorax')], ...onOxygen };
      expect(runRule(rule, buildFacts({ ...pneumothorax, spo2Percent: [spo2(90)] }))).toStrictEqual([]);
      const finding = onlyFinding(runRule(rule, buildFacts({ ...pneumothorax, spo2Percent: [spo2(84)] })));
      expect(finding.values.comparedWith).toBe('the 85 % alert level (no SpO2 target applies)');
      expectCardRenders(finding);
    });

    it('follows a hospital that changes the critical level', () => {
      const policy = withPolicy(BTS, { thresholds: { ...BTS.thresholds, criticalPointsBelowTarget: 2 } });
      expect(onlyFinding(runRule(rule, buildFacts({ ...onOxygen, spo2Percent: [spo2(91)] }), { policy })).indicator).toBe('critical');
    });
  });
});

describe('spo2-below-target with a hospital device catalogue', () => {
  // SpO2 82 % on a nasal cannula, not at risk: BTS 2017 Table 2 advises a reservoir mask below 85 %
  const low = () => buildFacts({ ...onOxygen, spo2Percent: [spo2(82)] });
  const VENTURI = venturiLines([[28, 4]]); // BTS 2017, Table 4

  it("offers the reservoir mask at the top of the hospital's reservoir-mask limits", () => {
    // Invented local limits 10-12 L/min, inside BTS 2008's 10-15 L/min
    const policy = policyWithDevices(['devices:', '  reservoir-mask: { flowLPerMin: { from: 10, to: 12 } }', ...VENTURI]);
    const finding = onlyFinding(runRule(rule, low(), { policy }));
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'reservoir-mask', flowLPerMin: 12 });
    // The card's words still give the guideline's 15 L/min (BTS 2017, Table 2)
    expect(finding.values.reservoirFlow).toBe('15 L/min');
  });

  it('offers no reservoir mask where none is stocked, and keeps the critical card', () => {
    const policy = policyWithDevices(['devices:', '  nasal-cannula: { flowLPerMin: { from: 1, to: 6 } }', ...VENTURI]);
    const finding = onlyFinding(runRule(rule, low(), { policy }));
    expect(finding.indicator).toBe('critical'); // BTS 2017, Table 2: below 85 %
    expect(finding.change).toBeUndefined();
    expectCardRenders(finding);
  });
});
