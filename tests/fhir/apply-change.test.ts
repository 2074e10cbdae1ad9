import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { applyOrderChange } from '../../src/fhir/apply-change.js';
import type { FhirResource } from '../../src/fhir/gathered-data.js';
import type { OrderResourceType } from '../../src/fhir/is-oxygen-order.js';
import { readOrder } from '../../src/fhir/read-order.js';
import type { OrderChange } from '../../src/core/types.js';
import { createR4Validator } from './helpers/r4-validator.js';
import { SNOMED, UCUM, oxygenDeviceRequest, oxygenMedicationRequest, oxygenServiceRequest, quantity } from './helpers/larkspur-bay.js';

const validateR4 = createR4Validator(); // one instance per file (cds-hooks.md §9)
const TARGET_URL = 'urn:oxygen-order-checker:fhir:StructureDefinition:target-oxygen-saturation';
// BTS 2017 Table 4: 88-92 % for patients at risk of hypercapnic respiratory failure
const HYPERCAPNIC: OrderChange = { kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } };

function readBack(resource: FhirResource) {
  return readOrder(resource, resource.resourceType as OrderResourceType, `${resource.resourceType}/${resource.id}`, true);
}

function change(resource: FhirResource, orderChange: OrderChange): FhirResource {
  const before = structuredClone(resource);
  const after = applyOrderChange(resource, orderChange);
  expect(resource).toStrictEqual(before); // the input is not touched
  if (after === undefined) throw new Error('no changed resource');
  expect([after.resourceType, after.id]).toStrictEqual([resource.resourceType, resource.id]);
  expect(validateR4(after)).toStrictEqual([]); // FHIR R4 JSON schema
  return after;
}

const targetExtension = {
  url: TARGET_URL,
  valueRange: {
    low: { value: 88, unit: '%', system: UCUM, code: '%' },
    high: { value: 92, unit: '%', system: UCUM, code: '%' },
  },
};

