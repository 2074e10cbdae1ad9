import { describe, expect, it } from 'vitest';
import { belongsToPatient } from '../../src/http/same-patient.js';

const ID = 'lb-pt-0417';

describe('belongsToPatient', () => {
  it.each([
    ['a Patient with the id', { resourceType: 'Patient', id: ID }, true],
    ['a Patient with another id', { resourceType: 'Patient', id: 'lb-pt-0999' }, false],
    ['an Observation for the patient', { resourceType: 'Observation', subject: { reference: `Patient/${ID}` } }, true],
    ['an Observation for another patient', { resourceType: 'Observation', subject: { reference: 'Patient/lb-pt-0999' } }, false],
    // FHIR R4 §References: a reference may be absolute and may carry a version
    ['an absolute reference', { resourceType: 'Condition', subject: { reference: `https://fhir.larkspur-bay.example/r4/Patient/${ID}` } }, true],
    ['a versioned reference', { resourceType: 'Condition', subject: { reference: `Patient/${ID}/_history/3` } }, true],
    ['a subject that is a Group', { resourceType: 'Observation', subject: { reference: 'Group/ward-7' } }, false],
    ['a reference with a longer id', { resourceType: 'Observation', subject: { reference: `Patient/${ID}7` } }, false],
  ])('judges %s', (_what, resource, expected) => {
    expect(belongsToPatient(resource, ID)).toBe(expected);
  });

  describe('edge cases', () => {
    it('keeps a resource that names no patient (it cannot be told apart)', () => {
      expect(belongsToPatient({ resourceType: 'Observation' }, ID)).toBe(true);
      expect(belongsToPatient({ resourceType: 'Observation', subject: { display: 'Mr E. Harrowgate' } }, ID)).toBe(true);
      expect(belongsToPatient({ resourceType: 'Patient' }, ID)).toBe(true);
    });

    it('reads NutritionOrder-style `patient` when there is no `subject`', () => {
      expect(belongsToPatient({ resourceType: 'NutritionOrder', patient: { reference: 'Patient/lb-pt-0999' } }, ID)).toBe(false);
    });
  });
});
