import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { renderTemplate } from '../../../../src/cds/card-templates.js';
import { evaluateOrder } from '../../../../src/core/engine.js';
import { RULES } from '../../../../src/core/rules/index.js';
import { givesOxygen, isTitration } from '../../../../src/core/rules/support/order-purpose.js';
import {
  CONDITION_KINDS,
  DEVICE_KINDS,
  type ConditionKind,
  type Facts,
  type Finding,
  type OrderPurpose,
  type OxygenOrder,
  type SaturationRange,
} from '../../../../src/core/types.js';
import {
  BTS,
  NOW,
  activeOrder,
  bloodGas,
  buildFacts,
  condition,
  fio2,
  o2Flow,
  oxygenOrder,
  respRate,
  spo2,
} from '../../facts-builder.js';
import { loadCardTemplate } from '../card-check.js';
import { runRule } from '../run-rule.js';

const NOT_TITRATIONS: readonly OrderPurpose[] = ['comfort', 'stop', 'wean', 'room-air'];

/** Rules whose advice is titration: a step, an escalation, a target to titrate against, a device for it. */
const TITRATION_ADVICE = [
  'spo2-above-target',
  'target-differs-from-policy',
  'lower-range-without-risk',
  'high-oxygen-requirement',
  'uncontrolled-oxygen-at-risk',
  'pneumothorax-oxygen',
  'cluster-headache-oxygen',
  'oxygen-without-hypoxaemia',
];
/**
 * Cards about the range itself: kept while oxygen is weaned (a wean is titrated down against a
 * range), moot for comfort and for no oxygen.
 */
const RANGE_LIMITS = ['target-above-hypercapnic-range', 'oxygen-toxicity-target', 'target-range-missing'];
/** Cards about the ordered device or flow: moot for an order that gives no oxygen. */
const DEVICE_AND_FLOW = ['flow-outside-device-range', 'venturi-flow-insufficient'];
/** Cards that read the SpO2 against a target: not for comfort oxygen (BTS 2017, terminal care). */
const SATURATION_WATCH = ['spo2-below-target', 'order-gives-less-oxygen', 'no-recent-spo2'];

function ruleIdsNeverSeen(order: OxygenOrder): readonly string[] {
  if (isTitration(order)) {
    return [];
  }
  const noOxygen = !givesOxygen(order);
  return [
    ...TITRATION_ADVICE,
    ...(noOxygen || order.purpose === 'comfort' ? RANGE_LIMITS : []),
    ...(noOxygen ? DEVICE_AND_FLOW : []),
    ...(order.purpose === 'comfort' ? SATURATION_WATCH : []),
  ];
}

/** True when a change would give more oxygen than the order: a device change, a higher flow, a higher range. */
function raisesOxygen(finding: Finding, order: OxygenOrder): boolean {
  const change = finding.change;
  if (change === undefined) {
    return false;
  }
  switch (change.kind) {
    case 'set-device':
      return true;
    case 'set-flow':
      return change.flowLPerMin > (order.flowLPerMin ?? 0);
    case 'set-target':
      return order.target !== undefined && change.range.highPercent > order.target.highPercent;
    case 'stop-oxygen':
      return false;
  }
}

function cardText(finding: Finding): string {
  const template = loadCardTemplate(finding.ruleId);
  return [template.summary, template.detail].map((t) => renderTemplate(t, finding.values, 'plain').text).join('\n');
}

const RANGES: readonly SaturationRange[] = [
  { lowPercent: 94, highPercent: 98 }, // BTS 2017 (V)
  { lowPercent: 88, highPercent: 92 }, // BTS 2017 Table 4 (V)
  { lowPercent: 92, highPercent: 96 }, // TSANZ 2015 (V)
  { lowPercent: 85, highPercent: 88 }, // BTS 2017 Table 3 (V2)
  { lowPercent: 90, highPercent: 94 }, // an individual range (invented)
];

