import { describe, expect, it } from 'vitest';
import {
  formatDuration,
  formatFio2Range,
  formatFlow,
  formatGasValue,
  formatMinuteWindow,
  formatMmHg,
  formatNumber,
  formatRange,
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

    it('falls back to mmHg when a gas has no reported form', () => {
      const gas = { ...bloodGas({ ageMinutes: 5, paco2MmHg: 50 }), reported: {} };
      expect(formatGasValue(gas, 'paco2')).toBe('50 mmHg');
      expect(formatGasValue(gas, 'pao2')).toBeUndefined();
    });
  });
});
