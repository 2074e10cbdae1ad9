import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/venturi-flow-insufficient.js';
import { buildFacts, condition, oxygenOrder, respRate } from '../facts-builder.js';
import { LARKSPUR_BAY_DEVICES, policyWithDevices, venturiLines } from '../devices/catalogue-policy.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const venturi = (setFio2Fraction: number, flowLPerMin: number) => [
  oxygenOrder({ device: 'venturi-mask', setFio2Fraction, flowLPerMin, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } }),
];

describe('venturi-flow-insufficient', () => {
  it('runs on both hooks as a warning', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('raises 28 % at 4 L/min to 6 L/min when the patient breathes faster than 30/min', () => {
    // BTS 2017, Table 4 (Jones 1984): RR > 30 -> O2 flow 1.5 x the minimum, setting unchanged
    const facts = buildFacts({ orders: venturi(0.28, 4), respRatePerMin: [respRate(34)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 6 });
    expect(finding.values.minimumFlow).toBe('4 L/min');
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Venturi 28 % at 4 L/min: flow too low for the setting or the breathing rate');
    expect(card.label).toBe('Set O2 flow to 6 L/min (same 28 % setting)');
  });

  it.each([
    // Minimum flows: 24 % 2 L/min and 28 % 4 L/min (BTS 2017, Table 4); 40 % 10 L/min (common practice)
    [0.24, 1, 2],
    [0.28, 3, 4],
    [0.4, 8, 10],
  ])('raises setting %s at %s L/min to its minimum %s L/min at rest', (setting, flow, minimum) => {
    const facts = buildFacts({ orders: venturi(setting, flow), respRatePerMin: [respRate(18)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: minimum });
    expectCardRenders(finding);
  });

  it.each([
    // 1.5 x minimum: 24 % 3, 28 % 6 L/min (BTS 2017, Table 4; check-values 2b)
    [0.24, 2, 3],
    [0.28, 4, 6],
  ])('raises setting %s at %s L/min to %s L/min when tachypnoeic', (setting, flow, raised) => {
    const facts = buildFacts({ orders: venturi(setting, flow), respRatePerMin: [respRate(32)] });
    expect(onlyFinding(runRule(rule, facts)).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: raised });
  });

  it('does not fire at the BTS starting flows at rest', () => {
    // BTS 2017, Table 4: 24 % at 2-3 L/min or 28 % at 4 L/min
    expect(runRule(rule, buildFacts({ orders: venturi(0.28, 4), respRatePerMin: [respRate(20)] }))).toStrictEqual([]);
    expect(runRule(rule, buildFacts({ orders: venturi(0.24, 2) }))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('is silent for a stop or room-air order, and for an order of 0 L/min', () => {
      // BTS 2017, Table 4: 28 % needs 4 L/min, but an order that gives no oxygen has no flow to raise
      for (const purpose of ['stop', 'room-air'] as const) {
        expect(runRule(rule, buildFacts({ orders: [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 2, purpose })] }))).toStrictEqual([]);
      }
      expect(runRule(rule, buildFacts({ orders: [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 0 })] }))).toStrictEqual([]);
    });

    it('keeps the card for comfort and weaning orders without a change that raises the flow', () => {
      // BTS 2017, Table 4: 28 % at 4 L/min; also when no flow is stated
      for (const purpose of ['comfort', 'wean'] as const) {
        for (const flowLPerMin of [2, undefined]) {
          const finding = onlyFinding(
            runRule(rule, buildFacts({ orders: [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin, purpose })] })),
          );
          expect(finding.change).toBeUndefined();
          expectCardRenders(finding);
        }
      }
    });

    it('treats a rate of exactly 30/min as not tachypnoeic', () => {
      // BTS 2017, Table 4: "above 30"
      expect(runRule(rule, buildFacts({ orders: venturi(0.28, 4), respRatePerMin: [respRate(30)] }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ orders: venturi(0.28, 4), respRatePerMin: [respRate(31)] }))).toHaveLength(1);
    });

    it('offers no flow beyond a ward flowmeter: 60 % at 15 L/min raised by half would be 22.5 L/min', () => {
      // 1.5 x 15 L/min (BTS 2017, Table 4); flowmeterMaxLPerMin 15 (common practice)
      const facts = buildFacts({ orders: venturi(0.6, 15), respRatePerMin: [respRate(32)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expect(finding.values.flowBalance).toMatch(/The raised flow, 22\.5 L\/min, is beyond a ward flowmeter \(15 L\/min\): another device is needed\.$/);
      expectCardRenders(finding);
    });

    it('warns without a change when even the raised flow falls short of a fast breather', () => {
      // 60 % at 22.5 L/min gives about 45.6 L/min total (check-values 2b), below a tachypnoeic peak flow
      const facts = buildFacts({ orders: venturi(0.6, 22.5), respRatePerMin: [respRate(36)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expectCardRenders(finding);
    });

    it.each([
      // Minimum flows: 28 % 4 L/min (BTS 2017, Table 4); 35 % 8 L/min (device labelling, common practice)
      [0.28, 20, 4, 'Venturi 28 % with no O2 flow stated: this setting needs at least 4 L/min'],
      [0.35, 20, 8, 'Venturi 35 % with no O2 flow stated: this setting needs at least 8 L/min'],
      // RR > 30: 1.5 x the minimum, 28 % -> 6 L/min (BTS 2017, Table 4)
      [0.28, 34, 6, 'Venturi 28 % with no O2 flow stated: this setting needs at least 4 L/min'],
    ])('asks for the flow when a Venturi %s order states none (RR %s/min): %s L/min', (setting, rr, flow, summary) => {
      const orders = [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: setting, flowLPerMin: undefined })];
      const finding = onlyFinding(runRule(rule, buildFacts({ orders, respRatePerMin: [respRate(rr)] })));
      expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: flow });
      const card = expectCardRenders(finding);
      expect(card.summary).toBe(summary);
      expect(card.label).toBe(`Set O2 flow to ${flow} L/min (same ${Math.round(setting * 100)} % setting)`);
    });

    it.each([
      // 60 % valve minimum 15 L/min (device labelling, common practice) x 1.5 above RR 30 (BTS 2017, Table 4) = 22.5
      [0.6, 22.5],
      // 50 % valve minimum 12 L/min (from memory) x 1.5 (BTS 2017, Table 4) = 18
      [0.5, 18],
    ])('with no flow stated, never suggests a flow beyond a ward flowmeter: Venturi %s needs %s L/min', (setting, needed) => {
      // flowmeterMaxLPerMin 15 (common practice), as when a flow is stated
      const orders = [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: setting, flowLPerMin: undefined })];
      const finding = onlyFinding(runRule(rule, buildFacts({ orders, respRatePerMin: [respRate(34)] })));
      expect(finding.change).toBeUndefined();
      expect(finding.values.suggestedFlow).toBeUndefined();
      expect(finding.values.flowBalance).toContain(`The raised flow, ${needed} L/min, is beyond a ward flowmeter (15 L/min): another device is needed.`);
      expectCardRenders(finding);
    });

    it('does not fire for other devices or a non-standard setting', () => {
      expect(runRule(rule, buildFacts())).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ orders: venturi(0.33, 2) }))).toStrictEqual([]);
    });
  });
});