/** Orders that are not titrations, with every device, flow and target the reader could produce. */
const notTitration: fc.Arbitrary<OxygenOrder> = fc
  .record({
    purpose: fc.constantFrom<OrderPurpose>(...NOT_TITRATIONS, 'titrate'),
    device: fc.option(fc.constantFrom(...DEVICE_KINDS), { nil: undefined }),
    flowLPerMin: fc.option(fc.constantFrom(0, 0.5, 1, 2, 3, 4, 6, 8, 10, 15, 30, 60), { nil: undefined }),
    setFio2Fraction: fc.option(fc.constantFrom(0.24, 0.28, 0.35, 0.4, 0.6, 0.8), { nil: undefined }),
    target: fc.option(fc.constantFrom(...RANGES), { nil: undefined }),
  })
  .map(({ purpose, flowLPerMin, target, ...rest }) =>
    oxygenOrder({
      ...rest,
      purpose,
      // A 'titrate' order here is one of 0 L/min, which gives no oxygen whatever its words say.
      flowLPerMin: purpose === 'titrate' ? 0 : flowLPerMin,
      target: target === undefined ? undefined : { ...target, readFrom: 'structured' },
    }),
  );

const patient: fc.Arbitrary<Omit<Facts, 'orders'>> = fc
  .record({
    conditions: fc.uniqueArray(fc.constantFrom<ConditionKind>(...CONDITION_KINDS), { maxLength: 3 }),
    spo2Percent: fc.option(fc.integer({ min: 70, max: 100 }), { nil: undefined }),
    breathing: fc.constantFrom<'air-fio2' | 'air-flow' | 'fio2' | 'flow' | 'nothing'>('air-fio2', 'air-flow', 'fio2', 'flow', 'nothing'),
    fio2Fraction: fc.constantFrom(0.24, 0.28, 0.4, 0.6, 0.8),
    flowLPerMin: fc.constantFrom(1, 2, 4, 10, 15),
    respRatePerMin: fc.option(fc.integer({ min: 8, max: 40 }), { nil: undefined }),
    gas: fc.option(
      fc.record({ ph: fc.constantFrom(7.2, 7.3, 7.38, 7.45), paco2Kpa: fc.constantFrom(4.5, 5.5, 6.5, 8.5) }),
      { nil: undefined },
    ),
    onRecord: fc.option(fc.constantFrom(...DEVICE_KINDS), { nil: undefined }),
  })
  .map((p) => {
    const { orders: _unused, ...facts } = buildFacts({
      conditions: p.conditions.map(condition),
      spo2Percent: p.spo2Percent === undefined ? [] : [spo2(p.spo2Percent)],
      fio2Fraction:
        p.breathing === 'air-fio2' ? [fio2(0.21)] : p.breathing === 'fio2' ? [fio2(p.fio2Fraction)] : [],
      o2FlowLPerMin: p.breathing === 'air-flow' ? [o2Flow(0)] : p.breathing === 'flow' ? [o2Flow(p.flowLPerMin)] : [],
      respRatePerMin: p.respRatePerMin === undefined ? [] : [respRate(p.respRatePerMin)],
      bloodGases: p.gas === undefined ? [] : [bloodGas({ ageMinutes: 30, ...p.gas })],
      activeOrders: p.onRecord === undefined ? [] : [activeOrder({ device: p.onRecord, flowLPerMin: 4 })],
    });
    return facts;
  });

describe('isTitration and givesOxygen', () => {
  it.each<[OrderPurpose, number | undefined, boolean, boolean]>([
    ['titrate', 2, true, true],
    ['titrate', undefined, true, true], // no flow stated: still a titration
    ['titrate', 0, false, false], // 0 L/min gives no oxygen
    ['comfort', 2, false, true], // BTS 2017: comfort oxygen in terminal care is not titrated
    ['wean', 2, false, true],
    ['stop', 2, false, false],
    ['room-air', undefined, false, false],
  ])('a %s order at %s L/min: titration %s, gives oxygen %s', (purpose, flowLPerMin, titration, gives) => {
    const order = oxygenOrder({ purpose, flowLPerMin });
    expect(isTitration(order)).toBe(titration);
    expect(givesOxygen(order)).toBe(gives);
  });

  it('every rule id the guards name is registered', () => {
    const ids = RULES.map((r) => r.id);
    for (const id of [...TITRATION_ADVICE, ...RANGE_LIMITS, ...DEVICE_AND_FLOW, ...SATURATION_WATCH]) {
      expect(ids).toContain(id);
    }
  });
});

