import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { findFio2Mentions, findFlowMentions, isStepSize, readSettingText } from '../../src/fhir/read-setting-text.js';

describe('readSettingText', () => {
  it.each([
    ['2 L/min via nasal cannula', 'nasal-cannula', 2, undefined], // BTS 2017, Table 2 (2-6 L/min)
    ['2L NC', 'nasal-cannula', 2, undefined],
    ['15 L/min non-rebreather', 'reservoir-mask', 15, undefined], // BTS 2017, Table 2
    ['15 litres per minute via reservoir mask', 'reservoir-mask', 15, undefined],
    ['4 lpm', 'venturi-mask', 4, undefined],
    ['HFNC 50 L/min FiO2 0.45', 'high-flow-nasal-cannula', 50, 0.45], // HFNC flow up to 60 L/min, PMC5359952
    ['high flow 40L 60%', 'high-flow-nasal-cannula', 40, 0.6],
    ['Venturi 28% at 4 L/min', 'venturi-mask', 4, 0.28], // BTS 2017, Table 4 (28 % at 4 L/min)
    ['28% venturi 4L', 'venturi-mask', 4, 0.28],
    ['24% Venturi 2 L/min', 'venturi-mask', 2, 0.24], // BTS 2017, Table 4 (24 % at 2-3 L/min)
    ['CPAP FiO2 40%', 'cpap-niv', undefined, 0.4],
    ['35% O2 via trach mask', 'tracheostomy-mask', undefined, 0.35],
    ['Oxygen 28% via mask', undefined, undefined, 0.28],
    ['V28 at 4L', 'venturi-mask', 4, 0.28], // Venturi shorthand (docs/basis/devices.md)
  ] as const)('reads "%s" (device %s) as flow %s L/min and FiO2 %s', (text, device, flow, fio2) => {
    const read = readSettingText(text, device);
    expect(read.flowLPerMin).toBe(flow);
    // Venturi settings as fractions: 28 % is 0.28 (common practice; converted by UCUM)
    expect(read.setFio2Fraction).toBe(fio2);
  });

  it('reports a flow range as a range, not as one flow', () => {
    expect(readSettingText('1-2 L/min NC', 'nasal-cannula')).toStrictEqual({
      flowLPerMin: undefined,
      flowRange: { low: 1, high: 2 },
      setFio2Fraction: undefined,
    });
  });

  it('skips a flow written as a plan', () => {
    expect(readSettingText('escalate to 15L NRB; currently 2L NC', 'nasal-cannula').flowLPerMin).toBe(2);
  });

  describe('a step of change is not the ordered flow', () => {
    // Weaning in steps and titrating flow up or down are how oxygen is adjusted (BTS 2017: wean as
    // the patient improves; the step sizes below are common practice, not guideline values).
    it.each([
      'Wean oxygen by 0.5 L/min steps to off via nasal cannula, target SpO2 88-92%',
      'Wean by 0.5 L/min to off, nasal cannula',
      'wean O2 by 1L/min daily via NC',
      'Decrease by 1 L/min every 4 hours if SpO2 above target, nasal cannula',
      'Reduce by 1L when sats above 96%, NC',
      'reduce flow by 0.5 L/min each shift, nasal prongs',
      'Step down by 1 L/min, nasal cannula',
      'Titrate by 1 L/min to keep SpO2 94-98% via nasal cannula',
      'Increase by 2 L/min if SpO2 below 94%, nasal cannula',
      'Wean in steps of 0.5 L/min, nasal cannula',
      'nasal cannula, reduce in 1 L/min steps',
      'Nasal cannula, wean in increments of 0.5 L/min',
      'Nasal cannula: titrate in 1-2 L/min steps to target',
      'Wean 0.5 L/min at a time via nasal cannula',
      'NC, reduce every 1 L/min',
      'Turn down by about 1 L/min, nasal cannula',
    ])('reads no flow from "%s"', (text) => {
      expect(readSettingText(text, 'nasal-cannula')).toMatchObject({ flowLPerMin: undefined, flowRange: undefined });
    });

    it.each<[string, number]>([
      ['2 L/min via nasal cannula, wean by 0.5 L/min steps', 2], // BTS 2017, Table 2: nasal cannula 1-6 L/min
      ['Nasal cannula 3 L/min; reduce by 1 L/min when SpO2 above 96%', 3],
      ['Wean by 0.5 L/min steps from 2 L/min, nasal cannula', 2],
      ['Oxygen by 2L nasal cannula', 2], // "by" with no word of change before it names the way it is given
      ['a flow of 4 L/min via simple face mask', 4], // BTS 2017, Table 2: face mask 5-10 L/min; "of" alone is no step
    ])('reads the ordered flow beside a step in "%s"', (text, flow) => {
      expect(readSettingText(text, undefined).flowLPerMin).toBe(flow);
    });

    it('does not read a step of FiO2 as the set FiO2', () => {
      // BTS 2017, Table 4: 24 % and 28 % Venturi settings; the 10 % is a step, not a setting
      expect(readSettingText('Venturi 28% at 4 L/min, increase by 10% if SpO2 below 88%', 'venturi-mask').setFio2Fraction).toBe(0.28);
      expect(readSettingText('Oxygen by 24% Venturi mask at 2 L/min.', 'venturi-mask')).toMatchObject({ flowLPerMin: 2, setFio2Fraction: 0.24 });
    });

    it('holds for generated step phrasings around a generated ordered flow', () => {
      const before = fc.constantFrom('wean by', 'wean oxygen by', 'reduce by', 'decrease flow by', 'step down by', 'titrate by', 'increase by', 'in steps of', 'steps of', 'increments of', 'every');
      const after = fc.constantFrom('', ' steps', ' at a time', ' increments');
      // Flows in 0.5 L/min steps up to 15 L/min: the ward range of BTS 2017, Table 2
      const flow = fc.integer({ min: 1, max: 30 }).map((n) => n / 2);
      fc.assert(
        fc.property(flow, flow, before, after, fc.boolean(), (ordered, step, words, tail, orderFirst) => {
          const stepText = `${words} ${step} L/min${tail}`;
          const orderText = `${ordered} L/min via nasal cannula`;
          const text = orderFirst ? `${orderText}, ${stepText}` : `${stepText}; ${orderText}`;
          expect(readSettingText(text, 'nasal-cannula').flowLPerMin, text).toBe(ordered);
          const mentions = findFlowMentions(text);
          expect(mentions.filter((m) => isStepSize(text, m)).map((m) => m.flowLPerMin), text).toStrictEqual([step]);
        }),
        { seed: 20261204, numRuns: 300 },
      );
    });
  });

  describe('edge cases', () => {
    it.each([
      ['HFNC 50 L/min, ≥ 92 %', 'high-flow-nasal-cannula'], // a saturation bound, not a blender setting
      ['CPAP, keep at least 92%', 'cpap-niv'],
      ['HFNC 40 L/min; call if below 88 %', 'high-flow-nasal-cannula'],
    ] as const)('does not read the saturation in "%s" as a set FiO2', (text, device) => {
      // SpO2 bounds near the published ranges (BTS 2017 Tables 1-4), not FiO2 settings
      expect(readSettingText(text, device).setFio2Fraction).toBeUndefined();
    });

    it('does not take a bare percentage as FiO2 for a device with no setting', () => {
      expect(readSettingText('2L NC, SpO2 92%', 'nasal-cannula').setFio2Fraction).toBeUndefined();
    });

    it('does not take a saturation as FiO2, even for a Venturi mask', () => {
      const mentions = findFio2Mentions('Venturi 28%, call if SpO2 falls below 85%', 'venturi-mask');
      expect(mentions.map((m) => m.fraction)).toStrictEqual([0.28]);
    });

    it('does not take either end of a target or FiO2 range as a setting', () => {
      expect(findFio2Mentions('HFNC target 88-92%', 'high-flow-nasal-cannula')).toStrictEqual([]);
      expect(findFio2Mentions('HFNC titrate FiO2 60-80%', 'high-flow-nasal-cannula')).toStrictEqual([]);
    });

    it('reads "FiO2 45" without a sign as percent', () => {
      expect(findFio2Mentions('FiO2 45', undefined)).toStrictEqual([
        { start: 0, end: 7, fraction: 0.45, style: 'percent', valueStart: 5, valueEnd: 7 },
      ]);
    });

    it('does not read millilitres or words starting with L as litres', () => {
      expect(findFlowMentions('500 mL bolus, 2 Lines')).toStrictEqual([]);
    });

    it('gives the offsets of the number for a rewrite', () => {
      expect(findFlowMentions('2L NC')).toStrictEqual([
        { start: 0, end: 2, flowLPerMin: 2, range: undefined, valueStart: 0, valueEnd: 1 },
      ]);
    });
  });
});
