import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { ICD10_CONDITION_PREFIXES, LOINC_OBSERVATIONS, OXYGEN_CODES, SNOMED_CONDITIONS, isIcd10System } from '../../src/fhir/codes.js';

const doc = readFileSync(new URL('../../docs/fhir-input.md', import.meta.url), 'utf8');

describe('code tables', () => {
  it('read exactly the LOINC codes docs/fhir-input.md lists', () => {
    const documented = [...doc.matchAll(/^\| (\d{1,5}-\d) \|/gm)].map((m) => m[1]).sort();
    expect(documented).toStrictEqual(Object.keys(LOINC_OBSERVATIONS).sort());
  });

  it.each([
    // check-values §6, LOINC (V except where marked)
    ['59408-5', 'spo2'],
    ['2708-6', 'spo2'],
    ['3150-0', 'fio2'],
    ['3151-8', 'o2-flow'],
    ['9279-1', 'resp-rate'],
    ['718-7', 'haemoglobin'],
    ['2703-7', 'gas'],
    ['2019-8', 'gas'],
    ['2744-1', 'gas'],
    ['1960-4', 'gas'],
    ['1963-8', 'gas'],
    ['1925-7', 'gas'],
    ['11555-0', 'gas'],
    ['2746-6', 'gas'],
    ['2705-2', 'gas'],
    ['2021-4', 'gas'], // check-values §6: M (from memory)
    ['11557-6', 'gas'],
  ])('maps LOINC %s to %s', (code, kind) => {
    expect(LOINC_OBSERVATIONS[code]?.kind).toBe(kind);
  });

  it('holds the oxygen codes of check-values §6', () => {
    // SNOMED CT 24099007 oxygen, 57485005 oxygen therapy, 371907003 by nasal cannula; RxNorm 7806 (V)
    expect(OXYGEN_CODES).toStrictEqual({
      oxygenSubstance: '24099007',
      oxygenRxnorm: '7806',
      oxygenTherapy: '57485005',
      oxygenByNasalCannula: '371907003',
    });
  });

  it('lists every SNOMED CT condition code in docs/fhir-input.md', () => {
    for (const code of Object.keys(SNOMED_CONDITIONS)) {
      expect(doc).toContain(code);
    }
  });

  it('lists every ICD-10 prefix in docs/fhir-input.md', () => {
    const dotted = (p: string): string => (p.length > 3 ? `${p.slice(0, 3)}.${p.slice(3)}` : p);
    for (const [prefix] of ICD10_CONDITION_PREFIXES) {
      expect(doc).toContain(dotted(prefix));
    }
  });

  describe('edge cases', () => {
    it.each([
      ['http://hl7.org/fhir/sid/icd-10', true],
      ['http://hl7.org/fhir/sid/icd-10-cm', true],
      ['http://snomed.info/sct', false],
      [undefined, false],
    ])('treats %s as ICD-10: %s', (system, expected) => {
      expect(isIcd10System(system)).toBe(expected);
    });
  });
});
