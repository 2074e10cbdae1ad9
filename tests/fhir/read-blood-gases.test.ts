import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { LOINC_OBSERVATIONS } from '../../src/fhir/codes.js';
import { groupBloodGases } from '../../src/fhir/read-blood-gases.js';
import type { Reading } from '../../src/fhir/read-observation-values.js';

interface Extra {
  readonly keys?: readonly string[];
  readonly filedMs?: number;
  readonly corrected?: boolean;
}

function reading(loinc: string, value: number, atMs: number, extra: Extra = {}): Reading {
  const code = LOINC_OBSERVATIONS[loinc];
  if (code === undefined) throw new Error(`no code ${loinc}`);
  return {
    code,
    value,
    reported: { value, unit: 'x' },
    at: new Date(atMs).toISOString(),
    atMs,
    reference: `Observation/${loinc}-${atMs}`,
    sampleKeys: extra.keys ?? [],
    filedMs: extra.filedMs ?? atMs,
    corrected: extra.corrected ?? false,
  };
}

const MIN = 60_000;
const T0 = Date.UTC(2026, 11, 1, 10, 0);
const WINDOW = 10; // policy freshness.bloodGasGroupingMinutes default (common practice: 10 min)

// An acidotic hypercapnic arterial gas: pH 7.26 (< 7.35, RCEM Learning), PaCO2 62 mmHg (>= 45 mmHg,
// i.e. >= 6 kPa, BTS 2017), PaO2 58 mmHg, HCO3 27 mmol/L (22-26 most sources, RCEM 23-28).
const ACIDOTIC = [
  ['2744-1', 7.26],
  ['2019-8', 62],
  ['2703-7', 58],
  ['1960-4', 27],
] as const;

function acidotic(offsetsMin: readonly number[], extra: Extra = {}): Reading[] {
  return ACIDOTIC.map(([loinc, value], i) => reading(loinc, value, T0 + (offsetsMin[i] ?? 0) * MIN, extra));
}

function fields(samples: ReturnType<typeof groupBloodGases>): unknown[] {
  return samples.map((s) => [s.gas.specimen, s.gas.ph, s.gas.paco2MmHg, s.gas.pao2MmHg, s.gas.hco3MmolPerL]);
}