describe('orders that are not titrations (property over generated orders and patients)', () => {
  it('never get a change that raises oxygen, nor advice to titrate, whatever the patient', () => {
    fc.assert(
      fc.property(notTitration, patient, (order, rest) => {
        const facts: Facts = { ...rest, orders: [order] };
        const { findings } = evaluateOrder(facts, BTS, { hook: 'order-sign', now: NOW });
        const forbidden = ruleIdsNeverSeen(order);
        for (const finding of findings) {
          expect(raisesOxygen(finding, order), `${finding.ruleId} ${JSON.stringify(finding.change)}`).toBe(false);
          expect(forbidden).not.toContain(finding.ruleId);
          if (order.purpose === 'comfort') {
            expect(cardText(finding)).not.toMatch(/titrat/i);
          }
        }
      }),
    );
  });

  it('never speak of mask rebreathing on a nasal cannula, for any purpose or flow', () => {
    const cannula = fc
      .record({
        purpose: fc.constantFrom<OrderPurpose>(...NOT_TITRATIONS, 'titrate'),
        flowLPerMin: fc.constantFrom(0, 0.25, 0.5, 1, 6, 7, 10, 15),
      })
      .map((o) => oxygenOrder({ device: 'nasal-cannula', ...o }));
    fc.assert(
      fc.property(cannula, patient, (order, rest) => {
        const { findings } = evaluateOrder({ ...rest, orders: [order] }, BTS, { hook: 'order-sign', now: NOW });
        for (const finding of findings) {
          // "non-rebreathing mask" names a device; rebreathing itself is a mask problem.
          expect(cardText(finding)).not.toMatch(/(?<!non-)rebreath/i);
        }
      }),
    );
  });
});

/**
 * One scenario per rule that would fire (most with a change) for a titration, and what each
 * purpose gets instead: 'change' (a card with a change), 'card' (a card, no change) or 'none'.
 * The decision table of docs/clinical-basis.md, "Orders that are not titrations".
 */
