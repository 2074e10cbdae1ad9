import { describe, expect, it } from 'vitest';
import { findFio2Mentions, findFlowMentions, readSettingText } from '../../src/fhir/read-setting-text.js';

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
