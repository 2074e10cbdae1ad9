import { describe, expect, it } from 'vitest';
import { readEncounterLocationIds, readEncounterUnit } from '../../src/fhir/read-encounter.js';

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

describe('readEncounterLocationIds', () => {
  it('reads the reference and identifier of the active location, not of past ones', () => {
    const encounter = {
      resourceType: 'Encounter',
      location: [
        { status: 'completed', location: { reference: 'Location/lbgh-ed', display: 'Emergency Department' } },
        {
          status: 'active',
          location: {
            reference: 'Location/lbgh-icu',
            identifier: { system: 'https://larkspur-bay.example.org/locations', value: 'ICU' },
            display: 'Intensive Care Unit',
          },
        },
      ],
    };
    expect(readEncounterLocationIds(encounter)).toStrictEqual([
      'Location/lbgh-icu',
      'https://larkspur-bay.example.org/locations|ICU',
      'ICU',
    ]);
  });

  it('reads locations without a status when none is active, and skips planned ones', () => {
    const encounter = {
      resourceType: 'Encounter',
      location: [
        { status: 'planned', location: { reference: 'Location/lbgh-ward-7' } },
        { location: { identifier: { value: 'W4' } } },
      ],
    };
    expect(readEncounterLocationIds(encounter)).toStrictEqual(['W4']);
  });

  it('lists the ids of several current locations once each, in the order first named', () => {
    const encounter = {
      resourceType: 'Encounter',
      location: [
        { location: { reference: 'Location/lbgh-hdu', identifier: { value: 'HDU' } } },
        { location: { reference: 'Location/lbgh-hdu-bay-2', identifier: { system: 'urn:lbgh:beds', value: 'HDU' } } },
        { location: { reference: 'Location/lbgh-hdu' } },
      ],
    };
    expect(readEncounterLocationIds(encounter)).toStrictEqual(['Location/lbgh-hdu', 'HDU', 'Location/lbgh-hdu-bay-2', 'urn:lbgh:beds|HDU']);
  });

  describe('edge cases', () => {
    it('gives no ids for a missing or odd encounter', () => {
      expect(readEncounterLocationIds(undefined)).toStrictEqual([]);
      expect(readEncounterLocationIds({ resourceType: 'Encounter', location: 'ICU' })).toStrictEqual([]);
      expect(readEncounterLocationIds({ resourceType: 'Patient', location: [{ location: { reference: 'Location/x' } }] })).toStrictEqual([]);
    });
  });
});
