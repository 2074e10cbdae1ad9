import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/high-oxygen-requirement.js';
import type { DeviceKind } from '../../../src/core/types.js';
import { BTS, buildFacts, condition, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

describe('high-oxygen-requirement', () => {
  it('runs on order-sign as a warning', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('fires for a Venturi 40 % setting, at the FiO2 0.40 threshold', () => {
    // Policy highOxygenFio2AtLeast 0.40 (BTS 2017, from memory for the exact wording)
    expect(BTS.thresholds.highOxygenFio2AtLeast).toBe(0.4);
    const facts = buildFacts({ orders: [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: 0.4, flowLPerMin: 10 })] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.trigger).toBe('estimated FiO2 at or above 0.40');
    expect(expectCardRenders(finding).summary).toBe('Venturi mask 40 % at 10 L/min: high oxygen requirement, consider senior review');
  });

  it.each<[DeviceKind, number, number | undefined]>([
    ['reservoir-mask', 15, undefined], // BTS 2017, Table 2: reservoir mask for severe hypoxaemia
    ['high-flow-nasal-cannula', 40, 0.35],
    ['cpap-niv', 10, undefined],
  ])('fires for %s whatever the estimate', (device, flow, set) => {
    const facts = buildFacts({ orders: [oxygenOrder({ device, flowLPerMin: flow, setFio2Fraction: set })] });
    const finding = onlyFinding(runRule(rule, facts));
    expectCardRenders(finding);
  });

  it('does not fire for 2 L/min nasal cannula', () => {
    // Nasal cannula 2 L/min ~ FiO2 0.28 (check-values 2a, common practice)
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('does not fire for Venturi 35 %, below the threshold', () => {
      const facts = buildFacts({ orders: [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: 0.35, flowLPerMin: 8 })] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('does not fire where high-concentration oxygen is the indication', () => {
      for (const kind of ['pneumothorax', 'cluster-headache', 'carbon-monoxide-poisoning'] as const) {
        const facts = buildFacts({ orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })], conditions: [condition(kind)] });
        expect(runRule(rule, facts)).toStrictEqual([]);
      }
    });
  });
});
