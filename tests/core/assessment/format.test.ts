import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  formatDeliveredFio2,
  formatDuration,
  formatFio2Range,
  formatFlow,
  formatGasValue,
  formatMinuteWindow,
  formatMmHg,
  formatNumber,
  formatRange,
  formatRatio,
  formatWholeBesideCutoffs,
  joinWords,
  minutesBetween,
} from '../../../src/core/assessment/format.js';
import { NOW, bloodGas, minutesAgo } from '../facts-builder.js';

describe('format', () => {
  it('writes a saturation range with an en dash and a spaced percent sign', () => {
    // BTS 2017 Table 4: 88-92 %
    expect(formatRange({ lowPercent: 88, highPercent: 92 })).toBe('88–92 %');
  });

  it('writes an FiO2 estimate with its range to two places', () => {
    expect(formatFio2Range({ estimate: 0.32, low: 0.28, high: 0.36 })).toBe('0.32 (0.28–0.36)');
  });

  it('shows a measured pressure in the unit the laboratory reported', () => {
    const gas = bloodGas({ ageMinutes: 30, paco2Kpa: 6.7, pao2MmHg: 60, ph: 7.31, hco3: 30 });
    expect(formatGasValue(gas, 'paco2')).toBe('6.7 kPa');
    expect(formatGasValue(gas, 'pao2')).toBe('60 mmHg');
    expect(formatGasValue(gas, 'ph')).toBe('7.31');
    expect(formatGasValue(gas, 'hco3')).toBe('30 mmol/L');
  });

  it('shows computed pressures in whole mmHg and flows without trailing zeros', () => {
    expect(formatMmHg(99.7)).toBe('100 mmHg');
    expect(formatFlow(22.5)).toBe('22.5 L/min');
    expect(formatFlow(3)).toBe('3 L/min');
    expect(formatNumber(6.0, 2)).toBe('6');
  });

  it('writes durations and windows in words a reader scans quickly', () => {
    expect(formatDuration(45)).toBe('45 min');
    expect(formatDuration(190)).toBe('3 h 10 min');
    expect(formatDuration(120)).toBe('2 h');
    expect(formatDuration(3 * 24 * 60)).toBe('3 days');
    expect(formatMinuteWindow(30, 60)).toBe('30–60 min');
  });

  it('joins words in plain English', () => {
    expect(joinWords(['a'])).toBe('a');
    expect(joinWords(['a', 'b', 'c'])).toBe('a, b and c');
  });

  describe('edge cases', () => {
    it('gives no minutes for an unreadable time', () => {
      expect(minutesBetween('not a date', NOW)).toBeUndefined();
      expect(minutesBetween(minutesAgo(15), NOW)).toBe(15);
    });

    it("gives a reading's age from the epoch ms it carries, and from its time text when it carries none", () => {
      const at = minutesAgo(15);
      expect(minutesBetween({ at }, NOW)).toBe(15);
      expect(minutesBetween({ at, atMs: Date.parse(at) }, NOW)).toBe(15);
      // The fact reader sets atMs from the same text; where both are given, the parsed number is the one read.
      expect(minutesBetween({ at: 'not a date', atMs: Date.parse(at) }, NOW)).toBe(15);
      expect(minutesBetween({ at: 'not a date' }, NOW)).toBeUndefined();
    });

    it('falls back to mmHg when a gas has no reported form', () => {
      const gas = { ...bloodGas({ ageMinutes: 5, paco2MmHg: 50 }), reported: {} };
      expect(formatGasValue(gas, 'paco2')).toBe('50 mmHg');
      expect(formatGasValue(gas, 'pao2')).toBeUndefined();
    });
  });

  describe('oxygenation ratios beside their cut-offs', () => {
    // Berlin 2012 (JAMA 307:2526, V): severe P/F ≤ 100, moderate ≤ 200, mild ≤ 300 mmHg
    const BERLIN = [100, 200, 300];
    // Rice 2007 (Chest 132:410, V): S/F 235 ≈ P/F 200, 315 ≈ P/F 300; a value on a cut-off is in the lower band
    const RICE = [235, 315];

    it.each([
      [199.4, BERLIN, '199'],
      [199.6, BERLIN, '200'], // still ≤ 200: moderate, as 200 itself is
      [200, BERLIN, '200'],
      [200.4, BERLIN, '201'], // mild: never shown as 200
      [200.6, BERLIN, '201'],
      [299.7, BERLIN, '300'],
      [300.2, BERLIN, '301'], // above 300: outside the bands, never shown as 300
      [234.6, RICE, '235'],
      [235, RICE, '235'],
      [235.3, RICE, '236'],
      [314.9, RICE, '315'],
      [315.1, RICE, '316'],
    ])('shows %s as %s, a whole number on its own side of the cut-off', (value, cutoffs, shown) => {
      expect(formatWholeBesideCutoffs(value, cutoffs)).toBe(shown);
    });

    it('never rounds a value onto the wrong side of any cut-off', () => {
      fc.assert(
        fc.property(fc.double({ min: 20, max: 700, noNaN: true }), (value) => {
          const shown = Number(formatWholeBesideCutoffs(value, [...BERLIN, ...RICE]));
          expect(Number.isInteger(shown)).toBe(true);
          expect(Math.abs(shown - value)).toBeLessThan(1);
          for (const cutoff of [...BERLIN, ...RICE]) {
            expect(shown > cutoff).toBe(Math.round(value * 1e6) / 1e6 > cutoff);
          }
        }),
      );
    });

    it('gives one whole number when the FiO2 is exact', () => {
      // PaO2 80 / FiO2 0.40 = 200 (Berlin moderate, exactly on the cut-off)
      expect(formatRatio({ ratio: 200, low: 200, high: 200 }, BERLIN)).toBe('200');
    });

    it('gives "about" and a range when the FiO2 is an estimate', () => {
      // PaO2 70 over FiO2 0.32 (0.28–0.36): 218.75 (194.4–250)
      expect(formatRatio({ ratio: 218.75, low: 194.44, high: 250 }, BERLIN)).toBe('about 219 (194–250)');
      // a range that straddles 200 keeps its ends on their own sides: 199.9–200.3
      expect(formatRatio({ ratio: 200.1, low: 199.9, high: 200.3 }, BERLIN)).toBe('about 201 (200–201)');
    });
  });

  describe('delivered FiO2 with the point thresholds read', () => {
    it('names the low end for an estimate and the setting for a set device', () => {
      expect(
        formatDeliveredFio2({ fio2: { estimate: 0.32, low: 0.28, high: 0.36 }, thresholdFio2: { fraction: 0.28, point: 'low-end' } }),
      ).toBe('0.32 (0.28–0.36), thresholds read 0.28 (low end)');
      // Jones 1984 (V): Venturi 28 % within 1.9 % of the setting
      expect(
        formatDeliveredFio2({ fio2: { estimate: 0.28, low: 0.261, high: 0.299 }, thresholdFio2: { fraction: 0.28, point: 'set' } }),
      ).toBe('0.28 (0.26–0.30), thresholds read the set 0.28');
      expect(
        formatDeliveredFio2({ fio2: { estimate: 0.6, low: 0.6, high: 0.6 }, thresholdFio2: { fraction: 0.6, point: 'set' } }),
      ).toBe('0.60 as set');
    });
  });
});
