import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/venturi-flow-insufficient.js';
import { buildFacts, oxygenOrder, respRate } from '../facts-builder.js';
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

    it('does not fire for other devices or a non-standard setting', () => {
      expect(runRule(rule, buildFacts())).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ orders: venturi(0.33, 2) }))).toStrictEqual([]);
    });
  });
});
