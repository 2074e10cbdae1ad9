import { describe, expect, it } from 'vitest';
import { pruneEmpty, textSlots } from '../../src/fhir/text-slots.js';

describe('textSlots', () => {
  it('lists the words of a MedicationRequest the reader reads', () => {
    const resource = {
      resourceType: 'MedicationRequest',
      dosageInstruction: [{ text: 'a', patientInstruction: 'b' }, { text: 7 }],
      note: [{ text: 'c' }],
      medicationCodeableConcept: { text: 'Oxygen' },
    };
    expect(textSlots(resource).map((s) => [s.key, s.text])).toStrictEqual([
      ['text', 'a'],
      ['patientInstruction', 'b'],
      ['text', 'c'],
      ['text', 'Oxygen'],
    ]);
  });

  it('lists the words of a ServiceRequest and a DeviceRequest', () => {
    const sr = { resourceType: 'ServiceRequest', orderDetail: [{ text: 'a' }], patientInstruction: 'b', note: [{ text: 'c' }], code: { text: 'd' } };
    const dr = { resourceType: 'DeviceRequest', parameter: [{ valueCodeableConcept: { text: 'a' } }], note: [{ text: 'b' }], codeCodeableConcept: { text: 'c' } };
    expect(textSlots(sr).map((s) => s.text)).toStrictEqual(['a', 'b', 'c', 'd']);
    expect(textSlots(dr).map((s) => s.text)).toStrictEqual(['a', 'b', 'c']);
  });

  it('lists a concept’s text, then each coding’s display with its concept, and skips what is not an object', () => {
    // FHIR R4 CodeableConcept (from memory): `text`, and `coding[]` whose items may carry a `display`.
    const detail = { text: 'a', coding: [{ display: 'b' }, 'junk', { code: 'x' }, { display: 'c' }] };
    const dr = {
      resourceType: 'DeviceRequest',
      parameter: [null, { valueCodeableConcept: detail }, 'junk', { valueCodeableConcept: 'junk' }],
      note: ['junk', { text: 'd' }, { text: 5 }],
    };
    const slots = textSlots(dr);
    expect(slots.map((s) => [s.key, s.text, s.concept === detail])).toStrictEqual([
      ['text', 'a', false],
      ['display', 'b', true],
      ['display', 'c', true],
      ['text', 'd', false],
    ]);
    for (const resourceType of ['MedicationRequest', 'ServiceRequest', 'DeviceRequest', 'Observation']) {
      expect(textSlots({ resourceType, dosageInstruction: 'x', orderDetail: {}, parameter: 7, note: null })).toStrictEqual([]);
    }
  });

  it('gives slots that write back into the resource', () => {
    const resource = { resourceType: 'ServiceRequest', patientInstruction: 'old' };
    const [slot] = textSlots(resource);
    if (slot !== undefined) slot.holder[slot.key] = 'new';
    expect(resource.patientInstruction).toBe('new');
  });
});

describe('pruneEmpty', () => {
  it('removes blank strings, empty arrays and objects, and notes without text', () => {
    const value = { resourceType: 'ServiceRequest', orderDetail: [{ text: '' }, { text: 'kept' }], note: [{ authorString: 'x' }], code: { coding: [] } };
    pruneEmpty(value);
    expect(value).toStrictEqual({ resourceType: 'ServiceRequest', orderDetail: [{ text: 'kept' }] });
  });

  describe('edge cases', () => {
    it('keeps zeros and false, which are values', () => {
      const value = { a: 0, b: false, c: [0] };
      pruneEmpty(value);
      expect(value).toStrictEqual({ a: 0, b: false, c: [0] });
    });
  });
});
