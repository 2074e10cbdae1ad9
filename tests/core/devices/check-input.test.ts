import { describe, expect, it } from 'vitest';
import {
  checkDeliveryInput,
  flowRangeNotes,
  formatNumber,
  ignoredInputNotes,
} from '../../../src/core/devices/check-input.js';
import type { InputSpec } from '../../../src/core/devices/check-input.js';

const blender: InputSpec = {
  deviceWords: 'a test device',
  uses: ['flowLPerMin', 'setFio2Fraction'],
  requires: ['setFio2Fraction', 'flowLPerMin'],
};
const flowOnly: InputSpec = { deviceWords: 'a flow device', uses: ['flowLPerMin'], requires: ['flowLPerMin'] };

describe('checkDeliveryInput', () => {
  it('passes through usable values', () => {
    // High flow 40 L/min at FiO2 0.5: inside 0.21-1.0 and up to 60 L/min (Annual Update in ICEM 2017,
    // PMC5359952; check-values 2a); RR 22/min is an ordinary ward rate (common practice)
    expect(checkDeliveryInput({ flowLPerMin: 40, setFio2Fraction: 0.5, respRatePerMin: 22 }, blender)).toStrictEqual({
      kind: 'ok',
      value: { flowLPerMin: 40, setFio2Fraction: 0.5, respRatePerMin: 22 },
    });
  });

  it('names every required field that is absent', () => {
    expect(checkDeliveryInput({}, blender)).toStrictEqual({
      kind: 'unknown',
      reason: 'The delivered FiO2 of a test device cannot be estimated without the set FiO2 and the flow (L/min).',
      missing: ['setFio2Fraction', 'flowLPerMin'],
    });
  });

  it('drops a field the device does not use', () => {
    // A nasal cannula-like device has a flow and no FiO2 setting (BTS 2017 Table 2; check-values 2a)
    const checked = checkDeliveryInput({ flowLPerMin: 2, setFio2Fraction: 28 }, flowOnly);
    expect(checked).toStrictEqual({
      kind: 'ok',
      value: { flowLPerMin: 2, setFio2Fraction: undefined, respRatePerMin: undefined },
    });
    expect(ignoredInputNotes({ flowLPerMin: 2, setFio2Fraction: 28 }, flowOnly)).toStrictEqual([
      'A set FiO2 was given, but a flow device has no FiO2 setting: the estimate uses the flow.',
    ]);
    expect(ignoredInputNotes({ flowLPerMin: 2 }, flowOnly)).toStrictEqual([]);
  });

  describe('edge cases', () => {
    // No flow is negative or infinite (common practice)
    it.each([-1, Number.NaN, Number.POSITIVE_INFINITY])('refuses a flow of %d L/min as impossible', (flow) => {
      const checked = checkDeliveryInput({ flowLPerMin: flow, setFio2Fraction: 0.4 }, blender);
      expect(checked.kind).toBe('unknown');
      if (checked.kind === 'unknown') {
        expect(checked.reason).toContain('is not possible');
        expect(checked.missing).toBeUndefined();
      }
    });

    // A set FiO2 runs from room air 0.21 to 1.0 (check-values 2a, HFNC row); 28 is a percentage
    // given where a fraction belongs (common practice)
    it.each([0.2, 1.01, 28, Number.NaN])('refuses a set FiO2 of %d outside 0.21-1', (fio2) => {
      const checked = checkDeliveryInput({ flowLPerMin: 30, setFio2Fraction: fio2 }, blender);
      expect(checked.kind).toBe('unknown');
      if (checked.kind === 'unknown') {
        expect(checked.reason).toContain('from 0.21 to 1');
      }
    });

    it('accepts the bounds 0.21 and 1 and a flow of zero', () => {
      // FiO2 0.21-1.0 (check-values 2a); a flow of 0 is oxygen off, i.e. room air (common practice)
      expect(checkDeliveryInput({ flowLPerMin: 0, setFio2Fraction: 0.21 }, blender).kind).toBe('ok');
      expect(checkDeliveryInput({ flowLPerMin: 0, setFio2Fraction: 1 }, blender).kind).toBe('ok');
    });

    // A breathing patient's rate is above 0/min (common practice)
    it.each([0, -12, Number.NaN])('refuses a respiratory rate of %d', (rr) => {
      expect(checkDeliveryInput({ flowLPerMin: 2, respRatePerMin: rr }, flowOnly)).toStrictEqual({
        kind: 'unknown',
        reason: `A respiratory rate of ${String(rr)}/min is not possible.`,
      });
    });
  });
});

describe('flowRangeNotes', () => {
  // nasal cannula, 1-6 L/min in adults (BTS 2017 Tables 2 and 4; check-values 2a)
  const range = { min: 1, max: 6 };

  it('is silent inside the range, bounds included', () => {
    expect(flowRangeNotes(1, range, 'a nasal cannula', 'BTS 2017')).toStrictEqual([]);
    expect(flowRangeNotes(6, range, 'a nasal cannula', 'BTS 2017')).toStrictEqual([]);
  });

  it('says which side of the range the flow lies and on what basis', () => {
    expect(flowRangeNotes(8, range, 'a nasal cannula', 'BTS 2017')).toStrictEqual([
      '8 L/min is above the usual 1-6 L/min for a nasal cannula (BTS 2017); estimated anyway.',
    ]);
    expect(flowRangeNotes(0.5, range, 'a nasal cannula', 'BTS 2017')).toStrictEqual([
      '0.5 L/min is below the usual 1-6 L/min for a nasal cannula (BTS 2017); estimated anyway.',
    ]);
  });

  it('formats numbers to one decimal place at most', () => {
    // 45.1 L/min is the total flow of a 28 % Venturi at 4 L/min (check-values 2b, derived)
    expect(formatNumber(45.1428)).toBe('45.1');
    expect(formatNumber(4)).toBe('4');
  });
});
