import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/carbon-monoxide-oximetry.js';
import { activeOrder, buildFacts, condition, o2Flow, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const co = [condition('carbon-monoxide-poisoning')];

describe('carbon-monoxide-oximetry', () => {
  it('runs on both hooks as a warning by default', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('is critical when the order titrates to an SpO2 target, and suggests a reservoir mask at 15 L/min', () => {
    // BTS 2017, Table 1: ignore the oximeter in CO poisoning; reservoir mask; check COHb
    const finding = onlyFinding(runRule(rule, buildFacts({ conditions: co })));
    expect(finding.indicator).toBe('critical');
    expect(finding.values.orderedTarget).toBe('94–98 %');
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'reservoir-mask', flowLPerMin: 15 });
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Carbon monoxide poisoning: SpO2 is not a valid guide; high-concentration oxygen and a COHb level advised');
    expect(card.label).toBe('Change to Reservoir mask at 15 L/min');
  });

  it('is critical for a down-titration from an active order', () => {
    const facts = buildFacts({
      conditions: co,
      orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 6, target: undefined })],
      activeOrders: [activeOrder({ device: 'reservoir-mask', flowLPerMin: 15, target: undefined })],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('critical');
    expect(finding.values.downTitration).toBe('yes: less oxygen than an active order on record');
  });

  it('is a warning for a reservoir mask at 15 L/min with no target, without a change', () => {
    const facts = buildFacts({ conditions: co, orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15, target: undefined })] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning');
    expect(finding.change).toBeUndefined();
    expectCardRenders(finding);
  });

  it.each<[string, Parameters<typeof oxygenOrder>[0], string | undefined]>([
    // BTS 2017, Table 1: as much oxygen as possible; reservoir mask at 15 L/min (BTS 2017, Table 2)
    ['nasal cannula 4 L/min', { device: 'nasal-cannula', flowLPerMin: 4, target: undefined }, 'set-device'],
    ['simple face mask 10 L/min', { device: 'simple-face-mask', flowLPerMin: 10, target: undefined }, 'set-device'],
    ['reservoir mask 12 L/min', { device: 'reservoir-mask', flowLPerMin: 12, target: undefined }, 'set-flow'],
    ['reservoir mask 15 L/min', { device: 'reservoir-mask', flowLPerMin: 15, target: undefined }, undefined],
    ['high-flow nasal cannula at FiO2 1.0', { device: 'high-flow-nasal-cannula', flowLPerMin: 60, setFio2Fraction: 1, target: undefined }, undefined],
  ])('for %s suggests %s', (_, parts, kind) => {
    const finding = onlyFinding(runRule(rule, buildFacts({ conditions: co, orders: [oxygenOrder(parts)] })));
    expect(finding.change?.kind).toBe(kind);
    expectCardRenders(finding);
  });

  it('does not fire without carbon monoxide poisoning', () => {
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('offers no reservoir mask when a recorded flow shows the patient on high flow', () => {
      // 50 L/min: only high flow reaches it (check-values 2a); a mask would be a step down (common practice)
      const facts = buildFacts({ conditions: [condition('carbon-monoxide-poisoning')], orders: [oxygenOrder({ target: undefined })], o2FlowLPerMin: [o2Flow(50)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expectCardRenders(finding);
    });

    it('raises a reservoir mask run below 15 L/min to 15 L/min', () => {
      // BTS 2017, Table 2: reservoir mask at 15 L/min
      const facts = buildFacts({ conditions: co, orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 10, target: undefined })] });
      expect(onlyFinding(runRule(rule, facts)).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 15 });
    });

    it('offers no device change on NIV', () => {
      const facts = buildFacts({ conditions: co, orders: [oxygenOrder({ device: 'cpap-niv', setFio2Fraction: 1, flowLPerMin: undefined, target: undefined })] });
      expect(onlyFinding(runRule(rule, facts)).change).toBeUndefined();
    });
  });
});
