import { describe, expect, it } from 'vitest';
import { readEncounterUnit } from '../../src/fhir/read-encounter.js';

describe('readEncounterUnit', () => {
  it('reads the active location of an invented Larkspur Bay encounter', () => {
    const encounter = {
      resourceType: 'Encounter',
      id: 'e1',
      location: [
        { status: 'completed', location: { display: 'Larkspur Bay General Hospital, Emergency Department' } },
        { status: 'active', location: { display: 'Larkspur Bay General Hospital, Ward 4B (Respiratory)' } },
      ],
    };
    expect(readEncounterUnit(encounter)).toBe('Larkspur Bay General Hospital, Ward 4B (Respiratory)');
  });

  it('falls back to the first named location, then to serviceType.text', () => {
    expect(readEncounterUnit({ resourceType: 'Encounter', location: [{ location: {} }, { location: { display: 'Ward 2' } }] })).toBe('Ward 2');
    expect(readEncounterUnit({ resourceType: 'Encounter', serviceType: { text: 'Acute medicine' } })).toBe('Acute medicine');
  });

  describe('edge cases', () => {
    it('gives undefined for a missing or odd encounter', () => {
      expect(readEncounterUnit(undefined)).toBeUndefined();
      expect(readEncounterUnit({ resourceType: 'Encounter', location: 'Ward 2', serviceType: [] })).toBeUndefined();
      expect(readEncounterUnit({ resourceType: 'Patient', serviceType: { text: 'x' } })).toBeUndefined();
    });
  });
});
