import { describe, expect, it } from 'vitest';
import { fhirSchemaErrors } from './fhir-schema.js';

// Invented Larkspur Bay General Hospital demo resources.
const serviceRequest = {
  resourceType: 'ServiceRequest',
  id: 'lb-o2-1',
  status: 'draft',
  intent: 'order',
  code: { coding: [{ system: 'http://snomed.info/sct', code: '57485005', display: 'Oxygen therapy' }] },
  subject: { reference: 'Patient/lb-pt-0001' },
};

describe('fhirSchemaErrors', () => {
  it('accepts a well-formed R4 ServiceRequest', () => {
    expect(fhirSchemaErrors(serviceRequest)).toStrictEqual([]);
  });

  it('rejects a ServiceRequest without subject', () => {
    // R4 JSON schema: ServiceRequest.subject is required (cds-hooks.md §9)
    const { subject: _subject, ...withoutSubject } = serviceRequest;
    expect(fhirSchemaErrors(withoutSubject)).toStrictEqual(["(root) should have required property 'subject'"]);
  });

  it('rejects the STU3 dosage shape in an R4 MedicationRequest', () => {
    // cds-hooks.md §9: doseQuantity directly in dosageInstruction is STU3, rejected by R4
    const stu3Shape = {
      resourceType: 'MedicationRequest',
      id: 'lb-mr-1',
      status: 'draft',
      intent: 'order',
      medicationCodeableConcept: { text: 'Oxygen' },
      subject: { reference: 'Patient/lb-pt-0001' },
      dosageInstruction: [{ doseQuantity: { value: 2, unit: 'L/min' } }],
    };
    expect(fhirSchemaErrors(stu3Shape)).toStrictEqual([
      ".dosageInstruction[0] should NOT have additional properties 'doseQuantity'",
    ]);
  });

  it('keeps validating other types correctly after reporting errors', () => {
    // The bundled validator class mutates its shared schema on error (cds-hooks.md §9); ours must not.
    expect(fhirSchemaErrors({ resourceType: 'ServiceRequest', id: 'x' })).not.toStrictEqual([]);
    expect(fhirSchemaErrors({ resourceType: 'Patient', id: 'lb-pt-0001' })).toStrictEqual([]);
    expect(fhirSchemaErrors(serviceRequest)).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('reports a missing or unknown resourceType', () => {
      expect(fhirSchemaErrors({ id: 'x' })).toStrictEqual(['(root) has no resourceType']);
      expect(fhirSchemaErrors({ resourceType: 'OxygenThing' })).toStrictEqual([
        "(root) resourceType 'OxygenThing' is not an R4 resource type",
      ]);
    });

    it('lets a bogus status code through, which the schema cannot check', () => {
      // cds-hooks.md §9: the schema does not enumerate request status codes, so a bogus one passes
      expect(fhirSchemaErrors({ ...serviceRequest, status: 'bogus' })).toStrictEqual([]);
    });
  });
});