describe('applyOrderChange', () => {
  describe('MedicationRequest', () => {
    const draft = oxygenMedicationRequest('mr-1', {
      extension: [{ url: TARGET_URL, valueRange: { low: quantity(94, '%'), high: quantity(98, '%') } }],
      dosageInstruction: [
        {
          text: '2L NC, target SpO2 94-98%',
          method: { text: 'Nasal cannula' },
          doseAndRate: [{ rateQuantity: quantity(2, 'L/min') }],
        },
      ],
    });

    it('writes a new target into the extension and into the words that stated the old one', () => {
      const after = change(draft, HYPERCAPNIC);
      expect(after['extension']).toStrictEqual([targetExtension]);
      expect((after['dosageInstruction'] as { text: string }[])[0]?.text).toBe('2L NC, target SpO2 88-92%');
      expect(readBack(after)).toMatchObject({ order: { target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } }, notes: [] });
    });

    it('appends the target to the instruction when no words stated one', () => {
      const plain = oxygenMedicationRequest('mr-2', { dosageInstruction: [{ text: 'Oxygen via nasal cannula 2 L/min' }] });
      const after = change(plain, HYPERCAPNIC);
      expect((after['dosageInstruction'] as { text: string }[])[0]?.text).toBe('Oxygen via nasal cannula 2 L/min. Target SpO2 88-92%.');
    });

    it('creates a dosage instruction for the target when there is none', () => {
      const after = change(oxygenMedicationRequest('mr-3'), HYPERCAPNIC);
      expect(after['dosageInstruction']).toStrictEqual([{ text: 'Target SpO2 88-92%.' }]);
    });

    it('writes a flow into rateQuantity in UCUM L/min and into the words', () => {
      // BTS 2017, Table 4: nasal cannulae at 1-2 L/min for patients at risk
      const after = change(draft, { kind: 'set-flow', flowLPerMin: 1 });
      const dosage = (after['dosageInstruction'] as Record<string, unknown>[])[0];
      expect(dosage?.['doseAndRate']).toStrictEqual([{ rateQuantity: { value: 1, unit: 'L/min', system: UCUM, code: 'L/min' } }]);
      expect(dosage?.['text']).toBe('1L NC, target SpO2 94-98%');
      expect(readBack(after)).toMatchObject({ order: { flowLPerMin: 1 }, notes: [] });
    });

    it('replaces a rate range with one flow', () => {
      const ranged = oxygenMedicationRequest('mr-4', {
        dosageInstruction: [{ text: 'NC 1-2 L/min', doseAndRate: [{ rateRange: { low: quantity(1, 'L/min'), high: quantity(2, 'L/min') } }] }],
      });
      const after = change(ranged, { kind: 'set-flow', flowLPerMin: 2 });
      const dosage = (after['dosageInstruction'] as Record<string, unknown>[])[0];
      expect(dosage?.['doseAndRate']).toStrictEqual([{ rateQuantity: { value: 2, unit: 'L/min', system: UCUM, code: 'L/min' } }]);
      expect(dosage?.['text']).toBe('NC 2 L/min');
    });

    it('writes a device change into method, the Venturi setting into doseQuantity, and the words', () => {
      // BTS 2017, Table 4: 28 % Venturi at 4 L/min
      const after = change(draft, { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 });
      const dosage = (after['dosageInstruction'] as Record<string, unknown>[])[0];
      expect(dosage?.['method']).toStrictEqual({ text: '28% Venturi mask' });
      expect(dosage?.['doseAndRate']).toStrictEqual([
        { rateQuantity: { value: 4, unit: 'L/min', system: UCUM, code: 'L/min' }, doseQuantity: { value: 28, unit: '%', system: UCUM, code: '%' } },
      ]);
      expect(dosage?.['text']).toBe('4L 28% Venturi mask, target SpO2 94-98%');
      expect(readBack(after)).toMatchObject({ order: { device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 }, notes: [] });
    });

    it('removes a Venturi setting when the new device takes none', () => {
      const venturi = oxygenMedicationRequest('mr-5', {
        dosageInstruction: [{ text: '28% venturi at 4 L/min', doseAndRate: [{ doseQuantity: quantity(28, '%'), rateQuantity: quantity(4, 'L/min') }] }],
      });
      const after = change(venturi, { kind: 'set-device', device: 'nasal-cannula', flowLPerMin: 2 });
      const dosage = (after['dosageInstruction'] as Record<string, unknown>[])[0];
      expect(dosage?.['text']).toBe('nasal cannula at 2 L/min');
      expect(dosage?.['doseAndRate']).toStrictEqual([{ rateQuantity: { value: 2, unit: 'L/min', system: UCUM, code: 'L/min' } }]);
      expect(readBack(after)).toMatchObject({ order: { device: 'nasal-cannula', setFio2Fraction: undefined }, notes: [] });
    });
  });

  describe('ServiceRequest', () => {
    const draft = oxygenServiceRequest('sr-1', {
      code: { coding: [{ system: SNOMED, code: '371907003', display: 'Oxygen administration by nasal cannula' }] },
      quantityQuantity: quantity(2, 'L/min'),
      patientInstruction: 'Target SpO2 94–98%',
    });

    it('writes a target and keeps the writer’s dash', () => {
      const after = change(draft, HYPERCAPNIC);
      expect(after['patientInstruction']).toBe('Target SpO2 88–92%');
      expect(after['extension']).toStrictEqual([targetExtension]);
    });

    it('writes a flow into quantityQuantity', () => {
      const after = change(draft, { kind: 'set-flow', flowLPerMin: 1 });
      expect(after['quantityQuantity']).toStrictEqual({ value: 1, unit: 'L/min', system: UCUM, code: 'L/min' });
    });

    it('writes a device change into orderDetail and drops the nasal-cannula procedure code', () => {
      const after = change(draft, { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 2, setFio2Fraction: 0.24 });
      expect(after['orderDetail']).toStrictEqual([{ text: '24% Venturi mask' }]); // the setting travels in the device words
      expect(after['code']).toStrictEqual({ coding: [{ system: SNOMED, code: '57485005', display: 'Oxygen therapy' }] });
      expect(readBack(after)).toMatchObject({ order: { device: 'venturi-mask', flowLPerMin: 2, setFio2Fraction: 0.24 }, notes: [] });
    });

    it('appends a target to patientInstruction, or to a note, when no words stated one', () => {
      const withNote = oxygenServiceRequest('sr-2', { note: [{ text: 'Oxygen via nasal cannula' }] });
      expect(change(withNote, HYPERCAPNIC)['note']).toStrictEqual([{ text: 'Oxygen via nasal cannula. Target SpO2 88-92%.' }]);
      const bare = oxygenServiceRequest('sr-3');
      expect(change(bare, HYPERCAPNIC)['note']).toStrictEqual([{ text: 'Target SpO2 88-92%.' }]);
    });
  });

  describe('DeviceRequest', () => {
    const draft = oxygenDeviceRequest('dr-1', 'High-flow nasal cannula', {
      parameter: [
        { code: { text: 'Oxygen flow' }, valueQuantity: quantity(50, 'L/min') },
        { code: { text: 'FiO2' }, valueQuantity: quantity(45, '%') },
        { code: { text: 'Target SpO2' }, valueRange: { low: quantity(94, '%'), high: quantity(98, '%') } },
      ],
      note: [{ text: 'HFNC 50 L/min FiO2 0.45' }],
    });

    it('writes a target into the extension and into a target parameter', () => {
      const after = change(draft, HYPERCAPNIC);
      expect(after['extension']).toStrictEqual([targetExtension]);
      expect((after['parameter'] as Record<string, unknown>[])[2]?.['valueRange']).toStrictEqual(targetExtension.valueRange);
      expect(after['note']).toStrictEqual([{ text: 'HFNC 50 L/min FiO2 0.45. Target SpO2 88-92%.' }]);
    });

    it('writes a flow into a LOINC 3151-8 parameter and the words', () => {
      const after = change(draft, { kind: 'set-flow', flowLPerMin: 40 });
      const flows = (after['parameter'] as Record<string, unknown>[]).filter((p) => JSON.stringify(p).includes('3151-8'));
      expect(flows).toStrictEqual([
        {
          code: { coding: [{ system: 'http://loinc.org', code: '3151-8', display: 'Inhaled oxygen flow rate' }], text: 'Oxygen flow' },
          valueQuantity: { value: 40, unit: 'L/min', system: UCUM, code: 'L/min' },
        },
      ]);
      expect(after['note']).toStrictEqual([{ text: 'HFNC 40 L/min FiO2 0.45' }]);
      expect(readBack(after)).toMatchObject({ order: { flowLPerMin: 40, setFio2Fraction: 0.45 }, notes: [] });
    });

    it('writes a device change into codeCodeableConcept and removes the FiO2 the new device does not take', () => {
      // BTS 2017, Table 2: reservoir mask at 15 L/min
      const after = change(draft, { kind: 'set-device', device: 'reservoir-mask', flowLPerMin: 15 });
      expect(after['codeCodeableConcept']).toStrictEqual({ text: 'Reservoir mask (non-rebreather)' });
      expect(after['note']).toStrictEqual([{ text: 'reservoir mask (non-rebreather) 15 L/min' }]);
      expect(readBack(after)).toMatchObject({
        order: { device: 'reservoir-mask', flowLPerMin: 15, setFio2Fraction: undefined, target: { lowPercent: 94, highPercent: 98 } },
        notes: [],
      });
    });
  });

  describe('edge cases', () => {
    it('replaces every earlier target extension, including one inside a dosage instruction', () => {
      const twice = oxygenMedicationRequest('mr-9', {
        extension: [{ url: 'urn:larkspur-bay:other', valueString: 'kept' }, { url: TARGET_URL, valueRange: {} }],
        dosageInstruction: [{ text: 'NC', extension: [{ url: TARGET_URL, valueRange: {} }] }],
      });
      const after = change(twice, HYPERCAPNIC);
      expect(after['extension']).toStrictEqual([{ url: 'urn:larkspur-bay:other', valueString: 'kept' }, targetExtension]);
      expect(after['dosageInstruction']).toStrictEqual([{ text: 'NC. Target SpO2 88-92%.' }]);
    });

    it('returns an unchanged copy of a resource that is not an order', () => {
      const patient = { resourceType: 'Patient', id: 'lbgh-0001', birthDate: '1951-03-14' };
      const after = applyOrderChange(patient, HYPERCAPNIC);
      expect(after).toStrictEqual(patient);
      expect(after).not.toBe(patient);
    });

    it('does not throw on garbage fields and still writes the change', () => {
      const odd = { resourceType: 'MedicationRequest', id: 'mr-10', dosageInstruction: [null, 5], extension: 'x', note: 'n' } as FhirResource;
      const after = applyOrderChange(odd, { kind: 'set-flow', flowLPerMin: 2 });
      expect((after?.['dosageInstruction'] as unknown[])[0]).toStrictEqual({
        doseAndRate: [{ rateQuantity: { value: 2, unit: 'L/min', system: UCUM, code: 'L/min' } }],
        text: 'Oxygen flow 2 L/min.', // the words state the change on their own
      });
    });

    it('never throws on an order with arbitrary fields, and keeps its type and id', () => {
      const fields = fc.dictionary(
        fc.constantFrom('dosageInstruction', 'orderDetail', 'parameter', 'extension', 'note', 'code', 'quantityQuantity', 'patientInstruction', 'codeCodeableConcept'),
        fc.jsonValue(),
      );
      const changes = fc.constantFrom<OrderChange>(
        HYPERCAPNIC,
        { kind: 'set-flow', flowLPerMin: 2 },
        { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 },
        { kind: 'set-device', device: 'nasal-cannula', flowLPerMin: 1 },
      );
      fc.assert(
        fc.property(fc.constantFrom('MedicationRequest', 'ServiceRequest', 'DeviceRequest'), fields, changes, (resourceType, rest, orderChange) => {
          const after = applyOrderChange({ ...rest, resourceType, id: 'fuzz-1' }, orderChange);
          expect([after?.resourceType, after?.id]).toStrictEqual([resourceType, 'fuzz-1']);
        }),
        { numRuns: 300 },
      );
    });

    it('offers no changed resource when the order cannot be copied whole', () => {
      // CDS Hooks 2.0 §Action: an update carries the whole resource, so a bare {resourceType, id}
      // accepted by the user would wipe the order.
      let deep: Record<string, unknown> = {};
      const root = deep;
      for (let i = 0; i < 20_000; i += 1) {
        const inner: Record<string, unknown> = {};
        deep['x'] = inner;
        deep = inner;
      }
      const order = oxygenMedicationRequest('mr-deep', { note: [{ text: 'x' }], extension: [{ url: 'urn:x', valueString: 'y', deep: root }] });
      expect(applyOrderChange(order, HYPERCAPNIC)).toBeUndefined();
    });

    it('the schema check can fail: it rejects the STU3 dosage shape (cds-hooks.md §9)', () => {
      const stu3 = oxygenMedicationRequest('mr-11', { dosageInstruction: [{ doseQuantity: quantity(2, 'L/min') }] });
      expect(validateR4(stu3).length).toBeGreaterThan(0);
    });
  });
});
