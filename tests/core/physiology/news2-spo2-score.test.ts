import { describe, expect, it } from 'vitest';
import { news2Spo2Points } from '../../../src/core/physiology/news2-spo2-score.js';

describe('news2Spo2Points', () => {
  it.each([
    // check-values §4 check vectors (RCP 2017 NEWS2 chart, verified): [SpO2, scale, on oxygen, points]
    [95, 1, true, 1],
    [90, 2, false, 0],
    [94, 2, false, 0],
    [94, 2, true, 1],
    [97, 2, true, 3],
    [85, 2, true, 2],
    [85, 2, false, 2],
    [92, 1, true, 2],
    [92, 1, false, 2],
  ] as const)('SpO2 %s %% on Scale %s (oxygen: %s) scores %s', (value, scale, onOxygen, points) => {
    expect(news2Spo2Points(value, scale, onOxygen)).toBe(points);
  });

  describe('edge cases', () => {
    it.each([
      // band edges of Scale 1 (RCP 2017): <= 91 → 3, 92-93 → 2, 94-95 → 1, >= 96 → 0
      [91, 3], [92, 2], [93, 2], [94, 1], [95, 1], [96, 0], [100, 0],
    ])('Scale 1 scores %s %% as %s', (value, points) => {
      expect(news2Spo2Points(value, 1, true)).toBe(points);
    });

    it.each([
      // band edges of Scale 2 (RCP 2017): <= 83 → 3, 84-85 → 2, 86-87 → 1, 88-92 → 0; on oxygen
      // 93-94 → 1, 95-96 → 2, >= 97 → 3; >= 93 on air → 0
      [83, true, 3], [84, true, 2], [85, true, 2], [86, true, 1], [87, true, 1], [88, true, 0], [92, true, 0],
      [93, true, 1], [94, true, 1], [95, true, 2], [96, true, 2], [97, true, 3], [100, true, 3],
      [93, false, 0], [100, false, 0], [83, false, 3],
    ])('Scale 2 scores %s %% (oxygen: %s) as %s', (value, onOxygen, points) => {
      expect(news2Spo2Points(value, 2, onOxygen)).toBe(points);
    });

    it('never scores the 88-92 % target on Scale 2, and always scores it on Scale 1', () => {
      // RCP 2017: Scale 2 exists so the 88-92 % target does not alarm
      for (let value = 88; value <= 92; value += 1) {
        expect(news2Spo2Points(value, 2, true)).toBe(0);
        expect(news2Spo2Points(value, 1, true)).toBeGreaterThanOrEqual(2);
      }
    });
  });
});
