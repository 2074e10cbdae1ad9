import { describe, expect, it } from 'vitest';
import { LOINC_OBSERVATIONS } from '../../src/fhir/codes.js';
import { groupBloodGases } from '../../src/fhir/read-blood-gases.js';
import type { Reading } from '../../src/fhir/read-observation-values.js';

function reading(loinc: string, value: number, atMs: number, sampleKey?: string): Reading {
  const code = LOINC_OBSERVATIONS[loinc];
  if (code === undefined) throw new Error(`no code ${loinc}`);
  return { code, value, reported: { value, unit: 'x' }, at: new Date(atMs).toISOString(), atMs, reference: `Observation/${loinc}-${atMs}`, sampleKey };
}

const T0 = Date.UTC(2026, 11, 1, 10, 0);
const T1 = Date.UTC(2026, 11, 1, 11, 0);

describe('groupBloodGases', () => {
  it('puts values with the same time into one sample, newest sample first', () => {
    const samples = groupBloodGases([reading('2744-1', 7.3, T0), reading('2019-8', 55, T0), reading('2744-1', 7.38, T1)]);
    expect(samples.map((s) => [s.gas.ph, s.gas.paco2MmHg, s.gas.specimen])).toStrictEqual([
      [7.38, undefined, 'arterial'],
      [7.3, 55, 'arterial'],
    ]);
  });

  it('puts values tied by a panel or specimen into one sample whatever their times', () => {
    const samples = groupBloodGases([reading('2744-1', 7.3, T0, 'panel:abg'), reading('2019-8', 55, T1, 'panel:abg')]);
    expect(samples).toHaveLength(1);
    expect(samples[0]?.gas).toMatchObject({ ph: 7.3, paco2MmHg: 55, at: new Date(T1).toISOString() });
  });

  it('lets an untied value join the one panel sample taken at its time', () => {
    const samples = groupBloodGases([reading('2744-1', 7.3, T0, 'panel:abg'), reading('1960-4', 31, T0)]);
    expect(samples.map((s) => [s.gas.ph, s.gas.hco3MmolPerL])).toStrictEqual([[7.3, 31]]);
  });

  it('keeps arterial and venous values apart; unstated-specimen values join the arterial sample', () => {
    const samples = groupBloodGases([reading('2746-6', 7.29, T0), reading('2744-1', 7.34, T0), reading('1963-8', 30, T0)]);
    expect(samples.map((s) => [s.gas.specimen, s.gas.ph, s.gas.hco3MmolPerL])).toStrictEqual([
      ['arterial', 7.34, 30],
      ['venous', 7.29, undefined],
    ]);
  });

  describe('edge cases', () => {
    it('gives an unknown-specimen sample for a lone serum bicarbonate', () => {
      expect(groupBloodGases([reading('1963-8', 33, T0)]).map((s) => [s.gas.specimen, s.gas.hco3MmolPerL])).toStrictEqual([['unknown', 33]]);
    });

    it('gives nothing for no readings', () => {
      expect(groupBloodGases([])).toStrictEqual([]);
    });

    it('keeps the reported values under their display keys', () => {
      const [sample] = groupBloodGases([reading('2703-7', 60, T0), reading('1925-7', -3, T0)]);
      expect(sample?.gas.reported).toStrictEqual({ pao2: { value: 60, unit: 'x' }, baseExcess: { value: -3, unit: 'x' } });
    });
  });
});
