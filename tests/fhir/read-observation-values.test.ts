import { describe, expect, it } from 'vitest';
import { observationCodeOf, readObservationValues } from '../../src/fhir/read-observation-values.js';
import type { SetAsideNote } from '../../src/core/types.js';
import { LOINC, observation } from './helpers/larkspur-bay.js';

describe('readObservationValues', () => {
  it('reads the value with its time, reference and panel', () => {
    const notes: SetAsideNote[] = [];
    const obs = observation('m1', '2019-8', 6.0, 'kPa', '2026-12-01T10:00:00Z');
    const [r] = readObservationValues(obs, new Map([['Observation/m1', 'abg']]), notes);
    expect(r).toMatchObject({ at: '2026-12-01T10:00:00Z', atMs: Date.UTC(2026, 11, 1, 10), reference: 'Observation/m1', sampleKeys: ['panel:abg'] });
    expect(r?.value).toBeCloseTo(45.0, 1); // 6.0 kPa = 45 mmHg (BTS 2017 hypercapnia threshold; check-values 3g)
    expect(notes).toStrictEqual([]);
  });

  it('takes the time from effectivePeriod.end, else issued', () => {
    const withPeriod = { ...observation('a', '9279-1', 20, '/min', 'x'), effectiveDateTime: undefined, effectivePeriod: { start: '2026-12-01T09:00:00Z', end: '2026-12-01T09:05:00Z' } };
    const withIssued = { ...observation('b', '9279-1', 20, '/min', 'x'), effectiveDateTime: undefined, issued: '2026-12-01T09:10:00Z' };
    const times = [withPeriod, withIssued].map((o) => readObservationValues(o, new Map(), [])[0]?.at);
    expect(times).toStrictEqual(['2026-12-01T09:05:00Z', '2026-12-01T09:10:00Z']);
  });

  it('groups by specimen reference when no panel lists the value', () => {
    const obs = observation('s', '2744-1', 7.35, '[pH]', '2026-12-01T10:00:00Z', { specimen: { reference: 'Specimen/abg-7' } });
    expect(readObservationValues(obs, new Map(), [])[0]?.sampleKeys).toStrictEqual(['specimen:Specimen/abg-7']);
  });

  it('keeps both ties when a panel member also names its specimen', () => {
    const obs = observation('m1', '2744-1', 7.35, '[pH]', '2026-12-01T10:00:00Z', { specimen: { reference: 'Specimen/abg-7' } });
    expect(readObservationValues(obs, new Map([['Observation/m1', 'abg']]), [])[0]?.sampleKeys).toStrictEqual([
      'panel:abg',
      'specimen:Specimen/abg-7',
    ]);
  });

  it('reads the filing time from issued, else the effective time, and marks corrected or amended results', () => {
    const at = '2026-12-01T10:00:00Z';
    const issued = observation('i', '2019-8', 60, 'mm[Hg]', at, { issued: '2026-12-01T10:07:30Z', status: 'corrected' });
    const plain = observation('p', '2019-8', 60, 'mm[Hg]', at);
    const amended = observation('a', '2019-8', 60, 'mm[Hg]', at, { status: 'amended' });
    expect(readObservationValues(issued, new Map(), [])[0]).toMatchObject({ atMs: Date.UTC(2026, 11, 1, 10), filedMs: Date.UTC(2026, 11, 1, 10, 7, 30), corrected: true });
    expect(readObservationValues(plain, new Map(), [])[0]).toMatchObject({ filedMs: Date.UTC(2026, 11, 1, 10), corrected: false });
    expect(readObservationValues(amended, new Map(), [])[0]?.corrected).toBe(true);
  });

  describe('edge cases', () => {
    it('reads nothing, silently, from an observation with no value (dataAbsentReason)', () => {
      const notes: SetAsideNote[] = [];
      const obs = { ...observation('d', '59408-5', 0, '%', '2026-12-01T10:00:00Z'), valueQuantity: undefined, dataAbsentReason: { text: 'Probe off' } };
      delete (obs as Record<string, unknown>)['valueQuantity'];
      expect(readObservationValues(obs, new Map(), notes)).toStrictEqual([]);
      expect(notes).toStrictEqual([]);
    });

    // Observation.value[x] (FHIR R4, from memory): a result stated in a form other than a Quantity is
    // noted as unreadable; an Observation stating no value at all is read silently as nothing.
    it.each([
      ['valueString', 'negative', ['unrecognised']],
      ['valueCodeableConcept', { text: 'Probe off' }, ['unrecognised']],
      ['valueInteger', 94, ['unrecognised']],
      ['note', [{ text: 'Probe off' }], []],
    ])('with %s and no valueQuantity notes %j', (key, value, reasons) => {
      const notes: SetAsideNote[] = [];
      const obs: Record<string, unknown> = { ...observation('v', '59408-5', 0, '%', '2026-12-01T10:00:00Z'), [key]: value };
      delete obs['valueQuantity'];
      expect(readObservationValues(obs as typeof obs & { resourceType: string }, new Map(), notes)).toStrictEqual([]);
      expect(notes.map((n) => n.reason)).toStrictEqual(reasons);
    });

    it('recognises a code only with the LOINC system', () => {
      expect(observationCodeOf({ coding: [{ system: LOINC, code: '2708-6' }] })?.kind).toBe('spo2');
      expect(observationCodeOf({ coding: [{ system: 'urn:local', code: '2708-6' }] })).toBeUndefined();
    });
  });
});
