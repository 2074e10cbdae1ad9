import { describe, expect, it } from 'vitest';
import { advisorySeries, DEVICE_NOT_RECORDED, ROOM_AIR } from '../../src/cds/advisory-series.js';
import { buildAssessment } from '../../src/core/assessment/build-assessment.js';
import type { Facts } from '../../src/core/types.js';
import {
  activeOrder,
  BTS,
  buildFacts,
  condition,
  fio2,
  minutesAgo,
  NOW,
  o2Flow,
  oxygenOrder,
  spo2,
} from '../core/facts-builder.js';

/** The series of the card about the draft order, as evaluate-hook builds it. */
function seriesOf(facts: Facts) {
  const order = facts.orders.find((o) => o.isSubject);
  return advisorySeries(facts, buildAssessment(facts, BTS, { now: NOW, order }), NOW);
}

const at = (ageMinutes: number): string => minutesAgo(ageMinutes);

describe('advisorySeries', () => {
  it('plots each SpO2 reading once, oldest first, from the trend and the current window together', () => {
    const facts = buildFacts({
      spo2Percent: [spo2(95, 10), spo2(93, 40)],
      trendReadings: { spo2Percent: [spo2(95, 10), spo2(93, 40), spo2(90, 180)], fio2Fraction: [], o2FlowLPerMin: [] },
    });
    expect(seriesOf(facts).spo2).toStrictEqual([
      { at: at(180), spo2Percent: 90 },
      { at: at(40), spo2Percent: 93 },
      { at: at(10), spo2Percent: 95 },
    ]);
  });

  it('counts readings as one when they agree in instant and value, however the time is written', () => {
    // The values only mark the points: the test is about merging the two windows, not about a threshold.
    const tenAgo = spo2(95, 10);
    // The same instant with a UTC offset instead of Z (ISO 8601; FHIR dateTime allows either).
    const sameInstant = { ...tenAgo, at: tenAgo.at.replace('Z', '+00:00') };
    const otherValue = { ...tenAgo, value: 94 };
    const facts = buildFacts({
      spo2Percent: [sameInstant],
      trendReadings: { spo2Percent: [tenAgo, otherValue, spo2(93, 40)], fio2Fraction: [], o2FlowLPerMin: [] },
    });
    expect(seriesOf(facts).spo2).toStrictEqual([
      { at: at(40), spo2Percent: 93 },
      { at: at(10), spo2Percent: 94 },
      { at: at(10), spo2Percent: 95 },
    ]);
  });

  it('gives recorded flows and FiO2 one step per time, with the recorded device, then the ordered setting now', () => {
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 })],
      activeOrders: [activeOrder({ device: 'nasal-cannula' })],
      o2FlowLPerMin: [o2Flow(2, 30)],
      fio2Fraction: [fio2(0.28, 5)],
      trendReadings: { spo2Percent: [], fio2Fraction: [fio2(0.28, 5)], o2FlowLPerMin: [o2Flow(2, 30), o2Flow(0, 240)] },
    });
    expect(seriesOf(facts).oxygen).toStrictEqual([
      // no flow and no FiO2 above air's 0.21 (common practice): room air
      { at: at(240), device: ROOM_AIR, flowLPerMin: 0 },
      { at: at(30), device: 'Nasal cannula', flowLPerMin: 2 },
      { at: at(5), device: 'Nasal cannula', fio2Fraction: 0.28 },
      { at: NOW.toISOString(), device: 'Venturi mask', flowLPerMin: 4, fio2Fraction: 0.28 },
    ]);
  });

  it('says the device was not recorded when the record names none, or two', () => {
    const none = buildFacts({ o2FlowLPerMin: [o2Flow(3, 20)] });
    const two = buildFacts({
      activeOrders: [activeOrder({ device: 'nasal-cannula' }), activeOrder({ reference: 'MedicationRequest/o2-active-2', device: 'simple-face-mask' })],
      o2FlowLPerMin: [o2Flow(3, 20)],
    });
    expect(seriesOf(none).oxygen[0]?.device).toBe(DEVICE_NOT_RECORDED);
    expect(seriesOf(two).oxygen[0]?.device).toBe(DEVICE_NOT_RECORDED);
  });

  it('bands the chart with the range the card judged against: 88-92 % for a patient at risk of hypercapnia', () => {
    const atRisk = buildFacts({
      orders: [oxygenOrder({ target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })],
      conditions: [condition('copd')],
    });
    // BTS 2017 Table 4: 88-92 % for patients at risk of hypercapnic respiratory failure
    expect(seriesOf(atRisk).target).toStrictEqual({ lowPercent: 88, highPercent: 92 });
    // BTS 2017: 94-98 % for most acutely ill patients
    expect(seriesOf(buildFacts()).target).toStrictEqual({ lowPercent: 94, highPercent: 98 });
  });

  describe('edge cases', () => {
    it('stores no order text: an unrecognised device is named as such, and a stop order as room air', () => {
      const odd = buildFacts({ orders: [oxygenOrder({ device: undefined, deviceText: 'Mr Harrowgate own mask' })] });
      expect(JSON.stringify(seriesOf(odd))).not.toContain('Harrowgate');
      expect(seriesOf(odd).oxygen.at(-1)?.device).toBe('unrecognised device');
      const stop = buildFacts({ orders: [oxygenOrder({ purpose: 'stop', flowLPerMin: undefined })] });
      expect(seriesOf(stop).oxygen.at(-1)).toStrictEqual({ at: NOW.toISOString(), device: ROOM_AIR });
    });

    it('leaves out a reading whose time cannot be read, rather than plot it anywhere', () => {
      const facts = buildFacts({ spo2Percent: [{ ...spo2(94, 10), at: 'not a time' }, spo2(92, 20)] });
      expect(seriesOf(facts).spo2).toStrictEqual([{ at: at(20), spo2Percent: 92 }]);
    });
  });
});
