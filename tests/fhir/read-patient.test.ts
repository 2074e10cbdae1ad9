import { describe, expect, it } from 'vitest';
import { ageInYears, readPatient } from '../../src/fhir/read-patient.js';

describe('ageInYears', () => {
  const now = new Date('2026-06-15T10:00:00Z');

  // Whole years by calendar arithmetic (common practice). A partial date is read as its last day,
  // so the age is one the patient has certainly reached.
  it.each([
    ['1950-06-10', 76], // birthday already passed this year
    ['1950-06-15', 76], // birthday today
    ['1950-06-16', 75], // birthday tomorrow
    ['1950-06', 75], // could be born any day in June: 75 is certain
    ['1950-05', 76], // all of May has passed
    ['1950', 75], // could be born on 31 December
    ['1949', 76],
    ['2026-06-15', 0],
    ['1950-06-10T08:30:00+01:00', 76],
  ])('gives %s → %i years', (birthDate, age) => {
    expect(ageInYears(birthDate, now)).toBe(age);
  });

  describe('edge cases', () => {
    it.each([['2027-01-01'], ['1950-13'], ['1950-02-30'], ['15/06/1950'], [''], [1950], [null]])(
      'gives no age for %s',
      (birthDate) => {
        expect(ageInYears(birthDate, now)).toBeUndefined();
      },
    );

    it('reads 29 February against a year without one', () => {
      expect(ageInYears('2000-02-29', new Date('2025-02-28T12:00:00Z'))).toBe(24);
      expect(ageInYears('2000-02-29', new Date('2025-03-01T12:00:00Z'))).toBe(25);
    });
  });
});

describe('readPatient', () => {
  const now = new Date('2026-12-01T12:00:00Z');

  it('reads the age of an invented Larkspur Bay patient', () => {
    expect(readPatient({ resourceType: 'Patient', id: 'lbgh-0001', birthDate: '1951-03-14' }, now)).toStrictEqual({
      ageYears: 75,
      notes: [],
    });
  });

  describe('edge cases', () => {
    it('notes a birth date in the future', () => {
      expect(readPatient({ resourceType: 'Patient', id: 'p', birthDate: '2030-01-01' }, now)).toStrictEqual({
        ageYears: undefined,
        notes: [{ what: 'Age', reason: 'implausible', detail: "Birth date '2030-01-01' is not a date on or before today.", reference: 'Patient/p' }],
      });
    });

    it('gives no age and no note without a patient or a birth date', () => {
      expect(readPatient(undefined, now)).toStrictEqual({ ageYears: undefined, notes: [] });
      expect(readPatient({ resourceType: 'Patient', birthDate: 1950 }, now)).toStrictEqual({ ageYears: undefined, notes: [] });
      expect(readPatient({ resourceType: 'Observation', birthDate: '1950' }, now)).toStrictEqual({ ageYears: undefined, notes: [] });
    });
  });
});
