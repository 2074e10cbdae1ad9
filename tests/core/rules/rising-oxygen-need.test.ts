import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/rising-oxygen-need.js';
import type { Facts, Measured } from '../../../src/core/types.js';
import {
  BTS,
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

// Invented patients on the Larkspur Bay General Hospital medical ward (demo). The trend window is the
// policy's oxygenNeedTrendMinutes (360, local choice), the fall threshold spo2FallPoints (3: BTS 2017
// summary, a fall of >= 3 % triggers reassessment, check-values 1a, verified). Ages in minutes.
const onCannula = { activeOrders: [activeOrder({ device: 'nasal-cannula', flowLPerMin: 2, authoredOn: minutesAgo(600) })] };
const series = (make: (v: number, age: number) => Measured, points: readonly (readonly [number, number])[]): Measured[] =>
  points.map(([value, age]) => make(value, age)).sort((a, b) => Date.parse(b.at) - Date.parse(a.at));

describe('rising-oxygen-need', () => {
  it('runs on order-sign and on patient-view as a warning', () => {
    expect(rule.hooks).toStrictEqual(['order-sign', 'patient-view']);
    expect(rule.defaultIndicator).toBe('warning');
    expect(BTS.thresholds.oxygenNeedTrendMinutes).toBe(360);
    expect(BTS.thresholds.spo2FallPoints).toBe(3);
  });

  it('fires when the flow rose 2 → 4 → 6 L/min on a cannula with SpO2 steady, and says what changed and when', () => {
    // A rising oxygen requirement calls for fuller assessment (BTS 2017, from memory)
    const facts = buildFacts({
      ...onCannula,
      o2FlowLPerMin: series(o2Flow, [[2, 300], [4, 180], [6, 20]]),
      spo2Percent: series(spo2, [[95, 300], [94, 180], [94, 20]]),
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning');
    expect(finding.orderReference).toBeUndefined();
    expect(finding.values.oxygenChange).toBe('recorded O2 flow (nasal cannula throughout) rose from 2 L/min (5 h ago) to 6 L/min (20 min ago)');
    expect(finding.values.spo2Change).toBe('SpO2 went from 95 % (5 h ago) to 94 % (20 min ago)');
    expect(expectCardRenders(finding).summary).toBe('Rising oxygen need: more oxygen (2 L/min → 6 L/min) over 5 h for SpO2 95 % → 94 %. Review the patient');
  });

  it('fires when SpO2 fell 96 → 92 % on unchanged oxygen', () => {
    // BTS 2017 summary: a fall of >= 3 % (here 4) triggers reassessment, even within range
    const facts = buildFacts({ ...onCannula, spo2Percent: series(spo2, [[96, 200], [92, 15]]) });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.oxygenChange).toBe('oxygen unchanged (one order on record throughout, no setting recorded)');
    expect(expectCardRenders(finding).summary).toBe('Rising oxygen need: SpO2 fell 96 % → 92 % over 3 h 20 min on unchanged oxygen. Review the patient');
  });

  it('fires when recorded FiO2 rose, whatever devices the orders name', () => {
    // Recorded FiO2 (LOINC 3150-0) compares across devices; 0.28 → 0.40 with SpO2 93 → 92 %
    const facts = buildFacts({
      activeOrders: [
        activeOrder({ device: 'venturi-mask', setFio2Fraction: 0.28 }),
        activeOrder({ reference: 'MedicationRequest/o2-active-2', device: 'simple-face-mask', flowLPerMin: 6 }),
      ],
      fio2Fraction: series(fio2, [[0.28, 240], [0.4, 30]]),
      spo2Percent: series(spo2, [[93, 240], [92, 30]]),
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.oxygenChange).toBe('recorded FiO2 rose from 0.28 (4 h ago) to 0.40 (30 min ago)');
    expect(expectCardRenders(finding).summary).toBe('Rising oxygen need: more oxygen (FiO2 0.28 → 0.40) over 4 h for SpO2 93 % → 92 %. Review the patient');
  });

  it('does not fire for a weaning patient: less oxygen, SpO2 a little lower but in range', () => {
    // Weaning 4 → 2 L/min with SpO2 97 → 94 %: the expected response, not a rising need (BTS 2017)
    const facts = buildFacts({
      ...onCannula,
      o2FlowLPerMin: series(o2Flow, [[4, 300], [3, 150], [2, 30]]),
      spo2Percent: series(spo2, [[97, 300], [95, 150], [94, 30]]),
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it.each([
      // BTS 2017 summary: a fall of >= 3 points; 2 points does not, 3 does
      [96, 94, false],
      [96, 93, true],
    ])('SpO2 %s → %s on unchanged oxygen: fires %s', (from, to, fires) => {
      const facts = buildFacts({ ...onCannula, spo2Percent: series(spo2, [[from, 120], [to, 10]]) });
      expect(runRule(rule, facts).length).toBe(fires ? 1 : 0);
    });

    it.each([
      // Window 360 min (local choice): a reading at the window's end counts, one beyond it does not
      [360, true],
      [361, false],
    ])('compares with a first SpO2 %s min ago: fires %s', (age, fires) => {
      const facts = buildFacts({ activeOrders: [activeOrder({ authoredOn: minutesAgo(600) })], spo2Percent: series(spo2, [[97, age], [93, 10]]) });
      expect(runRule(rule, facts).length).toBe(fires ? 1 : 0);
    });

    it('counts more oxygen with one SpO2 reading in the window: a rise cannot be seen', () => {
      // A rising requirement calls for fuller assessment (BTS 2017, from memory)
      const facts = buildFacts({ ...onCannula, o2FlowLPerMin: series(o2Flow, [[2, 200], [5, 20]]), spo2Percent: [spo2(95)] });
      expect(onlyFinding(runRule(rule, facts)).values.spo2Change).toBe('SpO2 95 % (10 min ago), the only reading in the window');
    });

    it('does not count a more-oxygen change that lifted SpO2 by 3 points or more', () => {
      // 2 → 4 L/min raising SpO2 91 → 95 %: titration to target (BTS 2017), not more oxygen for the same saturation
      const facts = buildFacts({ ...onCannula, o2FlowLPerMin: series(o2Flow, [[2, 200], [4, 20]]), spo2Percent: series(spo2, [[91, 200], [95, 10]]) });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('ignores noise: a single reading, and a flow that went up and came back', () => {
      expect(runRule(rule, buildFacts({ ...onCannula, o2FlowLPerMin: [o2Flow(4, 20)], spo2Percent: [spo2(95)] }))).toStrictEqual([]);
      const upAndBack = buildFacts({ ...onCannula, o2FlowLPerMin: series(o2Flow, [[2, 300], [4, 150], [2, 20]]), spo2Percent: series(spo2, [[95, 300], [95, 20]]) });
      expect(runRule(rule, upAndBack)).toStrictEqual([]);
      const spo2Blip = buildFacts({ ...onCannula, spo2Percent: series(spo2, [[96, 300], [90, 150], [96, 20]]) });
      expect(runRule(rule, spo2Blip)).toStrictEqual([]);
    });

    it('does not compare flows when the device is not known to be one throughout', () => {
      // Nasal cannula 2 L/min to a 24 % Venturi at 3 L/min is less oxygen at a higher flow (BTS 2017 Table 4)
      const twoDevices = { activeOrders: [activeOrder({ device: 'nasal-cannula' }), activeOrder({ reference: 'MedicationRequest/o2-active-2', device: 'venturi-mask' })] };
      const facts = buildFacts({ ...twoDevices, o2FlowLPerMin: series(o2Flow, [[2, 200], [3, 20]]), spo2Percent: series(spo2, [[94, 200], [94, 20]]) });
      expect(runRule(rule, facts)).toStrictEqual([]);
      const venturiOnly = buildFacts({ activeOrders: [activeOrder({ device: 'venturi-mask', setFio2Fraction: 0.28 })], o2FlowLPerMin: series(o2Flow, [[4, 200], [6, 20]]), spo2Percent: series(spo2, [[94, 200], [94, 20]]) });
      expect(runRule(rule, venturiOnly)).toStrictEqual([]);
    });

    it('reads the trend from readings kept for it, not from the current values', () => {
      // The reader keeps SpO2 and flow 5 h old for the 360-min trend window (local choice) though they
      // are past the 240-min freshness window; a rising requirement calls for review (BTS 2017, from memory)
      const trendReadings = {
        spo2Percent: series(spo2, [[95, 300], [94, 20]]),
        fio2Fraction: [],
        o2FlowLPerMin: series(o2Flow, [[2, 300], [6, 20]]),
      };
      const current = { spo2Percent: [spo2(94, 20)], o2FlowLPerMin: [o2Flow(6, 20)] };
      const finding = onlyFinding(runRule(rule, buildFacts({ ...onCannula, ...current, trendReadings })));
      expect(finding.values.oxygenChange).toBe('recorded O2 flow (nasal cannula throughout) rose from 2 L/min (5 h ago) to 6 L/min (20 min ago)');
      // The same current values without the kept readings show no trend
      expect(runRule(rule, buildFacts({ ...onCannula, ...current }))).toStrictEqual([]);
    });

    it('takes the device from this order when no order is on record, and says so', () => {
      // Nasal cannula flows 2 → 4 L/min with SpO2 96 → 92 %: a fall of >= 3 points despite more oxygen
      // (BTS 2017 summary); cannula range 1-6 L/min (BTS 2017, check-values 2a)
      const cannulaDraft = { orders: [oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 4 })], activeOrders: [] };
      const facts = buildFacts({ ...cannulaDraft, o2FlowLPerMin: series(o2Flow, [[2, 200], [4, 20]]), spo2Percent: series(spo2, [[96, 200], [92, 20]]) });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.values.oxygenChange).toBe(
        'recorded O2 flow (nasal cannula, as this order names; none on record) rose from 2 L/min (3 h 20 min ago) to 4 L/min (20 min ago)',
      );
      expect(finding.values.headline).toContain('despite more oxygen');
      // Unchanged flow on that device with a 4-point fall fires as a fall on unchanged oxygen
      const same = buildFacts({ ...cannulaDraft, o2FlowLPerMin: series(o2Flow, [[2, 180], [2, 15]]), spo2Percent: series(spo2, [[98, 180], [94, 15]]) });
      expect(onlyFinding(runRule(rule, same)).values.headline).toContain('on unchanged oxygen');
    });

    it('does not compare flows above the named device\'s top flow: they were given on something else', () => {
      // 10 L/min is above the nasal cannula's 6 L/min (BTS 2017, check-values 2a): a mask, not this cannula
      const cannulaDraft = { orders: [oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 4 })], activeOrders: [] };
      const facts = buildFacts({ ...cannulaDraft, o2FlowLPerMin: series(o2Flow, [[10, 200], [4, 20]]), spo2Percent: series(spo2, [[94, 200], [94, 20]]) });
      expect(runRule(rule, facts)).toStrictEqual([]);
      const onRecord = buildFacts({ ...onCannula, o2FlowLPerMin: series(o2Flow, [[2, 200], [10, 20]]), spo2Percent: series(spo2, [[94, 200], [94, 20]]) });
      expect(runRule(rule, onRecord)).toStrictEqual([]);
    });

    it('does not call a fall "on unchanged oxygen" when a setting was recorded in the window but shows no trend', () => {
      // SpO2 96 → 92 % is a fall of 4 (BTS 2017 summary: >= 3); one recorded flow is no trend, yet it
      // says the oxygen was set in the window, so "unchanged" is not known (common practice). Without
      // it, the one order running throughout makes the same fall a card.
      const fall = { ...onCannula, spo2Percent: series(spo2, [[96, 200], [92, 15]]) };
      expect(runRule(rule, buildFacts({ ...fall, o2FlowLPerMin: [o2Flow(2, 100)] }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ ...fall, fio2Fraction: [fio2(0.28, 100)] }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts(fall)).length).toBe(1);
    });

    it('does not call SpO2 a fall on unchanged oxygen when the oxygen was lowered', () => {
      // Recorded FiO2 0.40 → 0.28 with SpO2 97 → 93 %: weaning, expected
      const facts = buildFacts({ ...onCannula, fio2Fraction: series(fio2, [[0.4, 200], [0.28, 20]]), spo2Percent: series(spo2, [[97, 200], [93, 10]]) });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('does not speak where no SpO2 target applies, nor for a comfort order', () => {
      const fall = { ...onCannula, spo2Percent: series(spo2, [[96, 200], [90, 15]]) };
      expect(runRule(rule, buildFacts({ ...fall, conditions: [condition('pneumothorax')] }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ ...fall, orders: [oxygenOrder({ purpose: 'comfort' })] }))).toStrictEqual([]);
    });

    it('leaves failing high flow to escalated-support-failing', () => {
      // FiO2 0.6 -> 0.8 on high flow with SpO2 below 94 %: the critical card already asks for review
      const hfnc = activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.8, authoredOn: minutesAgo(600) });
      const facts = buildFacts({ activeOrders: [hfnc], orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.8 })], fio2Fraction: series(fio2, [[0.6, 200], [0.8, 10]]), spo2Percent: series(spo2, [[93, 200], [88, 10]]) });
      expect(runRule(rule, facts)).toStrictEqual([]);
      expect(runRule(rule, facts, { policy: withPolicy(BTS, { disabledRules: ['escalated-support-failing'] }) }).length).toBe(1);
    });
  });

  describe('invariants', () => {
    const run = fc.record({
      flows: fc.array(fc.integer({ min: 1, max: 6 }), { minLength: 2, maxLength: 5 }),
      sats: fc.array(fc.integer({ min: 88, max: 100 }), { minLength: 2, maxLength: 5 }),
    });
    const factsOf = (flows: readonly number[], sats: readonly number[]): Facts =>
      buildFacts({
        ...onCannula,
        // spread over the window, oldest first: 330 min ago … 10 min ago
        o2FlowLPerMin: series(o2Flow, flows.map((v, i) => [v, 330 - (i * 320) / Math.max(1, flows.length - 1)] as const)),
        spo2Percent: series(spo2, sats.map((v, i) => [v, 330 - (i * 320) / Math.max(1, sats.length - 1)] as const)),
      });

    it('never fires in the weaning direction unless SpO2 fell 3 points or more with the flow not lowered', () => {
      fc.assert(
        fc.property(run, ({ flows, sats }) => {
          const first = flows[0] ?? 0;
          const last = flows[flows.length - 1] ?? 0;
          const fired = runRule(rule, factsOf(flows, sats)).length === 1;
          if (last < first) {
            expect(fired).toBe(false); // less oxygen at the end: weaning
          }
          const fall = (sats[0] ?? 0) - (sats[sats.length - 1] ?? 0);
          if (last > first && fall > -3) {
            expect(fired).toBe(true); // more oxygen, SpO2 not lifted by 3 or more
          }
          if (last === first) {
            expect(fired).toBe(fall >= 3); // unchanged oxygen: only a fall of 3 or more (BTS 2017 summary)
          }
        }),
        { seed: 6020, numRuns: 300 },
      );
    });

    it('depends on the ends of the window only, not on what happened between them', () => {
      fc.assert(
        fc.property(run, fc.array(fc.integer({ min: 1, max: 6 }), { maxLength: 3 }), ({ flows, sats }, middle) => {
          const first = flows[0] ?? 2;
          const last = flows[flows.length - 1] ?? 2;
          const withMiddle = [first, ...middle, last];
          const a = runRule(rule, factsOf([first, last], [sats[0] ?? 95, sats[sats.length - 1] ?? 95])).length;
          const b = runRule(rule, factsOf(withMiddle, [sats[0] ?? 95, sats[sats.length - 1] ?? 95])).length;
          expect(b).toBe(a);
        }),
        { seed: 6021, numRuns: 200 },
      );
    });
  });
});
