import { describe, expect, it } from 'vitest';
import { deviceWords, rewriteDevice, rewriteFlow, rewriteTarget } from '../../src/fhir/rewrite-text.js';

// BTS 2017 Table 4: 88-92 % for patients at risk of hypercapnic respiratory failure
const HYPERCAPNIC = { lowPercent: 88, highPercent: 92 };

describe('rewriteTarget', () => {
  it.each([
    ['target SpO2 94-98%', 'target SpO2 88-92%'],
    ['Target SpO2 94–98%', 'Target SpO2 88–92%'],
    ['SpO2 94 to 98 %', 'SpO2 88 to 92 %'],
    ['aim sats 94-98, review at 1 h', 'aim sats 88-92, review at 1 h'],
    ['SpO2 94-98%; if COPD aim 94-98%', 'SpO2 88-92%; if COPD aim 88-92%'],
  ])('rewrites "%s"', (before, after) => {
    expect(rewriteTarget(before, HYPERCAPNIC)).toStrictEqual({ text: after, stated: true, leftAsWritten: [] });
  });

  it('says when the text states no target', () => {
    expect(rewriteTarget('2L NC', HYPERCAPNIC)).toStrictEqual({ text: '2L NC', stated: false, leftAsWritten: [] });
  });
});

describe('rewriteFlow', () => {
  it.each([
    ['2L NC', 1, '1L NC', []],
    ['15 L/min non-rebreather', 10, '10 L/min non-rebreather', []],
    ['NC 1-2 L/min', 2, 'NC 2 L/min', []],
    ['2L NC, escalate to 15L NRB', 1, '1L NC, escalate to 15L NRB', ['15L']], // a plan is left alone, and listed
    ['Venturi 28% at 4 L/min', 6, 'Venturi 28% at 6 L/min', []], // 28 % at 1.5 x 4 L/min, BTS 2017 Table 4
    // the contingency flow keeps its words: only the flow the order reads changes
    ['3L NC; if SpO2 below 85 % call doctor, increase to 4 L/min', 2, '2L NC; if SpO2 below 85 % call doctor, increase to 4 L/min', ['4 L/min']],
  ])('rewrites "%s" to %s L/min', (before, flow, after, left) => {
    expect(rewriteFlow(before, flow)).toStrictEqual({ text: after, stated: true, leftAsWritten: left });
  });
});

describe('rewriteDevice', () => {
  it.each([
    ['2L NC', { device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 }, '4L 28% Venturi mask'],
    ['28% venturi at 4 L/min', { device: 'venturi-mask', flowLPerMin: 2, setFio2Fraction: 0.24 }, '24% Venturi mask at 2 L/min'],
    ['28% venturi at 4 L/min', { device: 'nasal-cannula', flowLPerMin: 2 }, 'nasal cannula at 2 L/min'],
    ['HFNC 50 L/min FiO2 0.45', { device: 'reservoir-mask', flowLPerMin: 15 }, 'reservoir mask (non-rebreather) 15 L/min'],
    ['HFNC 50 L/min FiO2 0.45', { device: 'high-flow-nasal-cannula', flowLPerMin: 40, setFio2Fraction: 0.6 }, 'high-flow nasal cannula 40 L/min FiO2 0.6'],
    ['high flow 40L 60%', { device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.5 }, 'high-flow nasal cannula 50L 50%'],
    ['24% mask 2 L/min', { device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 }, '28% Venturi mask 4 L/min'],
  ] as const)('rewrites "%s"', (before, change, after) => {
    expect(rewriteDevice(before, change)).toStrictEqual({ text: after, stated: true, leftAsWritten: [] });
  });

  describe('edge cases', () => {
    it('leaves a text that names no device, flow or FiO2 as it was', () => {
      expect(rewriteDevice('Oxygen therapy', { device: 'nasal-cannula', flowLPerMin: 2 })).toStrictEqual({ text: 'Oxygen therapy', stated: false, leftAsWritten: [] });
    });

    it('leaves devices named as history alone', () => {
      expect(rewriteDevice('home NIV; 2L NC', { device: 'simple-face-mask', flowLPerMin: 5 }).text).toBe('home NIV; 5L simple face mask');
    });

    it('names the Venturi setting with the device', () => {
      expect([deviceWords('venturi-mask', 0.28), deviceWords('venturi-mask', undefined), deviceWords('cpap-niv', 0.4)]).toStrictEqual([
        '28% Venturi mask',
        'Venturi mask',
        'CPAP/NIV',
      ]);
    });
  });
});