const stroke = [condition('stroke')];
const TABLE: ReadonlyArray<{
  readonly ruleId: string;
  readonly facts: (order: Partial<OxygenOrder>) => Facts;
  readonly expected: Readonly<Record<OrderPurpose, 'change' | 'card' | 'none'>>;
}> = [
  {
    ruleId: 'spo2-above-target', // BTS 2017 (V): 99 % on 4 L/min is above 94-98 %
    facts: (o) => buildFacts({ orders: [oxygenOrder({ flowLPerMin: 4, ...o })], spo2Percent: [spo2(99)], o2FlowLPerMin: [o2Flow(4)] }),
    expected: { titrate: 'change', comfort: 'none', wean: 'none', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'spo2-below-target', // BTS 2017 Table 2 (V): below 85 %, reservoir mask
    facts: (o) => buildFacts({ orders: [oxygenOrder(o)], spo2Percent: [spo2(80)], fio2Fraction: [fio2(0.28)] }),
    expected: { titrate: 'change', comfort: 'none', wean: 'card', stop: 'card', 'room-air': 'card' },
  },
  {
    ruleId: 'high-oxygen-requirement', // BTS 2017 Table 2 (V): reservoir mask 15 L/min
    facts: (o) => buildFacts({ orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15, ...o })] }),
    expected: { titrate: 'card', comfort: 'none', wean: 'none', stop: 'none', 'room-air': 'none' },
  },
  {
    // BTS 2017 (V): prescribe to a target range; a wean is titrated down against one (common practice)
    ruleId: 'target-range-missing',
    facts: (o) => buildFacts({ orders: [oxygenOrder({ target: undefined, ...o })] }),
    expected: { titrate: 'change', comfort: 'none', wean: 'change', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'lower-range-without-risk', // BTS 2017 (V): 94-98 % without hypercapnic risk
    facts: (o) => buildFacts({ orders: [oxygenOrder({ target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' }, ...o })] }),
    expected: { titrate: 'change', comfort: 'none', wean: 'none', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'target-differs-from-policy', // an individual 90-94 % range (invented) against BTS 94-98 % (V)
    facts: (o) => buildFacts({ orders: [oxygenOrder({ target: { lowPercent: 90, highPercent: 94, readFrom: 'structured' }, ...o })] }),
    expected: { titrate: 'change', comfort: 'none', wean: 'none', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'target-above-hypercapnic-range', // BTS 2017 Table 4 (V): 88-92 % in COPD
    facts: (o) => buildFacts({ orders: [oxygenOrder(o)], conditions: [condition('copd')] }),
    expected: { titrate: 'change', comfort: 'none', wean: 'change', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'oxygen-toxicity-target', // BTS 2017 Table 3 (V2): 85-88 % in paraquat poisoning
    facts: (o) => buildFacts({ orders: [oxygenOrder(o)], conditions: [condition('paraquat-poisoning')] }),
    expected: { titrate: 'change', comfort: 'none', wean: 'change', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'uncontrolled-oxygen-at-risk', // BTS 2017 Table 4 (V): controlled oxygen in COPD
    facts: (o) =>
      buildFacts({
        orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 6, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' }, ...o })],
        conditions: [condition('copd')],
      }),
    expected: { titrate: 'change', comfort: 'none', wean: 'none', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'pneumothorax-oxygen', // BTS 2017 Table 2 (V): reservoir mask 15 L/min
    facts: (o) => buildFacts({ orders: [oxygenOrder(o)], conditions: [condition('pneumothorax')] }),
    expected: { titrate: 'change', comfort: 'none', wean: 'none', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'cluster-headache-oxygen', // BTS 2017 (V2): 12-15 L/min reservoir mask
    facts: (o) => buildFacts({ orders: [oxygenOrder(o)], conditions: [condition('cluster-headache')] }),
    expected: { titrate: 'change', comfort: 'none', wean: 'none', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'carbon-monoxide-oximetry', // BTS 2017 Table 1 (V): as much oxygen as possible
    facts: (o) => buildFacts({ orders: [oxygenOrder(o)], conditions: [condition('carbon-monoxide-poisoning')] }),
    expected: { titrate: 'change', comfort: 'card', wean: 'card', stop: 'card', 'room-air': 'card' },
  },
  {
    ruleId: 'flow-outside-device-range', // BTS 2017 Table 2 (V): simple face mask 5-10 L/min
    facts: (o) => buildFacts({ orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 3, ...o })] }),
    expected: { titrate: 'change', comfort: 'card', wean: 'card', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'venturi-flow-insufficient', // BTS 2017 Table 4 (V): 28 % at 4 L/min
    facts: (o) => buildFacts({ orders: [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 2, ...o })] }),
    expected: { titrate: 'change', comfort: 'card', wean: 'card', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'no-recent-spo2', // BTS 2017 (V): oxygen titrated against SpO2
    facts: (o) => buildFacts({ orders: [oxygenOrder(o)] }),
    expected: { titrate: 'card', comfort: 'none', wean: 'card', stop: 'card', 'room-air': 'card' },
  },
  {
    ruleId: 'duplicate-oxygen-order', // duplicate prescription checking (common practice)
    facts: (o) => buildFacts({ orders: [oxygenOrder(o)], activeOrders: [activeOrder()] }),
    expected: { titrate: 'card', comfort: 'card', wean: 'card', stop: 'none', 'room-air': 'none' },
  },
  {
    ruleId: 'oxygen-without-hypoxaemia', // BTS 2017 Table 3 (V): stroke, oxygen only if hypoxaemic
    facts: (o) => buildFacts({ orders: [oxygenOrder(o)], conditions: stroke, spo2Percent: [spo2(97)], fio2Fraction: [fio2(0.21)] }),
    expected: { titrate: 'card', comfort: 'none', wean: 'none', stop: 'none', 'room-air': 'none' },
  },
];

describe('what each rule does for each purpose', () => {
  const cases = TABLE.flatMap(({ ruleId, facts, expected }) =>
    (Object.keys(expected) as OrderPurpose[]).map((purpose) => [ruleId, purpose, expected[purpose], facts] as const),
  );
  it.each(cases)('%s for a %s order: %s', (ruleId, purpose, expected, facts) => {
    const rule = RULES.find((r) => r.id === ruleId);
    if (rule === undefined) {
      throw new Error(`${ruleId} is not registered`);
    }
    const findings = runRule(rule, facts({ purpose }));
    const got = findings.length === 0 ? 'none' : findings.some((f) => f.change !== undefined) ? 'change' : 'card';
    expect(got).toBe(expected);
  });
});
