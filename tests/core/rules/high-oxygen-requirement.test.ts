import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/high-oxygen-requirement.js';
import type { DeviceKind } from '../../../src/core/types.js';
import { BTS, activeOrder, buildFacts, condition, fio2, minutesAgo, oxygenOrder, respRate, spo2 } from '../facts-builder.js';
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
    ['cpap-niv', 10, undefined], // BTS/ICS 2016: CPAP or NIV is respiratory support
  ])('fires for %s whatever the estimate', (device, flow, set) => {
    const facts = buildFacts({ orders: [oxygenOrder({ device, flowLPerMin: flow, setFio2Fraction: set })] });
    const finding = onlyFinding(runRule(rule, facts));
    expectCardRenders(finding);
  });

  it('judges high flow by its set FiO2: 0.35 while weaning is no high requirement, 0.45 is', () => {
    // policy thresholds.highOxygenFio2AtLeast 0.40 (local choice); high flow delivers its set FiO2 (check-values 2a)
    const on = (set: number) => buildFacts({ orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 40, setFio2Fraction: set })] });
    expect(runRule(rule, on(0.35))).toStrictEqual([]);
    expect(onlyFinding(runRule(rule, on(0.45))).indicator).toBe('warning');
  });

  it('is information, advising a step down, when SpO2 is above the target on a reservoir mask', () => {
    // BMJ 2018: keep SpO2 at or below 96 %; BTS 2017: lower oxygen above the target range
    const facts = buildFacts({ orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })], spo2Percent: [spo2(100)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('info');
    expect(expectCardRenders(finding).summary).toBe(
      'Reservoir mask at 15 L/min: high-concentration oxygen with SpO2 above target, consider stepping down',
    );
  });

  it('calls CPAP or NIV at a low FiO2 respiratory support, not a high oxygen requirement', () => {
    // NIV and CPAP are ventilatory or pressure support under their own protocol (BTS/ICS 2016)
    const facts = buildFacts({ orders: [oxygenOrder({ device: 'cpap-niv', flowLPerMin: undefined, setFio2Fraction: 0.35 })] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning');
    expect(expectCardRenders(finding).summary).toBe('CPAP or NIV FiO2 0.35: respiratory support, consider senior review');
  });

  it.each([
    // Roca 2019 (check-values 3e, V): ROX < 2.85 at 2 h, < 3.47 at 6 h, < 3.85 at 12 h predict failure.
    // SpO2 within 94-98 % (BTS 2017 Tables 1-3): a low ROX from the breathing rate, not a low SpO2.
    [2, 94, 0.9, 38, 'ROX 2.75 after 2 h, below the 2.85 failure threshold'], // (94 / 0.9) / 38 = 2.75
    [6, 95, 0.8, 35, 'ROX 3.39 after 6 h, below the 3.47 failure threshold'], // (95 / 0.8) / 35 = 3.39
    [12, 94, 0.7, 35, 'ROX 3.84 after 12 h, below the 3.85 failure threshold'], // (94 / 0.7) / 35 = 3.84
  ])('is critical on high flow at %s h when ROX is below the Roca failure threshold', (hours, sat, f, rr, concern) => {
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: f })],
      activeOrders: [activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.6, authoredOn: minutesAgo(hours * 60) })],
      spo2Percent: [spo2(sat)],
      fio2Fraction: [fio2(f)],
      respRatePerMin: [respRate(rr)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('critical');
    expect(finding.values.concern).toBe(concern);
    expect(finding.sourceKeys).toContain('roca-2019');
    expect(expectCardRenders(finding).summary.startsWith('High-flow nasal cannula')).toBe(true);
  });

  it('uses the strictest ROX threshold, and says so, when the start of high flow is unknown', () => {
    // Roca 2019: (95 / 0.7) / 36 = 3.77, above the 2-h (2.85) and 6-h (3.47) thresholds but below the
    // 12-h one (3.85), the strictest, used when the start is unknown
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.7 })],
      activeOrders: [activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.7, authoredOn: undefined })],
      spo2Percent: [spo2(95)],
      respRatePerMin: [respRate(36)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('critical');
    expect(finding.values.concern).toBe('ROX 3.77, below the 3.85 failure threshold (start unknown)');
    expect(expectCardRenders(finding).detail).toContain('the 12-h threshold, 3.85, the strictest, was used');
  });

  it('leaves a high-flow patient below target at FiO2 0.6 or more to escalated-support-failing', () => {
    // One card says one thing: 86 % below 94-98 % (BTS 2017) at FiO2 0.8 (policy 0.6, local choice)
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.8 })],
      activeOrders: [activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.8, authoredOn: minutesAgo(360) })],
      spo2Percent: [spo2(86)],
      fio2Fraction: [fio2(0.8)],
      respRatePerMin: [respRate(33)],
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('stays a warning on high flow when ROX is not below the failure threshold', () => {
    // Roca 2019: (92 / 0.5) / 30 = 6.13, at or above 4.88 (check-values 3e)
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.5 })],
      activeOrders: [activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.5, authoredOn: minutesAgo(360) })],
      spo2Percent: [spo2(92)],
      fio2Fraction: [fio2(0.5)],
      respRatePerMin: [respRate(30)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning');
    expect(finding.values.concern).toBe('high oxygen requirement');
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