describe('venturi-flow-insufficient with a hospital device catalogue', () => {
  const RESERVOIR = '  reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }'; // BTS 2017 Table 2; BTS 2008
  // Larkspur Bay stocks 24 % at 2, 28 % at 4, 35 % at 8 and 60 % at 15 L/min (BTS 2017 Table 4 for 24 and
  // 28 %; device labelling, common practice, for 35 and 60 %)
  const larkspur = policyWithDevices(LARKSPUR_BAY_DEVICES);
  const atRisk = (setting: number, flow: number, rr: number) =>
    buildFacts({ orders: venturi(setting, flow), conditions: [condition('copd')], respRatePerMin: [respRate(rr)] });

  describe.each([
    // [setting, printed minimum, raised flow = 1.5 x minimum (BTS 2017 Table 4)]
    [0.24, 2, 3],
    [0.28, 4, 6],
    [0.35, 8, 12],
  ])('an at-risk patient breathing 34/min on the stocked %s valve', (setting, minimum, raised) => {
    it(`at its ${minimum} L/min minimum is raised to ${raised} L/min, the setting kept`, () => {
      const finding = onlyFinding(runRule(rule, atRisk(setting, minimum, 34), { policy: larkspur }));
      expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: raised });
      expect(finding.values.minimumFlow).toBe(`${minimum} L/min`);
      expectCardRenders(finding);
    });

    it('is silent at rest at its minimum', () => {
      // BTS 2017, Table 4: the minimum flow at a respiratory rate of 30/min or less
      expect(runRule(rule, atRisk(setting, minimum, 30), { policy: larkspur })).toStrictEqual([]);
    });
  });

  it('says the raised flow for the stocked 60 % valve is beyond a ward flowmeter, and offers none', () => {
    // 1.5 x 15 = 22.5 L/min (BTS 2017 Table 4; check-values 2b), above the 15 L/min flowmeter (common practice)
    const finding = onlyFinding(runRule(rule, atRisk(0.6, 15, 34), { policy: larkspur }));
    expect(finding.change).toBeUndefined();
    expect(finding.values.flowBalance).toContain('beyond a ward flowmeter (15 L/min)');
  });

  it("checks the flow against the minimum printed on the hospital's valve", () => {
    // Invented label: a 24 % valve printed 3 L/min (BTS 2017 Table 4 gives 24 % at 2-3 L/min)
    const policy = policyWithDevices(['devices:', RESERVOIR, ...venturiLines([[24, 3], [28, 4]])]);
    const finding = onlyFinding(runRule(rule, atRisk(0.24, 2, 18), { policy }));
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 3 });
    expect(finding.values.minimumFlow).toBe('3 L/min');
    // Under the preset the usual 2 L/min minimum stands, and 2 L/min is enough
    expect(runRule(rule, atRisk(0.24, 2, 18))).toStrictEqual([]);
    // With no flow stated, the printed minimum is what the card asks for
    const unstated = buildFacts({ orders: [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: 0.24, flowLPerMin: undefined })] });
    expect(onlyFinding(runRule(rule, unstated, { policy })).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 3 });
  });

  it('keeps the usual minimum for a setting the hospital does not stock', () => {
    // Device labelling (common practice): 31 % at 6 L/min; Larkspur Bay stocks no 31 % valve
    const finding = onlyFinding(runRule(rule, atRisk(0.31, 4, 18), { policy: larkspur }));
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 6 });
  });
});