describe('groupBloodGases', () => {
  describe('by time window (no specimen or panel)', () => {
    it('keeps one sample whose values were filed seconds or minutes apart', () => {
      for (const offsets of [[0, 0, 0, 0], [0, 0.5, 1, 1.5], [0, 3, 7, 10], [10, 0, 4, 9]]) {
        expect(fields(groupBloodGases(acidotic(offsets), WINDOW))).toStrictEqual([['arterial', 7.26, 62, 58, 27]]);
      }
    });

    it('starts a new sample for a value more than the window after the first value', () => {
      const samples = groupBloodGases([...acidotic([0, 0, 0, 0]), reading('2744-1', 7.33, T0 + 11 * MIN)], WINDOW);
      expect(fields(samples)).toStrictEqual([
        ['arterial', 7.33, undefined, undefined, undefined],
        ['arterial', 7.26, 62, 58, 27],
      ]);
    });

    it('measures the window from the first value, so values every few minutes do not chain', () => {
      const pco2 = [0, 6, 12, 18, 24].map((m, i) => reading('2019-8', 50 + i, T0 + m * MIN));
      expect(groupBloodGases(pco2, WINDOW)).toHaveLength(3);
    });

    it('treats a window of 0 as exact time only', () => {
      expect(groupBloodGases(acidotic([0, 0, 1, 1]), 0)).toHaveLength(2);
    });

    it('carries the time of the earliest value (the collection time)', () => {
      const [sample] = groupBloodGases(acidotic([4, 0, 9, 2]), WINDOW);
      expect(sample?.gas.at).toBe(new Date(T0).toISOString());
      expect(sample?.atMs).toBe(T0);
    });
  });

  describe('by specimen and panel', () => {
    it('puts values tied by a panel or specimen into one sample whatever their times', () => {
      const samples = groupBloodGases(
        [reading('2744-1', 7.3, T0, { keys: ['panel:abg'] }), reading('2019-8', 55, T0 + 60 * MIN, { keys: ['panel:abg'] })],
        WINDOW,
      );
      expect(fields(samples)).toStrictEqual([['arterial', 7.3, 55, undefined, undefined]]);
      expect(samples[0]?.gas.at).toBe(new Date(T0).toISOString());
    });

    it('follows ties across keys: a panel member naming a specimen brings that specimen along', () => {
      const samples = groupBloodGases(
        [
          reading('2744-1', 7.3, T0, { keys: ['panel:abg'] }),
          reading('2019-8', 55, T0 + 30 * MIN, { keys: ['panel:abg', 'specimen:Specimen/s1'] }),
          reading('2703-7', 61, T0 + 45 * MIN, { keys: ['specimen:Specimen/s1'] }),
        ],
        WINDOW,
      );
      expect(fields(samples)).toStrictEqual([['arterial', 7.3, 55, 61, undefined]]);
    });

    it('never merges two specimens, even at the same moment', () => {
      const samples = groupBloodGases(
        [reading('2744-1', 7.3, T0, { keys: ['specimen:Specimen/s1'] }), reading('2744-1', 7.4, T0 + MIN, { keys: ['specimen:Specimen/s2'] })],
        WINDOW,
      );
      expect(samples).toHaveLength(2);
    });

    it('lets an untied value join a tied sample in its window', () => {
      const samples = groupBloodGases([reading('2744-1', 7.3, T0, { keys: ['panel:abg'] }), reading('1960-4', 31, T0 + 3 * MIN)], WINDOW);
      expect(fields(samples)).toStrictEqual([['arterial', 7.3, undefined, undefined, 31]]);
    });

    it('lets an untied value filed first be joined by a tied sample within the window', () => {
      const samples = groupBloodGases([reading('2744-1', 7.3, T0), reading('2019-8', 60, T0 + 4 * MIN, { keys: ['specimen:Specimen/s1'] })], WINDOW);
      expect(fields(samples)).toStrictEqual([['arterial', 7.3, 60, undefined, undefined]]);
    });

    it('puts an untied value with the nearer earlier of two tied samples', () => {
      const samples = groupBloodGases(
        [
          reading('2744-1', 7.3, T0, { keys: ['specimen:Specimen/s1'] }),
          reading('2744-1', 7.4, T0 + 5 * MIN, { keys: ['specimen:Specimen/s2'] }),
          reading('1960-4', 24, T0 + 6 * MIN),
        ],
        WINDOW,
      );
      expect(fields(samples)).toStrictEqual([
        ['arterial', 7.4, undefined, undefined, 24],
        ['arterial', 7.3, undefined, undefined, undefined],
      ]);
    });
  });

  describe('arterial and venous', () => {
    it('keeps arterial and venous values apart; unstated-specimen values join the arterial sample', () => {
      const samples = groupBloodGases([reading('2746-6', 7.29, T0), reading('2744-1', 7.34, T0 + 2 * MIN), reading('1963-8', 30, T0 + 4 * MIN)], WINDOW);
      expect(samples.map((s) => [s.gas.specimen, s.gas.ph, s.gas.hco3MmolPerL])).toStrictEqual([
        ['arterial', 7.34, 30],
        ['venous', 7.29, undefined],
      ]);
    });

    it('lets an unstated-specimen value join a venous sample when no arterial one is in its window', () => {
      // venous pCO2 LOINC 2021-4 (from memory); serum HCO3 1963-8 (check-values §6)
      const samples = groupBloodGases([reading('2746-6', 7.29, T0), reading('2021-4', 60, T0 + MIN), reading('1963-8', 29, T0 + 5 * MIN)], WINDOW);
      expect(samples.map((s) => [s.gas.specimen, s.gas.ph, s.gas.paco2MmHg, s.gas.hco3MmolPerL])).toStrictEqual([['venous', 7.29, 60, 29]]);
    });

    it('lets an arterial value join a sample begun by an unstated-specimen value', () => {
      const samples = groupBloodGases([reading('1963-8', 29, T0), reading('2744-1', 7.3, T0 + 2 * MIN)], WINDOW);
      expect(samples.map((s) => [s.gas.specimen, s.gas.ph, s.gas.hco3MmolPerL])).toStrictEqual([['arterial', 7.3, 29]]);
    });
  });

  describe('a field reported twice in one sample', () => {
    it('takes the value filed last (a corrected result), and keeps the collection time', () => {
      const first = reading('2019-8', 62, T0, { filedMs: T0 + MIN });
      const corrected = reading('2019-8', 65, T0, { filedMs: T0 + 20 * MIN, corrected: true });
      const [sample] = groupBloodGases([corrected, first, reading('2744-1', 7.26, T0)], WINDOW);
      expect(sample?.gas.paco2MmHg).toBe(65);
      expect(sample?.gas.at).toBe(new Date(T0).toISOString());
    });

    it('prefers a corrected status at the same filing time, whatever the list order', () => {
      const plain = reading('2744-1', 7.26, T0, { filedMs: T0 + MIN });
      const corrected = reading('2744-1', 7.24, T0, { filedMs: T0 + MIN, corrected: true });
      expect(groupBloodGases([plain, corrected], WINDOW)[0]?.gas.ph).toBe(7.24);
      expect(groupBloodGases([corrected, plain], WINDOW)[0]?.gas.ph).toBe(7.24);
    });
  });

  describe('edge cases', () => {
    it('gives an unknown-specimen sample for a lone serum bicarbonate', () => {
      expect(groupBloodGases([reading('1963-8', 33, T0)], WINDOW).map((s) => [s.gas.specimen, s.gas.hco3MmolPerL])).toStrictEqual([['unknown', 33]]);
    });

    it('gives nothing for no readings', () => {
      expect(groupBloodGases([], WINDOW)).toStrictEqual([]);
    });

    it('keeps the reported values under their display keys', () => {
      const [sample] = groupBloodGases([reading('2703-7', 60, T0), reading('1925-7', -3, T0)], WINDOW);
      expect(sample?.gas.reported).toStrictEqual({ pao2: { value: 60, unit: 'x' }, baseExcess: { value: -3, unit: 'x' } });
    });
  });

  describe('properties', () => {
    const offsets = fc.array(fc.double({ min: 0, max: WINDOW, noNaN: true }), { minLength: 4, maxLength: 4 });

    it('one sample filed at any times within the window, in any order, is one sample with all its values', () => {
      fc.assert(
        fc.property(offsets, fc.array(fc.nat(), { minLength: 4, maxLength: 4 }), (mins, order) => {
          const readings = acidotic(mins.map((m) => Math.round(m * MIN) / MIN));
          const shuffled = readings.map((r, i) => ({ r, k: order[i] ?? 0 })).sort((a, b) => a.k - b.k).map((x) => x.r);
          const samples = groupBloodGases(shuffled, WINDOW);
          expect(fields(samples)).toStrictEqual([['arterial', 7.26, 62, 58, 27]]);
          expect(samples[0]?.atMs).toBe(Math.min(...readings.map((r) => r.atMs)));
        }),
      );
    });

    it('no value is lost and no sample mixes specimens or reaches beyond its window', () => {
      const FIELD = { ph: 'ph', po2: 'pao2MmHg', pco2: 'paco2MmHg', hco3: 'hco3MmolPerL', baseExcess: 'baseExcessMmolPerL' } as const;
      const arb = fc.array(
        fc.record({
          loinc: fc.constantFrom('2744-1', '2019-8', '2703-7', '1960-4', '2746-6', '2705-2', '1963-8'),
          minute: fc.integer({ min: 0, max: 120 }),
        }),
        { maxLength: 20 },
      );
      fc.assert(
        fc.property(arb, (items) => {
          // distinct values, so each value in a sample names the one reading it came from
          const readings = items.map((x, i) => reading(x.loinc, i + 1, T0 + x.minute * MIN));
          const samples = groupBloodGases(readings, WINDOW);
          const byValue = new Map(readings.map((r) => [r.value, r]));
          const specimenOf = (r: Reading): string => (r.code.kind === 'gas' ? r.code.specimen : 'none');
          for (const s of samples) {
            for (const key of Object.values(FIELD)) {
              const value = s.gas[key];
              if (value === undefined) continue;
              const from = byValue.get(value);
              expect(from).toBeDefined();
              if (from === undefined) continue;
              expect(from.atMs - s.atMs).toBeGreaterThanOrEqual(0);
              expect(from.atMs - s.atMs).toBeLessThanOrEqual(WINDOW * MIN);
              expect([s.gas.specimen, 'unknown']).toContain(specimenOf(from));
            }
          }
          for (const r of readings) {
            if (r.code.kind !== 'gas') continue;
            const field = FIELD[r.code.field];
            const home = samples.filter(
              (s) => s.gas[field] !== undefined && r.atMs - s.atMs >= 0 && r.atMs - s.atMs <= WINDOW * MIN,
            );
            expect(home.some((s) => specimenOf(r) === 'unknown' || s.gas.specimen === specimenOf(r))).toBe(true);
          }
        }),
      );
    });
  });
});
