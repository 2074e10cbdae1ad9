import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/duplicate-oxygen-order.js';
import { activeOrder, buildFacts, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

describe('duplicate-oxygen-order', () => {
  it('runs on both hooks as a warning', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('names an active oxygen order already on record', () => {
    // Duplicate prescription checking (common practice)
    const facts = buildFacts({ activeOrders: [activeOrder({ device: 'simple-face-mask', flowLPerMin: 6 })] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.otherOrders).toBe('Simple face mask at 6 L/min (active on record)');
    expect(expectCardRenders(finding).summary).toBe('Other oxygen orders found (1): check which one should apply');
  });

  it('names a second oxygen order in the same draft', () => {
    const facts = buildFacts({
      orders: [oxygenOrder(), oxygenOrder({ reference: 'ServiceRequest/o2-draft-2', resourceType: 'ServiceRequest', device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 4 })],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.otherOrders).toBe('Venturi mask 28 % at 4 L/min (in this draft)');
    expectCardRenders(finding);
  });

  it('does not fire for a single order', () => {
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it.each(['stop', 'room-air'] as const)('does not call a %s order a duplicate of the order it ends', (purpose) => {
      // A stop order replaces; duplicate checking is for two live prescriptions (common practice)
      const facts = buildFacts({ orders: [oxygenOrder({ purpose })], activeOrders: [activeOrder()] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('does not count a draft order that gives no oxygen (0 L/min) against a new order', () => {
      const facts = buildFacts({
        orders: [oxygenOrder(), oxygenOrder({ reference: 'MedicationRequest/o2-draft-2', flowLPerMin: 0 })],
      });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('still names a weaning order signed beside an active one', () => {
      // Two live prescriptions: which governs is unclear (common practice)
      const facts = buildFacts({ orders: [oxygenOrder({ purpose: 'wean' })], activeOrders: [activeOrder()] });
      expectCardRenders(onlyFinding(runRule(rule, facts)));
    });

    it('does not count the order itself when the record already holds it', () => {
      const facts = buildFacts({ activeOrders: [activeOrder({ reference: 'MedicationRequest/o2-draft-1' })] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });
  });
});
