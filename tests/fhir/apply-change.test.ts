import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { applyOrderChange, planOrderChange } from '../../src/fhir/apply-change.js';
import type { FhirResource } from '../../src/fhir/gathered-data.js';
import type { OrderResourceType } from '../../src/fhir/is-oxygen-order.js';
import { readOrder } from '../../src/fhir/read-order.js';
import type { OrderChange } from '../../src/core/types.js';
import { createR4Validator } from './helpers/r4-validator.js';
import { SNOMED, UCUM, oxygenDeviceRequest, oxygenMedicationRequest, oxygenServiceRequest, quantity } from './helpers/larkspur-bay.js';

const validateR4 = createR4Validator(); // one instance per file (cds-hooks.md §9)
const TARGET_URL = 'https://oxygen-order-checker.example.org/fhir/StructureDefinition/target-oxygen-saturation';
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
    it('replaces every earlier target extension, including one inside a dosage instruction and one under the retired URN', () => {
      const twice = oxygenMedicationRequest('mr-9', {
        extension: [
          { url: 'urn:larkspur-bay:other', valueString: 'kept' },
          { url: TARGET_URL, valueRange: {} },
          { url: 'urn:oxygen-order-checker:fhir:StructureDefinition:target-oxygen-saturation', valueRange: {} },
        ],
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

  describe('changes only what it says', () => {
    const STANDARD: OrderChange = { kind: 'set-target', range: { lowPercent: 94, highPercent: 98 } }; // BTS 2017 Tables 1-3
    const textOf = (resource: FhirResource): string => (resource['dosageInstruction'] as { text: string }[])[0]?.text ?? '';
    const withText = (id: string, text: string, extra: Record<string, unknown> = {}): FhirResource =>
      oxygenMedicationRequest(id, { dosageInstruction: [{ text, method: { text: 'Nasal cannula' } }], ...extra });

    // Invented contingency and escalation plans written beside the ordered flow (common practice).
    it.each([
      ['O2 3L NC; if SpO2 below 85 % call doctor, increase to 4 L/min', 'increase to 4 L/min'],
      ['3 L/min via nasal cannula. If sats < 88%, go up to 4 L/min and inform the registrar', 'go up to 4 L/min'],
      ['NC 3L, escalate to 15L NRB if SpO2 < 85%', 'escalate to 15L NRB'],
      ['3L NC. Max 4 L/min on the ward; above that call outreach', 'Max 4 L/min'],
    ])('reduces the ordered flow in "%s" and leaves "%s" as written, marked for review', (text, plan) => {
      // BTS 2017, Table 4: nasal cannulae at 1-2 L/min
      const result = planOrderChange(withText('mr-30', text), { kind: 'set-flow', flowLPerMin: 2 });
      if (result.kind !== 'changed') throw new Error(result.kind);
      const after = textOf(result.resource);
      expect(after).toContain(plan);
      expect(after).toContain('[Advisory change: flow now 2 L/min.');
      expect(result.leftAsWritten.length).toBeGreaterThan(0);
      expect(readBack(result.resource).order.flowLPerMin).toBe(2);
      expect(readBack(result.resource).notes).toStrictEqual([]);
      expect(validateR4(result.resource)).toStrictEqual([]);
    });

    it('adds no note when the text holds no other value of the kind', () => {
      const result = planOrderChange(withText('mr-31', '3L NC, target 94-98%'), { kind: 'set-flow', flowLPerMin: 2 });
      expect(result).toMatchObject({ kind: 'changed', leftAsWritten: [] });
      if (result.kind === 'changed') expect(textOf(result.resource)).toBe('2L NC, target 94-98%');
    });

    it('rewrites a one-bound target into the range, leaving a trigger threshold as written', () => {
      const result = planOrderChange(withText('mr-32', '2L NC, keep sats above 92. If SpO2 below 85 % call doctor'), STANDARD);
      if (result.kind !== 'changed') throw new Error(result.kind);
      expect(textOf(result.resource)).toBe(
        '2L NC, keep sats 94-98%. If SpO2 below 85 % call doctor [Advisory change: target now 94-98%. Also written here and not changed: below 85 %. Check them before signing.]',
      );
      expect(readBack(result.resource).order).toMatchObject({ target: { lowPercent: 94, highPercent: 98 }, targetNote: undefined });
    });

    it.each([
      'for comfort, no SpO2 target',
      'palliative: titrate to comfort, do not monitor sats',
      '2L NC for comfort only',
      'Target: none',
    ])('withholds a target from "%s" and says why', (text) => {
      // BTS 2017: in terminal palliative care oxygen is for comfort (from memory)
      const result = planOrderChange(withText('mr-33', text), HYPERCAPNIC);
      expect(result.kind).toBe('withheld');
      if (result.kind === 'withheld') expect(result.reason).toMatch(/no SpO2 target or is for comfort/);
      expect(applyOrderChange(withText('mr-33', text), HYPERCAPNIC)).toBeUndefined();
    });

    it('withholds a target from an order that stops oxygen', () => {
      const result = planOrderChange(withText('mr-37', 'Stop oxygen'), HYPERCAPNIC); // common practice
      expect(result).toStrictEqual({ kind: 'withheld', reason: 'the order stops oxygen; a target is not added to it by a one-click change.' });
    });

    it.each([
      '2L NC, 88–92 % if drowsy, otherwise 94–98 %',
      '2L NC, SpO2 94–98 % until the gas is back',
      'target 94-98%; aim 88-92% if CO2 retainer',
    ])('withholds a new target from the conditional "%s" and says why', (text) => {
      const result = planOrderChange(withText('mr-34', text), HYPERCAPNIC); // BTS 2017 Table 4
      expect(result.kind).toBe('withheld');
      if (result.kind === 'withheld') expect(result.reason).toMatch(/two ranges or a condition/);
    });

    it('still changes the flow of a conditional-target order, leaving its target words alone', () => {
      const text = '2L NC, SpO2 94–98 % until the gas is back';
      const result = planOrderChange(withText('mr-35', text), { kind: 'set-flow', flowLPerMin: 1 });
      if (result.kind !== 'changed') throw new Error(result.kind);
      expect(textOf(result.resource)).toBe('1L NC, SpO2 94–98 % until the gas is back');
    });

    it('drops a coding whose display stated the old target, and keeps the new words in the text', () => {
      const coded = oxygenMedicationRequest('mr-36', {
        extension: [{ url: TARGET_URL, valueRange: { low: quantity(94, '%'), high: quantity(98, '%') } }],
        dosageInstruction: [
          {
            text: '2L NC',
            additionalInstruction: [
              { coding: [{ system: 'urn:larkspur-bay:order-phrases', code: 'tgt-9498', display: 'Target SpO2 94-98%' }] },
            ],
          },
        ],
      });
      const after = change(coded, HYPERCAPNIC);
      const dosage = (after['dosageInstruction'] as Record<string, unknown>[])[0];
      expect(dosage?.['additionalInstruction']).toStrictEqual([{ text: 'Target SpO2 88-92%' }]);
      expect(JSON.stringify(after)).not.toMatch(/94\s*[-–]\s*98/);
    });

    it('rewrites the target wherever the resource states it: display, text, note, patientInstruction, parameter', () => {
      const service = oxygenServiceRequest('sr-30', {
        orderDetail: [{ coding: [{ system: 'urn:larkspur-bay:order-phrases', code: 'o2-9498', display: 'O2 to SpO2 94–98%' }], text: 'Oxygen to SpO2 94–98%' }],
        patientInstruction: 'Keep your sats 94-98%',
        note: [{ text: 'Aim 94 to 98 %' }],
      });
      const device = oxygenDeviceRequest('dr-30', 'Nasal cannula', {
        parameter: [
          { code: { text: 'Target SpO2' }, valueRange: { low: quantity(94, '%'), high: quantity(98, '%') } },
          { code: { text: 'Instruction' }, valueCodeableConcept: { coding: [{ system: 'urn:larkspur-bay:order-phrases', code: 'x', display: 'sats 94-98%' }] } },
        ],
      });
      for (const resource of [service, device]) {
        const after = change(resource, HYPERCAPNIC); // BTS 2017 Table 4
        expect(JSON.stringify(after)).not.toMatch(/94\s*(?:[-–]|to)\s*98|"value":94|"value":98/);
        expect(readBack(after).order.target).toMatchObject({ lowPercent: 88, highPercent: 92 });
        expect(readBack(after).notes).toStrictEqual([]);
      }
    });

    describe('a client that keeps only the medication code and the text', () => {
      // What a real CDS Hooks client kept of an accepted suggestion: the code and the words.
      function codeAndTextOnly(resource: FhirResource): FhirResource {
        const dosages = (resource['dosageInstruction'] as { text?: string }[] | undefined) ?? [];
        return {
          resourceType: 'MedicationRequest',
          id: resource.id ?? 'mr-40',
          status: 'draft',
          intent: 'order',
          medicationCodeableConcept: { coding: [{ system: SNOMED, code: '24099007', display: 'Oxygen' }] },
          dosageInstruction: dosages.map((d) => ({ text: d.text })),
        };
      }

      it.each<[string, OrderChange]>([
        ['2L NC, target SpO2 94-98%', HYPERCAPNIC], // BTS 2017 Table 4
        ['Oxygen via nasal cannula 2 L/min', HYPERCAPNIC],
        ['2L NC, keep sats above 88', HYPERCAPNIC],
        ['2L NC, target 94-98%', { kind: 'set-flow', flowLPerMin: 1 }], // BTS 2017 Table 4: 1-2 L/min
        ['target 94-98%', { kind: 'set-flow', flowLPerMin: 1 }],
        ['2L NC, target 88-92%', { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 }], // BTS 2017 Table 4
        ['target 88-92%', { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 2, setFio2Fraction: 0.24 }], // BTS 2017 Table 4
        ['2L NC, target SpO2 94-98%', { kind: 'stop-oxygen' }], // BTS 2017 weaning (from memory): stop from about 2 L/min
      ])('still reads the new value from "%s" after the change', (text, orderChange) => {
        const after = change(oxygenMedicationRequest('mr-40', { dosageInstruction: [{ text, doseAndRate: [{ rateQuantity: quantity(2, 'L/min') }] }] }), orderChange);
        const { order } = readBack(codeAndTextOnly(after));
        switch (orderChange.kind) {
          case 'set-target':
            expect(order.target).toMatchObject(orderChange.range);
            break;
          case 'set-flow':
            expect(order.flowLPerMin).toBe(orderChange.flowLPerMin);
            break;
          case 'set-device':
            expect([order.device, order.flowLPerMin, order.setFio2Fraction]).toStrictEqual([
              orderChange.device,
              orderChange.flowLPerMin,
              orderChange.setFio2Fraction,
            ]);
            break;
          case 'stop-oxygen':
            // The words alone say the oxygen stopped, for a client that keeps only the text.
            expect(order.purpose).toBe('stop');
            break;
        }
      });
    });
  });
});

describe('stopping an active order (patient-view)', () => {
  // FHIR R4 request status (from memory): a MedicationRequest halted is `stopped`; a ServiceRequest or
  // DeviceRequest whose therapy is done is `completed`. The words gain a sentence so a client that keeps
  // only the text still reads the stop.
  const STOP: OrderChange = { kind: 'stop-oxygen' };

  it('ends a MedicationRequest as stopped and says so in its words', () => {
    const active = oxygenMedicationRequest('mr-stop', { status: 'active', dosageInstruction: [{ text: '2L NC, target SpO2 94-98%' }] });
    const after = change(active, STOP);
    expect(after['status']).toBe('stopped');
    expect((after['dosageInstruction'] as { text: string }[])[0]?.text).toBe('2L NC, target SpO2 94-98%. Oxygen stopped: check SpO2 on air.');
  });

  it('ends a ServiceRequest or a DeviceRequest as completed, keeping everything else', () => {
    const sr = oxygenServiceRequest('sr-stop', { status: 'active', patientInstruction: 'Oxygen 2 L/min via nasal cannulae. Target SpO2 94-98%' });
    const after = change(sr, STOP);
    expect(after['status']).toBe('completed');
    expect(after['patientInstruction']).toBe('Oxygen 2 L/min via nasal cannulae. Target SpO2 94-98%. Oxygen stopped: check SpO2 on air.');
    expect({ ...after, status: 'active', patientInstruction: sr['patientInstruction'] }).toStrictEqual(sr);
    const dr = oxygenDeviceRequest('dr-stop', 'Venturi mask 24%', { status: 'active' });
    expect(change(dr, STOP)['status']).toBe('completed');
  });
});


/**
 * The facts read each order before any change is planned, and planning reuses what that reading found
 * of the target words (read-order.ts): the plan must be the one made from the words afresh, whether
 * the change is withheld or written. Invented Larkspur Bay wording; ranges from BTS 2017 Table 4.
 */
describe('planOrderChange after the order was read', () => {
  const wordings = [
    '2 L/min nasal cannula, target SpO2 94-98%', // BTS 2017, Table 4
    'Oxygen for comfort only, no SpO2 target',
    'Stop oxygen; check SpO2 on air',
    'Target 88-92% if hypercapnic, otherwise 94-98%', // BTS 2017, Table 4
    'Keep SpO2 >= 92% on 2L NC',
    '',
  ];
  const changes: readonly OrderChange[] = [HYPERCAPNIC, { kind: 'set-flow', flowLPerMin: 1 }];
  const ordersOf = (words: string): readonly FhirResource[] => [
    oxygenMedicationRequest('mr-r', { dosageInstruction: [{ text: words }] }),
    oxygenServiceRequest('sr-r', { patientInstruction: words }),
    oxygenDeviceRequest('dr-r', 'Nasal cannula', { note: [{ text: words }] }),
  ];

  it('plans the same change, withheld or written, as on an order read afresh', () => {
    const kinds = new Set<string>();
    for (const words of wordings) {
      for (const order of ordersOf(words)) {
        for (const orderChange of changes) {
          const afresh = planOrderChange(structuredClone(order), orderChange);
          readBack(order);
          const afterReading = planOrderChange(order, orderChange);
          kinds.add(afresh.kind);
          expect(afterReading, `${order.resourceType} "${words}" ${orderChange.kind}`).toStrictEqual(afresh);
        }
      }
    }
    // Both outcomes occur, so the comparison covers a withheld change and a written one.
    expect([...kinds].sort()).toStrictEqual(['changed', 'withheld']);
  });
});
