import { describe, expect, it } from 'vitest';
import { arrayAt, codingsOf, hasCode, objectsAt, quantityOf, stringAt, tidyNumber, unitOf, wordsOf } from '../../src/fhir/json.js';

describe('json narrowing', () => {
  it('reads the words of a CodeableConcept: text first, then each display once', () => {
    const concept = { text: 'COPD', coding: [{ display: 'Chronic obstructive lung disease' }, { display: 'COPD' }, { code: 'x' }] };
    expect(wordsOf(concept)).toStrictEqual(['COPD', 'Chronic obstructive lung disease']);
  });

  it('keeps a coding whose display has the wrong type, dropping only that field', () => {
    expect(codingsOf({ coding: [{ system: 'http://snomed.info/sct', code: '13645005', display: 7 }] })).toStrictEqual([
      { system: 'http://snomed.info/sct', code: '13645005', display: undefined },
    ]);
  });

  it('finds a code only in its own system', () => {
    const concept = { coding: [{ system: 'http://snomed.info/sct', code: ' 24099007 ' }] };
    expect([hasCode(concept, 'http://snomed.info/sct', '24099007'), hasCode(concept, 'http://loinc.org', '24099007')]).toStrictEqual([true, false]);
  });

  it('takes the UCUM code over the display unit', () => {
    expect(unitOf({ value: 1, unit: 'millimetres of mercury', system: 'http://unitsofmeasure.org', code: 'mm[Hg]' })).toBe('mm[Hg]');
    expect(unitOf({ value: 1, unit: 'mmHg', system: 'urn:local-units', code: 'MMHG' })).toBe('mmHg');
    expect(unitOf({ value: 1 })).toBe('');
  });

  it('removes float noise left by a conversion', () => {
    expect(tidyNumber(0.28 * 100)).toBe(28);
  });

  it('gives every number its 12-significant-digit value, whole numbers included', () => {
    // Whole numbers skip the string round trip; they must come out as the round trip gives them.
    const roundTrip = (value: number): number => Number(value.toPrecision(12));
    const values = [0, -0, 1, -1, 2, 15, 95, 100, 760, 999_999_999_999, 1e12, 1e12 + 1, 123_456_789_012_345, 2 ** 53, -(2 ** 53) - 2, 1e21, 0.5, 7.35, 88.5, 1 / 3, 0.1 + 0.2, 1e-7, Number.MAX_VALUE];
    for (const value of values) {
      expect(Object.is(tidyNumber(value), roundTrip(value)), String(value)).toBe(true);
    }
    for (const value of [Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY]) {
      expect(Object.is(tidyNumber(value), roundTrip(value)), String(value)).toBe(true);
    }
  });

  describe('edge cases', () => {
    it.each([[null], ['x'], [[]], [5], [{ coding: 'x' }]])('reads nothing from %j', (value) => {
      const read = [arrayAt(value, 'coding'), objectsAt(value, 'coding'), stringAt(value, 'text'), codingsOf(value), wordsOf(value)];
      expect(read).toStrictEqual([[], [], undefined, [], []]);
    });

    it('treats a blank string as absent', () => {
      expect(stringAt({ text: '   ' }, 'text')).toBeUndefined();
    });

    it.each([[{ value: '95' }], [{ value: Number.NaN }], [{ value: null }], [{}], [null]])('refuses %j as a quantity', (value) => {
      expect(quantityOf(value)).toBeUndefined();
    });
  });
});
