import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/oxygen-without-hypoxaemia.js';
import type { ConditionKind, Facts, OrderPurpose } from '../../../src/core/types.js';
import {
  BTS,
  TSANZ,
  activeOrder,
  buildFacts,
  condition,
  fio2,
  minutesAgo,
  o2Flow,
  oxygenOrder,
  spo2,
  withPolicy,
} from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

/** Oxygen only if hypoxaemic: BTS 2017 Table 3 (V); sickle cell crisis BTS 2008 Table 2 (V). */
const LISTED: readonly ConditionKind[] = [
  'acute-coronary-syndrome',
  'stroke',
  'pregnancy',
  'hyperventilation',
  'sickle-cell-crisis',
];

/** An invented Larkspur Bay patient with `kinds` on record and an SpO2 taken with FiO2 0.21 recorded. */
function onAir(spo2Percent: number, kinds: readonly ConditionKind[], overrides: Partial<Facts> = {}): Facts {
  return buildFacts({
    conditions: kinds.map(condition),
    spo2Percent: [spo2(spo2Percent)],
    fio2Fraction: [fio2(0.21)], // room air is FiO2 0.21: common practice
    ...overrides,
  });
}

describe('oxygen-without-hypoxaemia', () => {
  it('runs on order-sign as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('the bundled policies list the BTS 2017 Table 3 conditions and sickle cell crisis', () => {
    expect([...BTS.specialConditions.oxygenOnlyIfHypoxaemic].sort()).toStrictEqual([...LISTED].sort());
    expect([...TSANZ.specialConditions.oxygenOnlyIfHypoxaemic].sort()).toStrictEqual([...LISTED].sort());
  });

  it.each(LISTED)('for %s, says oxygen is not needed at SpO2 96 %% on air and not at 93 %%', (kind) => {
    // BTS 2017 Table 3 (V): oxygen only if hypoxaemic, target 94-98 %; BTS 2008 Table 2 (V) for sickle cell
    const finding = onlyFinding(runRule(rule, onAir(96, [kind])));
    expect(finding.indicator).toBe('info');
    expect(finding.change).toBeUndefined();
    const card = expectCardRenders(finding);
    expect(card.summary).toBe(
      'SpO2 96 % (10 min ago) on air is within the target 94–98 %: oxygen is not needed unless SpO2 falls below 94 %',
    );
    expect(card.detail).toContain(condition(kind).display);
    expect(card.detail).toContain('FiO2 0.21 recorded 10 min ago');
    expect(runRule(rule, onAir(93, [kind]))).toStrictEqual([]);
  });

  it('names what each source adds beyond "only if hypoxaemic"', () => {
    const text = (kind: ConditionKind): string => onlyFinding(runRule(rule, onAir(97, [kind]))).values.reason ?? '';
    // BTS 2008 Table 2 (V): hypoxaemic in sickle cell crisis includes below the patient's usual saturation
    expect(text('sickle-cell-crisis')).toContain("below the patient's known usual saturation");
    // BTS 2017 pregnancy section (V2): no oxygen in uncomplicated labour unless SpO2 < 94 %
    expect(text('pregnancy')).toContain('BTS 2017 advises no oxygen unless SpO2 is below the target range (here 94 %)');
    // Under the TSANZ preset the bound is the policy's 92 % (TSANZ 2015), never put in BTS 2017's mouth as its own.
    const underTsanz = onlyFinding(runRule(rule, onAir(97, ['pregnancy']), { policy: TSANZ })).values.reason ?? '';
    expect(underTsanz).toContain('below the target range (here 92 %)');
    expect(underTsanz).not.toMatch(/BTS[^.;]*below 92/);
    // BMJ 2018 (V): do not start oxygen at SpO2 >= 93 % in acute stroke or myocardial infarction
    expect(text('stroke')).toContain('93 %');
    expect(onlyFinding(runRule(rule, onAir(97, ['acute-coronary-syndrome']))).sourceKeys).toStrictEqual(['bts-2017', 'bmj-2018']);
    expect(onlyFinding(runRule(rule, onAir(97, ['hyperventilation']))).sourceKeys).toStrictEqual(['bts-2017']);
  });

  it('fires for a listed condition exactly when the SpO2 on air reaches the lower bound', () => {
    // BTS 2017 Table 3 (V): target 94-98 %; oxygen only below it. Invariant over SpO2 70-100 %.
    fc.assert(
      fc.property(fc.integer({ min: 70, max: 100 }), fc.constantFrom(...LISTED), (value, kind) => {
        const fires = runRule(rule, onAir(value, [kind])).length === 1;
        expect(fires).toBe(value >= 94);
      }),
    );
  });

  describe('without a listed condition', () => {
    it('stays quiet while the SpO2 on air is within the range: the order is a standing prescription', () => {
      // BTS 2017 (V): prescribe oxygen to a target range; standard range 94-98 %
      expect(runRule(rule, onAir(94, []))).toStrictEqual([]);
      expect(runRule(rule, onAir(98, []))).toStrictEqual([]);
    });

    it('fires when the SpO2 on air is above the range', () => {
      // BTS 2017 Tables 1-3 (V): upper bound 98 %
      const card = expectCardRenders(onlyFinding(runRule(rule, onAir(99, []))));
      expect(card.summary).toContain('on air is above the target 94–98 %');
      expect(card.detail).toContain('further above the target');
    });

    it('warns for a patient at risk of hypercapnia whose SpO2 on air is above 88-92 %', () => {
      // BTS 2017 Table 4 (V): at-risk range 88-92 %
      const finding = onlyFinding(runRule(rule, onAir(93, ['copd'])));
      expect(finding.indicator).toBe('warning');
      expect(expectCardRenders(finding).detail).toContain('can raise the PaCO2');
      expect(runRule(rule, onAir(92, ['copd']))).toStrictEqual([]);
    });
  });

  it('warns when a listed condition meets the at-risk range', () => {
    // BTS 2017 Table 4 (V): 88-92 % for COPD; Table 3 (V): ACS oxygen only if hypoxaemic
    const finding = onlyFinding(runRule(rule, onAir(88, ['acute-coronary-syndrome', 'copd'])));
    expect(finding.indicator).toBe('warning');
    expect(finding.values.lowBound).toBe('88 %');
    expect(runRule(rule, onAir(87, ['acute-coronary-syndrome', 'copd']))).toStrictEqual([]);
  });

  it('follows the policy list: a condition removed from it is treated like any other patient', () => {
    const policy = withPolicy(BTS, {
      specialConditions: { oxygenOnlyIfHypoxaemic: LISTED.filter((k) => k !== 'stroke') },
    });
    expect(runRule(rule, onAir(96, ['stroke']), { policy })).toStrictEqual([]);
    expect(runRule(rule, onAir(96, ['pregnancy']), { policy })).toHaveLength(1);
    // Above the range the general case still applies (BTS 2017 upper bound 98 %).
    const above = onlyFinding(runRule(rule, onAir(99, ['stroke']), { policy }));
    expect(above.values.reason).not.toContain('Acute stroke');
  });

  it('uses the policy range: under TSANZ 2015 an ACS patient at 93 % on air gets the card', () => {
    // TSANZ 2015 (V): target 92-96 %; TSANZ starts oxygen only below 92 % (from memory)
    const facts = onAir(93, ['acute-coronary-syndrome'], {
      orders: [oxygenOrder({ target: { lowPercent: 92, highPercent: 96, readFrom: 'structured' } })],
    });
    expect(onlyFinding(runRule(rule, facts, { policy: TSANZ })).values.lowBound).toBe('92 %');
    // Under BTS 2017 (94-98 %, V) the same 93 % is below the range.
    expect(runRule(rule, onAir(93, ['acute-coronary-syndrome']))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('counts a recorded O2 flow of 0 as air', () => {
      const facts = onAir(97, ['stroke'], { fio2Fraction: [], o2FlowLPerMin: [o2Flow(0)] });
      expect(onlyFinding(runRule(rule, facts)).values.airEvidence).toBe('O2 flow 0 L/min recorded 10 min ago');
    });

    it('does not fire on an SpO2 read on oxygen, however high', () => {
      // Oxygen may be what holds the saturation in range (BTS 2017, titration to target).
      expect(runRule(rule, onAir(97, ['stroke'], { fio2Fraction: [fio2(0.28)] }))).toStrictEqual([]);
      expect(runRule(rule, onAir(97, ['stroke'], { fio2Fraction: [], o2FlowLPerMin: [o2Flow(2)] }))).toStrictEqual([]);
    });

    it('does not assume air when nothing about oxygen was recorded with the reading', () => {
      // A new order with no oxygen on record: the patient may be on oxygen given before any order.
      expect(runRule(rule, onAir(97, ['stroke'], { fio2Fraction: [] }))).toStrictEqual([]);
      expect(runRule(rule, onAir(97, ['stroke'], { fio2Fraction: [], activeOrders: [activeOrder()] }))).toStrictEqual([]);
    });

    it('does not trust an air reading when oxygen was recorded between it and the SpO2', () => {
      const started = onAir(97, ['stroke'], { fio2Fraction: [fio2(0.21, 120)], o2FlowLPerMin: [o2Flow(3, 60)] });
      expect(runRule(rule, started)).toStrictEqual([]);
      const ordered = onAir(97, ['stroke'], {
        fio2Fraction: [fio2(0.21, 120)],
        activeOrders: [activeOrder({ authoredOn: minutesAgo(60) })],
      });
      expect(runRule(rule, ordered)).toStrictEqual([]);
      // The same air reading with nothing between still counts.
      expect(runRule(rule, onAir(97, ['stroke'], { fio2Fraction: [fio2(0.21, 120)] }))).toHaveLength(1);
    });

    it.each<OrderPurpose>(['comfort', 'stop', 'wean', 'room-air'])('is silent for a %s order', (purpose) => {
      expect(runRule(rule, onAir(97, ['stroke'], { orders: [oxygenOrder({ purpose })] }))).toStrictEqual([]);
    });

    it('is silent for an order of 0 L/min', () => {
      expect(runRule(rule, onAir(97, ['stroke'], { orders: [oxygenOrder({ flowLPerMin: 0 })] }))).toStrictEqual([]);
    });

    it('names two listed conditions once each, and a condition recorded twice once', () => {
      const facts = onAir(96, [], {
        conditions: [condition('pregnancy'), condition('sickle-cell-crisis'), { ...condition('pregnancy'), reference: 'Condition/p2' }],
      });
      const reason = onlyFinding(runRule(rule, facts)).values.reason ?? '';
      expect(reason.startsWith('Pregnancy; Sickle cell crisis recorded')).toBe(true);
      expect(reason.match(/Pregnancy/g)).toHaveLength(1);
    });

    it('leaves paraquat and bleomycin to oxygen-toxicity-target, even when the policy lists them', () => {
      const policy = withPolicy(BTS, { specialConditions: { oxygenOnlyIfHypoxaemic: [...LISTED, 'paraquat-poisoning'] } });
      expect(runRule(rule, onAir(95, ['paraquat-poisoning']), { policy })).toStrictEqual([]);
    });

    it.each<[number, number]>([
      [88, 0], // the upper bound of 85-88 % (BTS 2017, Table 3, V2): in range on air, the standing prescription
      [86, 0], // within 85-88 %: oxygen would be given only if it fell (BTS 2017, Table 3, V2)
      [89, 1], // above 85-88 % on air: any oxygen takes it further above (BTS 2017, Table 3, V2)
      [95, 1],
    ])('judges paraquat on air at SpO2 %s %% against the ordered 85-88 %%: %s card(s)', (value, cards) => {
      const facts = onAir(value, ['paraquat-poisoning'], {
        orders: [oxygenOrder({ target: { lowPercent: 85, highPercent: 88, readFrom: 'text' } })],
      });
      const findings = runRule(rule, facts);
      expect(findings).toHaveLength(cards);
      for (const finding of findings) {
        expect(finding.values.position).toBe('above the target 85–88 %'); // BTS 2017, Table 3 (V2)
      }
    });

    it('does not fire without a current SpO2, or where no SpO2 target applies', () => {
      expect(runRule(rule, buildFacts({ conditions: [condition('stroke')], fio2Fraction: [fio2(0.21)] }))).toStrictEqual([]);
      // BTS 2017 Table 1 (V): no SpO2 target in carbon monoxide poisoning
      expect(runRule(rule, onAir(99, ['carbon-monoxide-poisoning']))).toStrictEqual([]);
    });
  });
});
