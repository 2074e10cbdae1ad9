import { describe, expect, it } from 'vitest';
import { oxygenOrderType } from '../../src/fhir/is-oxygen-order.js';
import { RXNORM, SNOMED, oxygenDeviceRequest, oxygenMedicationRequest, oxygenServiceRequest } from './helpers/larkspur-bay.js';

describe('oxygenOrderType', () => {
  it.each([
    // Codes: check-values §6 (V)
    ['MedicationRequest, SNOMED CT 24099007 oxygen', oxygenMedicationRequest('m1'), 'MedicationRequest'],
    [
      'MedicationRequest, RxNorm 7806 oxygen',
      { resourceType: 'MedicationRequest', id: 'm2', medicationCodeableConcept: { coding: [{ system: RXNORM, code: '7806' }] } },
      'MedicationRequest',
    ],
    ['MedicationRequest, text only', { resourceType: 'MedicationRequest', medicationCodeableConcept: { text: 'Oxygen gas' } }, 'MedicationRequest'],
    [
      'MedicationRequest, a reference display',
      { resourceType: 'MedicationRequest', medicationReference: { reference: 'Medication/o2', display: 'Oxygen' } },
      'MedicationRequest',
    ],
    [
      'MedicationRequest, a contained Medication',
      {
        resourceType: 'MedicationRequest',
        contained: [{ resourceType: 'Medication', id: 'med', code: { coding: [{ system: SNOMED, code: '24099007' }] } }],
        medicationReference: { reference: '#med' },
      },
      'MedicationRequest',
    ],
    ['ServiceRequest, SNOMED CT 57485005 oxygen therapy', oxygenServiceRequest('s1'), 'ServiceRequest'],
    [
      'ServiceRequest, SNOMED CT 371907003 oxygen by nasal cannula',
      { resourceType: 'ServiceRequest', code: { coding: [{ system: SNOMED, code: '371907003' }] } },
      'ServiceRequest',
    ],
    ['ServiceRequest, text only', { resourceType: 'ServiceRequest', code: { text: 'Supplemental O2' } }, 'ServiceRequest'],
    ['DeviceRequest, a Venturi mask', oxygenDeviceRequest('d1', 'Venturi mask 28%'), 'DeviceRequest'],
    ['DeviceRequest, an oxygen device by reference', { resourceType: 'DeviceRequest', codeReference: { display: 'Oxygen concentrator' } }, 'DeviceRequest'],
  ])('recognises a %s', (_what, resource, type) => {
    expect(oxygenOrderType(resource)).toBe(type);
  });

  describe('edge cases', () => {
    it.each([
      ['a MedicationRequest for another drug', { resourceType: 'MedicationRequest', medicationCodeableConcept: { text: 'Amoxicillin 500 mg' } }],
      ['a ServiceRequest for pulse oximetry', { resourceType: 'ServiceRequest', code: { text: 'Oxygen saturation monitoring' } }],
      ['a ServiceRequest for a chest X-ray', { resourceType: 'ServiceRequest', code: { text: 'Chest X-ray' } }],
      ['a DeviceRequest for a walking frame', oxygenDeviceRequest('d2', 'Walking frame')],
      ['a NutritionOrder', { resourceType: 'NutritionOrder', oralDiet: { type: [{ text: 'Oxygen-rich diet' }] } }],
      ['an Observation', { resourceType: 'Observation', code: { text: 'Oxygen therapy' } }],
      ['a request with garbage fields', { resourceType: 'MedicationRequest', medicationCodeableConcept: 'oxygen', contained: 'x' }],
    ])('does not take %s for an oxygen order', (_what, resource) => {
      expect(oxygenOrderType(resource)).toBeUndefined();
    });

    it('takes an oxygen therapy order with saturation words as therapy', () => {
      expect(oxygenOrderType({ resourceType: 'ServiceRequest', code: { text: 'Oxygen therapy to oxygen saturation target' } })).toBe('ServiceRequest');
    });
  });
});
