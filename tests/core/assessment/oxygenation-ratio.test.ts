import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ratioOverFio2Range } from '../../../src/core/assessment/oxygenation-ratio.js';
import type { Fio2InForce } from '../../../src/core/assessment/types.js';
import { classifyPfBerlin, classifySfRice, pfRatioMmHg } from '../../../src/core/physiology/index.js';

// Berlin 2012 (JAMA 307:2526, V): P/F ≤ 100 severe, ≤ 200 moderate, ≤ 300 mild
const BERLIN = [100, 200, 300];
// Rice 2007 (Chest 132:410, V): S/F 235 and 315
const RICE = [235, 315];

function estimated(estimate: number, low: number, high: number): Fio2InForce {
  return { estimate, low, high, basis: 'order-estimate', at: undefined, onAir: false, source: 'estimated', delivery: undefined };
}

const pf = (pao2MmHg: number, fio2: Fio2InForce) =>
  ratioOverFio2Range({ numerator: pao2MmHg, fio2, compute: pfRatioMmHg, classify: classifyPfBerlin, cutoffsLowerInclusive: BERLIN });

describe('ratioOverFio2Range', () => {
  it('states no Berlin band for a P/F range that straddles 200', () => {
    // PaO2 64 mmHg over FiO2 0.30-0.33: P/F 194-213, straddling the Berlin 200 cut-off
    const result = pf(64, estimated(0.315, 0.3, 0.33));
    expect(result.low).toBeLessThan(200);
    expect(result.high).toBeGreaterThan(200);
    expect(result.band).toBeUndefined();
    expect(result.spannedCutoffs).toStrictEqual([200]);
  });

  it('states the band when the whole range lies in it', () => {
    // PaO2 60 mmHg over FiO2 0.40-0.44: P/F 136-150, Berlin moderate throughout
    const result = pf(60, estimated(0.42, 0.4, 0.44));
    expect(result.band).toBe('moderate');
    expect(result.spannedCutoffs).toStrictEqual([]);
  });

  it('treats a range that only touches a cut-off from below as inside the lower band', () => {
    // PaO2 80 over FiO2 0.40-0.44: P/F 181.8-200; 200 itself is moderate (Berlin 2012)
    const result = pf(80, estimated(0.42, 0.4, 0.44));
    expect(result.band).toBe('moderate');
  });

  it('states a band only when both ends and the estimate share it, for P/F and S/F alike', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 30, max: 300, noNaN: true }),
        fc.double({ min: 0.21, max: 0.9, noNaN: true }),
        fc.double({ min: 0, max: 0.1, noNaN: true }),
        fc.integer({ min: 70, max: 97 }),
        (pao2, centre, halfWidth, spo2) => {
          const low = Math.max(0.21, centre - halfWidth);
          const high = Math.min(1, centre + halfWidth);
          const fio2 = estimated(centre, low, high);
          const p = pf(pao2, fio2);
          if (p.band !== undefined) {
            expect(classifyPfBerlin(p.low)).toBe(p.band);
            expect(classifyPfBerlin(p.high)).toBe(p.band);
            expect(classifyPfBerlin(p.ratio)).toBe(p.band);
          } else {
            expect(p.spannedCutoffs.length).toBeGreaterThan(0);
          }
          const s = ratioOverFio2Range({
            numerator: spo2,
            fio2,
            compute: (sat, f) => sat / f,
            classify: (v) => classifySfRice(Math.min(500, Math.max(20, v))),
            cutoffsLowerInclusive: RICE,
          });
          if (s.band !== undefined) {
            expect(s.spannedCutoffs).toStrictEqual([]);
            expect(RICE.every((c) => !(s.low <= c && s.high > c))).toBe(true);
          }
          expect(p.low).toBeLessThanOrEqual(p.ratio);
          expect(p.ratio).toBeLessThanOrEqual(p.high);
        },
      ),
    );
  });
});
