import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { evaluateOrder } from '../../../src/core/engine.js';
import { rule } from '../../../src/core/rules/adult-checks-only.js';
import { RULES } from '../../../src/core/rules/index.js';
import type { Facts, HookName } from '../../../src/core/types.js';
import {
  BTS,
  NOW,
  bloodGas,
  buildFacts,
  condition,
  oxygenOrder,
  respRate,
  spo2,
  withPolicy,
} from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const aged = (ageYears: number | undefined, extra: Partial<Facts> = {}): Facts =>
  buildFacts({ patient: { ageYears, bmiKgPerM2: undefined }, ...extra });

/** An order that draws adult advice in an adult: no target, a face mask at 3 L/min, SpO2 99 % on it. */
const busyOrder: Partial<Facts> = {
  orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 3, target: undefined })],
  spo2Percent: [spo2(99)],
  respRatePerMin: [respRate(34)],
  conditions: [condition('acute-asthma')],
  bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.27, paco2Kpa: 7.6, hco3: 25 })],
};

const ids = (facts: Facts, hook: HookName = 'order-sign'): string[] =>
  evaluateOrder(facts, BTS, { hook, now: NOW }).findings.map((f) => f.ruleId);

describe('adult-checks-only', () => {
  it('runs on both hooks as information, for patients of any age', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('info');
    expect(rule.appliesTo).toBe('all-ages');
  });

  it.each([
    // population.minimumAgeYears 16 (bundled policy; common practice): 15 and younger are below it
    [2], [9], [13], [15],
  ])('says a child of %s is outside the adult checks', (age) => {
    const finding = onlyFinding(runRule(rule, aged(age)));
    expect(finding.values.ageStatement).toBe(`Age ${age} years`);
    expect(finding.orderReference).toBeUndefined();
    const card = expectCardRenders(finding);
    expect(card.summary).toBe(`Age ${age} years: these oxygen checks are for adults (16 and over); follow local paediatric policy`);
    expect(card.detail).toContain('No adult target range, titration, device or physiology advice');
  });

  it.each([[16], [17], [58], [94]])('is silent for an adult of %s', (age) => {
    // the minimum age itself is adult: "below 16" is 15 and younger
    expect(runRule(rule, aged(age))).toStrictEqual([]);
  });

  it('says an unknown age is unknown on order-sign only, and that the adult checks ran', () => {
    const finding = onlyFinding(runRule(rule, aged(undefined)));
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Age not recorded: these oxygen checks are for adults (16 and over); if younger, follow local paediatric policy');
    expect(card.detail).toContain('on the assumption that the patient is an adult');
    expect(runRule(rule, aged(undefined), { hook: 'order-select' })).toStrictEqual([]);
  });

  it('follows the policy minimum age', () => {
    const policy = withPolicy(BTS, { population: { minimumAgeYears: 18 } });
    expect(runRule(rule, aged(17), { policy }).length).toBe(1);
    expect(runRule(rule, aged(18), { policy })).toStrictEqual([]);
  });

  describe('through the engine', () => {
    it.each([[3], [9], [15]])('gives a child of %s no adult target or titration advice, only this card and data checks', (age) => {
      // the same order in a 40-year-old draws target, device, hypercapnia and titration cards
      expect(ids(aged(40, busyOrder)).length).toBeGreaterThan(2);
      const allAges = new Set(RULES.filter((r) => r.appliesTo === 'all-ages').map((r) => r.id));
      for (const hook of ['order-select', 'order-sign'] as const) {
        const childIds = ids(aged(age, busyOrder), hook);
        expect(childIds).toContain('adult-checks-only');
        expect(childIds.every((id) => allAges.has(id))).toBe(true);
      }
    });

    it('keeps data-quality and duplicate-order cards for a child', () => {
      const facts = aged(9, {
        ...busyOrder,
        missingData: ['conditions'],
        setAside: [{ what: 'SpO2 of 38 %', reason: 'implausible', detail: 'Outside 50-100 %', reference: undefined }],
        orders: [oxygenOrder(), oxygenOrder({ reference: 'MedicationRequest/o2-draft-2', isSubject: false })],
      });
      expect(ids(facts).sort()).toStrictEqual(
        ['adult-checks-only', 'data-set-aside', 'duplicate-oxygen-order', 'required-data-unavailable'].sort(),
      );
    });

    it('never gives a child below the minimum age a card from an adult rule, whatever the order and findings', () => {
      // population.minimumAgeYears 16 (bundled policy; common practice)
      const allAges = new Set(RULES.filter((r) => r.appliesTo === 'all-ages').map((r) => r.id));
      const situations: readonly Partial<Facts>[] = [
        busyOrder,
        { conditions: [condition('copd')], spo2Percent: [spo2(97)] },
        { orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })], conditions: [condition('carbon-monoxide-poisoning')] },
        { orders: [oxygenOrder({ device: 'venturi-mask', flowLPerMin: 2, setFio2Fraction: 0.28 })], respRatePerMin: [respRate(36)] },
      ];
      fc.assert(
        fc.property(fc.integer({ min: 0, max: 15 }), fc.constantFrom(...situations), fc.constantFrom<HookName>('order-select', 'order-sign'), (age, situation, hook) => {
          const found = ids(aged(age, situation), hook);
          expect(found.filter((id) => id === 'adult-checks-only')).toHaveLength(1);
          expect(found.filter((id) => !allAges.has(id))).toStrictEqual([]);
        }),
        { numRuns: 60 },
      );
      fc.assert(
        fc.property(fc.integer({ min: 16, max: 110 }), fc.constantFrom(...situations), (age, situation) => {
          expect(ids(aged(age, situation))).not.toContain('adult-checks-only');
        }),
        { numRuns: 60 },
      );
    });

    it('still gives adult advice when the age is unknown, with one card saying so', () => {
      const result = ids(aged(undefined, busyOrder));
      expect(result).toContain('adult-checks-only');
      expect(result).toContain('hypercapnia-without-chronic-retention');
      expect(result.filter((id) => id === 'adult-checks-only')).toHaveLength(1);
    });
  });
});
