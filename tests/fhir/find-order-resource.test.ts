import { describe, expect, it } from 'vitest';
import { findDraftResource } from '../../src/fhir/find-order-resource.js';
import { bundle, oxygenMedicationRequest, oxygenServiceRequest } from './helpers/larkspur-bay.js';

describe('findDraftResource', () => {
  const mr = oxygenMedicationRequest('103');
  const sr = oxygenServiceRequest('103'); // the same id under another type is another resource
  const drafts = bundle([mr, sr]);

  it('finds a draft by Type/id, as CDS Hooks selections name it (cds-hooks.md §4)', () => {
    expect(findDraftResource(drafts, 'MedicationRequest/103')).toBe(mr);
    expect(findDraftResource(drafts, 'ServiceRequest/103')).toBe(sr);
  });

  it('finds a draft by an absolute URL ending in Type/id', () => {
    expect(findDraftResource(drafts, 'https://ehr.larkspur.example/fhir/ServiceRequest/103')).toBe(sr);
  });

  it('finds a draft without an id by its entry fullUrl', () => {
    const noId = { resourceType: 'ServiceRequest', code: { text: 'Oxygen therapy' } };
    const withUrl = { resourceType: 'Bundle', entry: [{ fullUrl: 'urn:uuid:4f1c0c2e-6a4e-4b8e-9d43-1b8f2a8c9e11', resource: noId }] };
    expect(findDraftResource(withUrl, 'urn:uuid:4f1c0c2e-6a4e-4b8e-9d43-1b8f2a8c9e11')).toBe(noId);
  });

  describe('edge cases', () => {
    it.each([
      ['an unknown id', drafts, 'MedicationRequest/999'],
      ['a bare id', drafts, '103'],
      ['an empty reference', drafts, ''],
      ['a null bundle', null, 'MedicationRequest/103'],
      ['a string bundle', 'MedicationRequest/103', 'MedicationRequest/103'],
      ['a bundle of garbage', { resourceType: 'Bundle', entry: [1, null, { resource: [] }] }, 'MedicationRequest/103'],
    ])('finds nothing for %s', (_what, bundleValue, reference) => {
      expect(findDraftResource(bundleValue, reference)).toBeUndefined();
    });

    it('does not match a longer id that merely ends the same way', () => {
      expect(findDraftResource(bundle([oxygenMedicationRequest('1103')]), 'MedicationRequest/103')).toBeUndefined();
    });
  });
});
