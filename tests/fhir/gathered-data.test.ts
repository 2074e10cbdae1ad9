import { describe, expect, it } from 'vitest';
import { asFhirResource } from '../../src/fhir/gathered-data.js';

describe('asFhirResource', () => {
  it('accepts any object with a FHIR resourceType, keeping it as sent', () => {
    const resource = { resourceType: 'Observation', id: 'o1', valueQuantity: { value: 95 } };
    expect(asFhirResource(resource)).toBe(resource);
  });

  describe('edge cases', () => {
    it.each([
      [null],
      ['Observation'],
      [['Observation']],
      [{ id: 'x' }],
      [{ resourceType: 7 }],
      [{ resourceType: 'observation' }],
      [{ resourceType: 'Observation', id: '' }],
      [{ resourceType: 'Observation', id: 5 }],
    ])('refuses %j', (value) => {
      expect(asFhirResource(value)).toBeUndefined();
    });
  });
});
