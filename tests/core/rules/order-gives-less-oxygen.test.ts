import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/order-gives-less-oxygen.js';
import { RULES } from '../../../src/core/rules/index.js';
import type { DeviceKind, OxygenOrder } from '../../../src/core/types.js';
import { activeOrder, buildFacts, condition, fio2, o2Flow, oxygenOrder, spo2 } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

// Invented Larkspur Bay General Hospital patients. The target is 94–98 % (BTS 2017, Tables 1–3)
// unless a test says otherwise.
const reservoirOnRecord = activeOrder({ device: 'reservoir-mask', flowLPerMin: 15 }); // BTS 2017, Table 2: 15 L/min
const draftCannula2 = oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 2 }); // BTS 2017, Table 2: NC 2–6 L/min

describe('order-gives-less-oxygen', () => {
  it('runs on order-sign as a warning by default, after spo2-below-target in the registry', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
    const ids = RULES.map((r) => r.id);
    expect(ids.indexOf(rule.id)).toBe(ids.indexOf('spo2-below-target') + 1);
  });

  it('fires for a nasal cannula at 2 L/min drafted while a reservoir mask runs and SpO2 is 91 %', () => {
    // BTS 2017 summary: below the target range calls for more oxygen and review; weaning only in range (from memory).
    // Reservoir mask FiO2 0.60–0.90 vs nasal cannula 2 L/min about 0.28 (check-values.md §2a).
    const facts = buildFacts({ orders: [draftCannula2], activeOrders: [reservoirOnRecord], spo2Percent: [spo2(91)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning'); // 3 points below 94 %: not more than 4 (local choice, based-on-bts-2017.yaml)
    expect(finding.change).toBeUndefined(); // no suggestion: the right oxygen depends on the patient
    expect(finding.values.onNow).toContain('Reservoir mask');
    expect(finding.values.orderDescription).toBe('Nasal cannula at 2 L/min');
    expect(finding.values.targetRange).toBe('94–98 %'); // BTS 2017, Tables 1–3
    const card = expectCardRenders(finding);
    expect(card.summary).toContain('less oxygen');
    expect(card.detail).toContain('Reservoir mask');
    expect(card.detail).toContain('Consider keeping the');
  });

  it('fires for the same draft when FiO2 0.60 is charted at the reading', () => {
    // FiO2 0.60 charted vs NC 2 L/min, about 0.28 (check-values.md §2a "rule of 4", common practice)
    const facts = buildFacts({ orders: [draftCannula2], spo2Percent: [spo2(91, 10)], fio2Fraction: [fio2(0.6, 5)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.onNow).toContain('FiO2 0.60');
    expectCardRenders(finding);
  });

  it('ignores an FiO2 recorded before the SpO2 reading (what ran then may have changed)', () => {
    const facts = buildFacts({ orders: [draftCannula2], spo2Percent: [spo2(91, 10)], fio2Fraction: [fio2(0.6, 30)] });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('fires for a nasal cannula drafted for a patient on high flow (a lower tier)', () => {
    // Device tiers: conventional < high flow < CPAP/NIV (devices/device-tier.ts; FLORALI, from memory).
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 6 })],
      activeOrders: [activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 40, setFio2Fraction: 0.3 })],
      spo2Percent: [spo2(92)],
    });
    expect(onlyFinding(runRule(rule, facts)).values.because).toBe('it is a lower level of support');
  });

  it('fires for a lower flow on the same device', () => {
    // Nasal cannula 4 → 2 L/min: FiO2 about 0.36 → 0.28 (check-values.md §2a, rule of 4, common practice)
    const facts = buildFacts({
      orders: [draftCannula2],
      activeOrders: [activeOrder({ device: 'nasal-cannula', flowLPerMin: 4 })],
      spo2Percent: [spo2(92)],
    });
    expect(onlyFinding(runRule(rule, facts)).values.because).toBe('a lower flow on the same device');
  });

  it('fires for a lower flow than the one recorded on the device already on record', () => {
    const facts = buildFacts({
      orders: [draftCannula2],
      activeOrders: [activeOrder({ device: 'nasal-cannula', flowLPerMin: 2 })],
      o2FlowLPerMin: [o2Flow(4, 10)],
      spo2Percent: [spo2(92)],
    });
    expect(onlyFinding(runRule(rule, facts)).values.because).toBe('a lower flow on the same device');
  });

  it.each(['stop', 'room-air', 'wean'] as const)('fires for a %s order while oxygen runs below target', (purpose) => {
    // BTS 2017: stop or wean only when stable in the target range (from memory).
    const order = oxygenOrder({ purpose, device: undefined, flowLPerMin: undefined, target: undefined });
    const facts = buildFacts({
      orders: [order],
      activeOrders: [activeOrder({ device: 'nasal-cannula', flowLPerMin: 3 })],
      spo2Percent: [spo2(92)],
    });
    expectCardRenders(onlyFinding(runRule(rule, facts)));
  });

  it('stays silent for comfort oxygen (BTS 2017: terminal care, no saturation target)', () => {
    const facts = buildFacts({
      orders: [oxygenOrder({ purpose: 'comfort', flowLPerMin: 1 })],
      activeOrders: [reservoirOnRecord],
      spo2Percent: [spo2(88)],
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('stays silent where no SpO2 target applies (carbon monoxide: BTS 2017)', () => {
    const facts = buildFacts({
      orders: [draftCannula2],
      activeOrders: [reservoirOnRecord],
      conditions: [condition('carbon-monoxide-poisoning')],
      spo2Percent: [spo2(91)],
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it.each([
    [94, false], // at the lower bound of 94–98 %: in range (BTS 2017, Tables 1–3)
    [93, true], // one point below: below target
  ])('with SpO2 %s %% against 94–98 %% fires: %s', (value, fires) => {
    const facts = buildFacts({ orders: [draftCannula2], activeOrders: [reservoirOnRecord], spo2Percent: [spo2(value)] });
    expect(runRule(rule, facts).length).toBe(fires ? 1 : 0);
  });

  it.each([
    [90, 'warning'], // 4 points below 94 %: not more than 4 (criticalPointsBelowTarget, local choice)
    [89, 'critical'], // 5 points below: more than 4 (local choice)
    [85, 'critical'], // 85 %: not below 85 % but 9 points below (BTS 2017, Table 2; local choice)
  ])('grades SpO2 %s %% against 94–98 %% as %s', (value, indicator) => {
    const facts = buildFacts({ orders: [draftCannula2], activeOrders: [reservoirOnRecord], spo2Percent: [spo2(value)] });
    expect(onlyFinding(runRule(rule, facts)).indicator).toBe(indicator);
  });

  it.each([
    [85, 'warning'], // 3 points below 88 %, not below 85 % (BTS 2017, Tables 2 and 4; local choice)
    [84, 'critical'], // below 85 % (BTS 2017, Table 2)
  ])('at-risk patient, 88–92 percent, 24 percent Venturi for 28: SpO2 %s is %s', (value, indicator) => {
    const atRisk = { lowPercent: 88, highPercent: 92, readFrom: 'structured' as const }; // BTS 2017, Table 4
    const facts = buildFacts({
      // BTS 2017, Table 4: 24 % Venturi at 2 L/min, 28 % at 4 L/min; a lower setting on the same device
      orders: [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: 0.24, flowLPerMin: 2, target: atRisk })],
      activeOrders: [activeOrder({ device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 4, target: atRisk })],
      conditions: [condition('copd')],
      spo2Percent: [spo2(value)],
    });
    expect(onlyFinding(runRule(rule, facts)).indicator).toBe(indicator);
  });

  it('stays silent when SpO2 is in range, even for a reduction (weaning is allowed in range)', () => {
    // BTS 2017: reduce oxygen when stable in or above the target range (from memory)
    const facts = buildFacts({ orders: [draftCannula2], activeOrders: [reservoirOnRecord], spo2Percent: [spo2(96)] });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it.each<[string, OxygenOrder]>([
    ['more: a reservoir mask at 15 L/min', oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })],
    ['the same: nasal cannula at 4 L/min', oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 4 })],
    ['more: nasal cannula at 6 L/min', oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 6 })],
  ])('stays silent when the order gives %s against nasal cannula 4 L/min', (_label, order) => {
    // BTS 2017, Table 2: more oxygen is the response below target
    const facts = buildFacts({
      orders: [order],
      activeOrders: [activeOrder({ device: 'nasal-cannula', flowLPerMin: 4 })],
      spo2Percent: [spo2(91)],
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('does not read a reduction into estimate noise: a simple face mask at 5 L/min against nasal cannula 4 L/min', () => {
    // Simple face mask 5 L/min about 0.35–0.40 vs nasal cannula 4 L/min about 0.36 (check-values.md §2a,
    // Therapeutic Guidelines; rule of 4, common practice): the ranges overlap, so nobody can say "less".
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 5 })],
      activeOrders: [activeOrder({ device: 'nasal-cannula', flowLPerMin: 4 })],
      spo2Percent: [spo2(91)],
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('does not read a reduction into an FiO2 recorded within the order range', () => {
    // Nasal cannula 2 L/min about 0.28 (rule of 4, common practice); FiO2 0.28 recorded: the same oxygen
    const facts = buildFacts({ orders: [draftCannula2], spo2Percent: [spo2(91, 10)], fio2Fraction: [fio2(0.28, 5)] });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('stays silent when nothing shows what the patient is on now', () => {
    const facts = buildFacts({ orders: [draftCannula2], spo2Percent: [spo2(91)] });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('fires for every order on a lower tier, for generated patients below target on some support', () => {
    // Device tiers (devices/device-tier.ts): conventional < high flow < CPAP/NIV (FLORALI, from memory;
    // common practice). BTS 2017 summary: below target calls for more oxygen, never less.
    const conventional: readonly DeviceKind[] = ['nasal-cannula', 'simple-face-mask', 'venturi-mask', 'reservoir-mask', 'tracheostomy-mask'];
    const onSupport = fc.record({
      current: fc.constantFrom<DeviceKind>('high-flow-nasal-cannula', 'cpap-niv'),
      spo2Percent: fc.integer({ min: 70, max: 93 }), // below 94–98 % (BTS 2017, Tables 1–3)
      currentFio2: fc.constantFrom(0.3, 0.4, 0.5, 0.6),
      drafted: fc.constantFrom(...conventional, 'high-flow-nasal-cannula' as DeviceKind),
      draftedFlow: fc.integer({ min: 1, max: 15 }),
    });
    fc.assert(
      fc.property(onSupport, (g) => {
        const lowerTier = g.current === 'cpap-niv' ? g.drafted !== 'cpap-niv' : conventional.includes(g.drafted);
        fc.pre(lowerTier);
        const facts = buildFacts({
          orders: [oxygenOrder({ device: g.drafted, flowLPerMin: g.draftedFlow, setFio2Fraction: g.drafted === 'venturi-mask' ? 0.28 : undefined })],
          activeOrders: [activeOrder({ device: g.current, flowLPerMin: g.current === 'cpap-niv' ? 4 : 40, setFio2Fraction: g.currentFio2 })],
          spo2Percent: [spo2(g.spo2Percent)],
        });
        const findings = runRule(rule, facts);
        expect(findings.length, `${g.drafted} for a patient on ${g.current}, SpO2 ${g.spo2Percent} %`).toBe(1);
      }),
      { seed: 20261204, numRuns: 200 },
    );
  });
});
