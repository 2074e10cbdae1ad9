import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/ready-to-step-down.js';
import { BTS, bloodGas } from '../facts-builder.js';
import { reviewFacts, steady } from '../titration/review-facts.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

// Invented Larkspur Bay patients reviewed on patient-view. The weaning steps are BTS 2017 weaning
// advice given from memory (not found in the reference notes): step down stable patients in or above
// the range, to about 2 L/min (about 1 L/min or 24 % Venturi at risk) before stopping; stop after two
// consecutive observations in range. Look-back 8 h, two readings and 120 min observed at least (local
// choices). Ages in minutes.
const view = { hook: 'patient-view' as const };
const AGES = [300, 240, 180, 120, 60, 10];

describe('ready-to-step-down', () => {
  it('runs on patient-view only, as information', () => {
    expect(rule.hooks).toStrictEqual(['patient-view']);
    expect(rule.defaultIndicator).toBe('info');
    expect(BTS.titrationReview.stopFromFlowLPerMin).toStrictEqual({ standard: 2, hypercapnicRisk: 1 }); // BTS 2017, from memory
    expect(BTS.titrationReview.stopAfterReadingsInRange).toBe(2); // BTS 2017, from memory
  });

  it('offers 3 → 2 L/min to a patient in 94-98 % for 5 h on 3 L/min', () => {
    // SpO2 95-97 % (in 94-98 %, BTS 2017 Tables 1-3) hourly on 3 L/min: one 1 L/min step (common practice).
    const facts = reviewFacts({ order: { flowLPerMin: 3 }, spo2: [[96, 300], [97, 240], [95, 180], [96, 120], [96, 60], [97, 10]], flows: steady(3, AGES) });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.indicator).toBe('info');
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 2 });
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Stable in or above target 94–98 % for 5 h observed: consider 3 L/min → 2 L/min');
    expect(card.label).toBe('Lower the flow to 2 L/min');
  });

  it('offers to stop at 2 L/min after two consecutive readings in range', () => {
    // BTS 2017 (from memory): most stable patients stop from about 2 L/min, SpO2 in range twice running.
    const facts = reviewFacts({ order: { flowLPerMin: 2 }, spo2: steady(96, AGES), flows: steady(2, AGES) });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.change).toStrictEqual({ kind: 'stop-oxygen' });
    expect(expectCardRenders(finding).summary).toContain('consider stopping the oxygen');
  });

  it('steps an at-risk patient down to 1 L/min, not to stopping, from 2 L/min', () => {
    // BTS 2017, Table 4: 88-92 % for COPD; at-risk patients come down to about 1 L/min before stopping
    // (BTS 2017, from memory). SpO2 90 % throughout on 2 L/min.
    const facts = reviewFacts({
      order: { flowLPerMin: 2, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } },
      conditions: ['copd'],
      spo2: steady(90, AGES),
      flows: steady(2, AGES),
    });
    expect(onlyFinding(runRule(rule, facts, view)).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 1 });
  });

  it('offers to stop an at-risk patient from a 24 % Venturi', () => {
    // BTS 2017, Table 4: 24 % Venturi is the lowest controlled setting; stop from there (from memory).
    const facts = reviewFacts({
      order: { device: 'venturi-mask', setFio2Fraction: 0.24, flowLPerMin: 2, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } },
      conditions: ['copd'],
      spo2: steady(91, AGES),
      fio2: steady(0.24, AGES),
    });
    expect(onlyFinding(runRule(rule, facts, view)).change).toStrictEqual({ kind: 'stop-oxygen' });
  });

  it('says the oxygen is already coming down when the recorded flow fell over the window', () => {
    // 4 → 3 L/min over the window with SpO2 96-97 %: weaning going well, next step 3 → 2 L/min.
    const facts = reviewFacts({
      order: { flowLPerMin: 4 },
      spo2: [[97, 300], [97, 240], [96, 180], [96, 120], [96, 60], [96, 10]],
      flows: [[4, 300], [4, 240], [4, 180], [3, 120], [3, 60], [3, 10]],
    });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.values.course).toBe('oxygen already coming down (recorded O2 flow (nasal cannula throughout) 4 L/min → 3 L/min)');
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 2 });
  });

  it('advises a step inside a prescribed flow range without rewriting the prescription', () => {
    // "2-6 L/min to keep SpO2 94-98 %" running at 3 L/min, SpO2 96 % (in range, BTS 2017 Tables 1-3):
    // a lower flow inside the range is the nurse's titration (common practice), so no update is offered
    // that would fix the flow at one value and lose the range.
    const base = reviewFacts({ order: { flowLPerMin: undefined }, spo2: steady(96, AGES), flows: steady(3, AGES) });
    const facts = {
      ...base,
      setAside: [
        {
          what: 'Ordered oxygen flow',
          reason: 'unrecognised' as const,
          detail: 'The flow is given as a range (2–6 L/min), not one setting, so no flow was read.',
          reference: 'MedicationRequest/lb-o2-active',
        },
      ],
    };
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.change).toBeUndefined();
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Stable in or above target 94–98 % for 5 h observed: consider 3 L/min → 2 L/min if the prescribed range allows');
    expect(card.label).toBeUndefined();
    // The same patient with one prescribed flow gets the one-click step (common practice: 1 L/min).
    const fixed = reviewFacts({ order: { flowLPerMin: 3 }, spo2: steady(96, AGES), flows: steady(3, AGES) });
    expect(onlyFinding(runRule(rule, fixed, view)).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 2 });
  });

  describe('says it cannot tell when the readings are hours apart', () => {
    // BTS 2017 (from memory): stop after two consecutive observations in range in a stable patient.
    // Two readings 5 h 50 min apart are not consecutive observations of a stable course: a reading
    // stands for at most 120 min (titrationReview.maxReadingHoldMinutes, local choice).
    it.each([
      ['stop from 2 L/min', 2],
      ['3 → 2 L/min', 3],
    ])('%s: no change offered, the gap named', (_label, flow) => {
      const facts = reviewFacts({ order: { flowLPerMin: flow }, spo2: [[96, 360], [97, 10]], flows: steady(flow, [360, 10]) });
      const finding = onlyFinding(runRule(rule, facts, view));
      expect(finding.indicator).toBe('info');
      expect(finding.change).toBeUndefined();
      const card = expectCardRenders(finding);
      expect(card.summary).toBe('Too few SpO2 readings to tell if stable in target 94–98 % (readings 5 h 50 min apart): record SpO2 before a step down');
      expect(card.label).toBeUndefined();
    });

    it('a gap of exactly the hold cap still counts as consecutive', () => {
      // 120 min apart = maxReadingHoldMinutes (local choice): the readings meet, nothing unobserved between.
      const facts = reviewFacts({ order: { flowLPerMin: 2 }, spo2: [[96, 130], [97, 10]], flows: steady(2, [130, 10]) });
      expect(onlyFinding(runRule(rule, facts, view)).change).toStrictEqual({ kind: 'stop-oxygen' });
    });

    it('an early gap behind a recent run of readings does not hold the step back', () => {
      // 420 → 240 min ago is 180 min (> 120), but the newest four readings, hourly from 180 min ago,
      // span 170 min (>= minObservedMinutes 120, local choice): consecutive observations now.
      const ages = [420, 240, 180, 120, 60, 10];
      const facts = reviewFacts({ order: { flowLPerMin: 3 }, spo2: steady(96, ages), flows: steady(3, ages) });
      expect(onlyFinding(runRule(rule, facts, view)).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 2 });
    });

    it('a gap 1 min over the cap holds the step back', () => {
      // 131 → 10 min ago is 121 min apart; observed 120 + 10 = 130 min (>= 120), two readings.
      const facts = reviewFacts({ order: { flowLPerMin: 2 }, spo2: [[96, 131], [97, 10]], flows: steady(2, [131, 10]) });
      expect(onlyFinding(runRule(rule, facts, view)).change).toBeUndefined();
    });
  });

  describe('stays quiet', () => {
    it('when any reading in the window was below the range', () => {
      // 93 % < 94 % (BTS 2017 Tables 1-3) 4 h ago: not stable over the window.
      const facts = reviewFacts({ order: { flowLPerMin: 3 }, spo2: [[96, 300], [93, 240], [96, 180], [96, 120], [96, 60], [96, 10]], flows: steady(3, AGES) });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('when the current gas shows acidosis', () => {
      // pH 7.31 < 7.35 (RCEM normal range): acidosis, whatever its kind; PaCO2 7.2 kPa >= 6.0 (BTS 2017).
      const facts = reviewFacts({
        order: { flowLPerMin: 3 },
        spo2: steady(96, AGES),
        flows: steady(3, AGES),
        gases: [bloodGas({ ageMinutes: 60, ph: 7.31, paco2Kpa: 7.2, pao2Kpa: 9, hco3: 27 })],
      });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('when the oxygen need is rising', () => {
      // Flow 2 → 4 L/min with SpO2 95 → 94 %: more oxygen for no better saturation (BTS 2017, from memory).
      const facts = reviewFacts({
        order: { flowLPerMin: 4 },
        spo2: [[95, 300], [95, 240], [95, 180], [94, 120], [94, 60], [94, 10]],
        flows: [[2, 300], [2, 240], [3, 180], [4, 120], [4, 60], [4, 10]],
      });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('on high flow', () => {
      // High-flow nasal oxygen is a higher tier of support (common practice): its weaning is the team's.
      const facts = reviewFacts({ order: { device: 'high-flow-nasal-cannula', flowLPerMin: 40, setFio2Fraction: 0.3 }, spo2: steady(96, AGES), fio2: steady(0.3, AGES) });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('for a comfort order', () => {
      // BTS 2017: terminal palliative care oxygen is for comfort, not titrated to a saturation.
      const facts = reviewFacts({ order: { purpose: 'comfort', flowLPerMin: 2 }, spo2: steady(96, AGES), flows: steady(2, AGES) });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('without a current SpO2', () => {
      // Readings stop 5 h ago: older than the 240-min vital-signs window (freshness, local policy).
      const facts = reviewFacts({ order: { flowLPerMin: 3 }, spo2: steady(96, [450, 390, 330, 300]), flows: steady(3, [450, 390, 330, 300]) });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('with a single reading', () => {
      const facts = reviewFacts({ order: { flowLPerMin: 3 }, spo2: [[96, 10]], flows: [[3, 10]] });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });
  });
});
