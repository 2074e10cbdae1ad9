import { describe, expect, it } from 'vitest';
import { estimateOrderDelivery } from '../../../src/core/assessment/build-assessment.js';
import { pickCurrentValues } from '../../../src/core/assessment/current-values.js';
import { buildAssessment } from '../../../src/core/assessment/build-assessment.js';
import { deliveryAtRecordedFlows, fio2InForceAt } from '../../../src/core/assessment/fio2-in-force.js';
import { estimateDelivery } from '../../../src/core/devices/index.js';
import type { Facts } from '../../../src/core/types.js';
import { BTS, NOW, bloodGas, buildFacts, fio2, minutesAgo, o2Flow, oxygenOrder, respRate, spo2 } from '../facts-builder.js';

function at(facts: Facts, time: string) {
  const order = facts.orders[0];
  const delivery = estimateOrderDelivery(order, pickCurrentValues(facts, BTS, NOW));
  return fio2InForceAt(time, facts, order, delivery, BTS);
}

describe('fio2InForceAt', () => {
  it('prefers the recorded FiO2 nearest the measurement time', () => {
    const facts = buildFacts({ fio2Fraction: [fio2(0.28, 10), fio2(0.35, 100)] });
    const result = at(facts, minutesAgo(90));
    expect(result).toStrictEqual({
      kind: 'ok',
      value: {
        estimate: 0.35,
        low: 0.35,
        high: 0.35,
        basis: 'recorded-fio2',
        at: minutesAgo(100),
        onAir: false,
        source: 'recorded',
        delivery: undefined,
      },
    });
  });

  it('reads a recorded FiO2 of 0.21 as room air', () => {
    // Room air 0.21 (common practice)
    const result = at(buildFacts({ fio2Fraction: [fio2(0.21, 20)] }), minutesAgo(15));
    expect(result.kind === 'ok' && result.value.onAir).toBe(true);
  });

  it('reads a recorded flow of 0 L/min as room air', () => {
    const result = at(buildFacts({ o2FlowLPerMin: [o2Flow(0, 20)] }), minutesAgo(15));
    expect(result).toMatchObject({ kind: 'ok', value: { estimate: 0.21, basis: 'recorded-flow', onAir: true } });
  });

  it('estimates from a recorded flow on the ordered device when no FiO2 is recorded', () => {
    // Nasal cannula 4 L/min ≈ 0.36 ± 0.05 (check-values 2a, rule of 4: common practice / V2)
    const facts = buildFacts({ orders: [oxygenOrder({ flowLPerMin: 2 })], o2FlowLPerMin: [o2Flow(4, 30)] });
    const result = at(facts, minutesAgo(30));
    expect(result.kind).toBe('ok');
    if (result.kind !== 'ok') return;
    expect(result.value.basis).toBe('recorded-flow');
    expect(result.value.estimate).toBeCloseTo(0.36, 1);
  });

  it('falls back to the order estimate and says so', () => {
    // Nasal cannula 2 L/min ≈ 0.28 ± 0.05 (check-values 2a, rule of 4: common practice / V2)
    const result = at(buildFacts(), minutesAgo(30));
    expect(result.kind === 'ok' && result.value.basis).toBe('order-estimate');
    expect(result.kind === 'ok' && Math.abs(result.value.estimate - 0.28) <= 0.05).toBe(true);
  });

  describe('edge cases', () => {
    it('ignores observations further than the vital-signs window from the measurement', () => {
      const facts = buildFacts({ fio2Fraction: [fio2(0.4, 10)] });
      const result = at(facts, minutesAgo(10 + BTS.freshness.vitalSignsMinutes + 1));
      expect(result.kind === 'ok' && result.value.basis).toBe('order-estimate');
    });

    it('breaks a tie in favour of the earlier observation', () => {
      const facts = buildFacts({ fio2Fraction: [fio2(0.4, 20), fio2(0.28, 40)] });
      const result = at(facts, minutesAgo(30));
      expect(result.kind === 'ok' && result.value.estimate).toBe(0.28);
    });

    it('is unknown without a time or any source of FiO2', () => {
      const facts = buildFacts({ orders: [oxygenOrder({ device: undefined, deviceText: 'O2 via mask' })] });
      expect(at(facts, minutesAgo(5)).kind).toBe('unknown');
      expect(fio2InForceAt(undefined, facts, facts.orders[0], { kind: 'unknown', reason: 'x' }, BTS)).toStrictEqual({
        kind: 'unknown',
        reason: 'no measurement time to match an FiO2 to',
      });
    });
  });

  describe('estimates at recorded flows', () => {
    it('works out each recorded flow once, at the order estimate\'s breathing rate, and gives the order estimate at its own flow', () => {
      const facts = buildFacts({ orders: [oxygenOrder({ flowLPerMin: 2 })], respRatePerMin: [respRate(28)] });
      const order = facts.orders[0];
      const delivery = estimateOrderDelivery(order, pickCurrentValues(facts, BTS, NOW));
      expect(delivery.kind === 'ok' && delivery.value.respRatePerMin).toBe(28);
      const atFlow = deliveryAtRecordedFlows(order, delivery, []);
      const atFour = atFlow(4);
      // Nasal cannula 4 L/min ≈ 0.36 ± 0.05 (check-values 2a, rule of 4: common practice / V2)
      expect(atFour.kind === 'ok' && Math.abs(atFour.value.fio2.estimate - 0.36) <= 0.05).toBe(true);
      expect(atFour).toStrictEqual(estimateDelivery('nasal-cannula', { flowLPerMin: 4, respRatePerMin: 28 }));
      expect(atFlow(4)).toBe(atFour);
      expect(atFlow(2)).toBe(delivery);
      expect(atFlow(3)).not.toStrictEqual(atFour);
    });

    it('is unknown at any flow when the ordered device is not recognised', () => {
      const order = oxygenOrder({ device: undefined, deviceText: 'O2 via mask' });
      expect(deliveryAtRecordedFlows(order, { kind: 'unknown', reason: 'x' }, [])(4)).toStrictEqual({
        kind: 'unknown',
        reason: 'device not recognised',
      });
    });

    it('gives a gas and an SpO2 read at one recorded flow the same estimate, unlike the order\'s own', () => {
      // Nasal cannula 4 L/min ≈ 0.36 and 2 L/min ≈ 0.28, each ± 0.05 (check-values 2a, rule of 4: common practice / V2)
      const facts = buildFacts({
        orders: [oxygenOrder({ flowLPerMin: 2, authoredOn: minutesAgo(5) })],
        o2FlowLPerMin: [o2Flow(4, 30)],
        spo2Percent: [spo2(93, 25)],
        bloodGases: [bloodGas({ ageMinutes: 35, ph: 7.4, paco2Kpa: 5.3, pao2Kpa: 9 })],
      });
      const { physiology, delivery } = buildAssessment(facts, BTS, { now: NOW });
      const { fio2AtGas, fio2AtSpo2 } = physiology;
      expect(fio2AtGas.kind === 'ok' && fio2AtGas.value.basis).toBe('recorded-flow');
      expect(fio2AtSpo2.kind === 'ok' && fio2AtSpo2.value.basis).toBe('recorded-flow');
      const atGas = fio2AtGas.kind === 'ok' ? fio2AtGas.value.delivery : undefined;
      expect(atGas).toBeDefined();
      expect(fio2AtSpo2.kind === 'ok' && fio2AtSpo2.value.delivery).toBe(atGas);
      expect(atGas?.fio2.estimate).toBeCloseTo(0.36, 1);
      expect(delivery.kind === 'ok' && delivery.value.fio2.estimate).toBeCloseTo(0.28, 1);
    });
  });
});
