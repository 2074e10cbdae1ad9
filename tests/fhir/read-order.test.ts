import { describe, expect, it } from 'vitest';
import { readOrder, readTargetWords } from '../../src/fhir/read-order.js';
import type { FhirResource } from '../../src/fhir/gathered-data.js';
import type { OrderResourceType } from '../../src/fhir/is-oxygen-order.js';
import { LOINC, SNOMED, oxygenDeviceRequest, oxygenMedicationRequest, oxygenServiceRequest, quantity } from './helpers/larkspur-bay.js';

const TARGET_URL = 'https://oxygen-order-checker.example.org/fhir/StructureDefinition/target-oxygen-saturation';
const targetExtension = (low: number, high: number): Record<string, unknown> => ({
  url: TARGET_URL,
  valueRange: { low: quantity(low, '%'), high: quantity(high, '%') },
});

function read(resource: FhirResource, type: OrderResourceType = resource.resourceType as OrderResourceType) {
  return readOrder(resource, type, `${resource.resourceType}/${resource.id ?? ''}`, true);
}

describe('readOrder', () => {
  describe('MedicationRequest', () => {
    it('reads a structured-only order: method, rateQuantity and the target extension', () => {
      const resource = oxygenMedicationRequest('mr-1', {
        extension: [targetExtension(88, 92)], // BTS 2017, Table 4
        dosageInstruction: [
          {
            method: { text: 'Nasal cannula' },
            doseAndRate: [{ rateQuantity: quantity(2, 'L/min') }], // BTS 2017, Table 4: nasal cannulae 1-2 L/min
          },
        ],
      });
      expect(read(resource)).toStrictEqual({
        order: {
          reference: 'MedicationRequest/mr-1',
          resourceType: 'MedicationRequest',
          status: 'draft',
          device: 'nasal-cannula',
          deviceText: 'Nasal cannula',
          flowLPerMin: 2,
          setFio2Fraction: undefined,
          target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' },
          targetNote: undefined,
          purpose: 'titrate',
          authoredOn: '2026-12-01T11:50:00Z',
          isSubject: true,
        },
        notes: [],
      });
    });

    it('reads a text-only order from dosageInstruction.text', () => {
      const resource = oxygenMedicationRequest('mr-2', {
        dosageInstruction: [{ text: '28% venturi at 4 L/min, aim sats 88-92' }], // BTS 2017, Table 4
      });
      const { order, notes } = read(resource);
      expect(order).toMatchObject({
        device: 'venturi-mask',
        deviceText: 'venturi',
        flowLPerMin: 4,
        setFio2Fraction: 0.28,
        target: { lowPercent: 88, highPercent: 92, readFrom: 'text' },
      });
      expect(notes).toStrictEqual([]);
    });

    it('reads a Venturi setting from a doseQuantity in %', () => {
      const resource = oxygenMedicationRequest('mr-3', {
        dosageInstruction: [
          { method: { text: 'Venturi mask' }, doseAndRate: [{ doseQuantity: quantity(24, '%'), rateQuantity: quantity(2, 'L/min') }] },
        ],
      });
      // 24 % Venturi at 2-3 L/min, BTS 2017 Table 4; 24 % = 0.24 by UCUM
      expect(read(resource).order).toMatchObject({ device: 'venturi-mask', flowLPerMin: 2, setFio2Fraction: 0.24 });
    });

    it('reads the target extension inside a dosage instruction', () => {
      const resource = oxygenMedicationRequest('mr-4', { dosageInstruction: [{ extension: [targetExtension(94, 98)] }] });
      expect(read(resource).order.target).toStrictEqual({ lowPercent: 94, highPercent: 98, readFrom: 'structured' });
    });

    it('uses the coded value and notes the disagreement when text and codes differ', () => {
      const resource = oxygenMedicationRequest('mr-5', {
        extension: [targetExtension(88, 92)],
        dosageInstruction: [{ text: '2L NC, target SpO2 94-98%', doseAndRate: [{ rateQuantity: quantity(1, 'L/min') }] }],
      });
      const { order, notes } = read(resource);
      expect(order.target).toStrictEqual({ lowPercent: 88, highPercent: 92, readFrom: 'structured' });
      expect(order.flowLPerMin).toBe(1);
      expect(notes).toStrictEqual([
        {
          what: 'Ordered oxygen flow',
          reason: 'error-in-source',
          detail: 'The order text says 2 L/min but the coded value is 1 L/min; the coded value was used.',
          reference: 'MedicationRequest/mr-5',
        },
        {
          what: 'Ordered target SpO2',
          reason: 'error-in-source',
          detail: 'The order text says 94–98 % but the coded value is 88–92 %; the coded value was used.',
          reference: 'MedicationRequest/mr-5',
        },
      ]);
    });

    it('reads no single flow from a rate range, and says so', () => {
      const resource = oxygenMedicationRequest('mr-6', {
        dosageInstruction: [{ text: 'via nasal cannula', doseAndRate: [{ rateRange: { low: quantity(1, 'L/min'), high: quantity(2, 'L/min') } }] }],
      });
      const { order, notes } = read(resource);
      expect(order.flowLPerMin).toBeUndefined();
      expect(notes.map((n) => n.detail)).toStrictEqual([
        'The flow is given as a range (1–2 L/min), not one setting, so no flow was read.',
      ]);
    });
  });

  describe('ServiceRequest', () => {
    it('reads orderDetail, quantityQuantity and patientInstruction', () => {
      const resource = oxygenServiceRequest('sr-1', {
        orderDetail: [{ text: 'Reservoir mask' }],
        quantityQuantity: quantity(15, 'L/min'), // BTS 2017, Table 2: reservoir mask at 15 L/min
        patientInstruction: 'Target SpO2 94–98%', // BTS 2017, Tables 1-3
      });
      expect(read(resource).order).toMatchObject({
        device: 'reservoir-mask',
        flowLPerMin: 15,
        target: { lowPercent: 94, highPercent: 98, readFrom: 'text' },
      });
    });

    it('reads the device from SNOMED CT 371907003 (oxygen by nasal cannula)', () => {
      const resource = oxygenServiceRequest('sr-2', {
        code: { coding: [{ system: SNOMED, code: '371907003', display: 'Oxygen administration by nasal cannula' }] },
        note: [{ text: '2 L/min, target 88-92%' }],
      });
      expect(read(resource).order).toMatchObject({
        device: 'nasal-cannula',
        deviceText: 'Oxygen administration by nasal cannula',
        flowLPerMin: 2,
        target: { lowPercent: 88, highPercent: 92, readFrom: 'text' },
      });
    });

    it('reads high-flow settings from orderDetail text', () => {
      const resource = oxygenServiceRequest('sr-3', { orderDetail: [{ text: 'HFNC 50 L/min FiO2 0.45' }] });
      // HFNC flow up to 60 L/min and FiO2 0.21-1.0 (PMC5359952)
      expect(read(resource).order).toMatchObject({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.45 });
    });
  });

  describe('DeviceRequest', () => {
    it('reads codeCodeableConcept and parameters for flow, FiO2 and target', () => {
      const resource = oxygenDeviceRequest('dr-1', 'High-flow nasal cannula', {
        parameter: [
          { code: { coding: [{ system: LOINC, code: '3151-8' }] }, valueQuantity: quantity(40, 'L/min') },
          { code: { coding: [{ system: LOINC, code: '3150-0' }] }, valueQuantity: quantity(60, '%') },
          { code: { text: 'Target SpO2' }, valueRange: { low: quantity(92, '%'), high: quantity(96, '%') } }, // TSANZ 2015
          { code: { text: 'Humidifier temperature' }, valueQuantity: quantity(37, 'Cel') },
        ],
      });
      expect(read(resource)).toStrictEqual({
        order: {
          reference: 'DeviceRequest/dr-1',
          resourceType: 'DeviceRequest',
          status: 'draft',
          device: 'high-flow-nasal-cannula',
          deviceText: 'High-flow nasal cannula',
          flowLPerMin: 40,
          setFio2Fraction: 0.6,
          target: { lowPercent: 92, highPercent: 96, readFrom: 'structured' },
          targetNote: undefined,
          purpose: 'titrate',
          authoredOn: undefined,
          isSubject: true,
        },
        notes: [],
      });
    });

    it('keeps the words of a device it cannot map', () => {
      const { order } = read(oxygenDeviceRequest('dr-2', 'Oxygen delivery device, other'));
      expect(order.device).toBeUndefined();
      expect(order.deviceText).toBe('Oxygen delivery device, other');
    });

    it('keeps a MedicationRequest method it cannot map', () => {
      const { order } = read(oxygenMedicationRequest('mr-20', { dosageInstruction: [{ method: { text: 'T-piece' } }] }));
      expect([order.device, order.deviceText]).toStrictEqual([undefined, 'T-piece']);
    });
  });

  describe('edge cases', () => {
    it('sets aside an implausible flow and FiO2', () => {
      const resource = oxygenMedicationRequest('mr-9', {
        dosageInstruction: [{ doseAndRate: [{ rateQuantity: quantity(120, 'L/min'), doseQuantity: quantity(150, '%') }] }],
      });
      const { order, notes } = read(resource);
      expect([order.flowLPerMin, order.setFio2Fraction]).toStrictEqual([undefined, undefined]);
      expect(notes.map((n) => [n.what, n.reason])).toStrictEqual([
        ['Ordered oxygen flow', 'implausible'],
        ['Ordered FiO2', 'implausible'],
      ]);
    });

    it('notes a quantity that is neither a flow nor a concentration', () => {
      const resource = oxygenMedicationRequest('mr-10', { dosageInstruction: [{ doseAndRate: [{ doseQuantity: quantity(1, 'L') }] }] });
      expect(read(resource).notes).toStrictEqual([
        {
          what: 'Order quantity',
          reason: 'unreadable-unit',
          detail: '1 L at doseAndRate[0].doseQuantity is neither a flow nor an oxygen concentration.',
          reference: 'MedicationRequest/mr-10',
        },
      ]);
    });

    // Issue 6 class 12: order fields the service does not read raise no set-aside note (common practice:
    // a client may add a dose count to every order). A count or a mass cannot be a flow written oddly.
    it.each([
      [1, '{pill}'],
      [2, '{puff}'],
      [1, '{dose}'],
      [500, 'mg'],
    ])('sets nothing aside for a dose of %s %s, and still reads the flow', (value, unit) => {
      const resource = oxygenMedicationRequest('mr-10b', {
        dosageInstruction: [
          // BTS 2017, Table 4: nasal cannulae 1-2 L/min
          { method: { text: 'Nasal cannula' }, doseAndRate: [{ rateQuantity: quantity(2, 'L/min'), doseQuantity: quantity(value, unit) }] },
        ],
      });
      const { order, notes } = read(resource);
      expect([order.flowLPerMin, order.setFio2Fraction, notes]).toStrictEqual([2, undefined, []]);
    });

    it('still notes a blank or unknown unit, which may be a flow written with a slip', () => {
      const resource = oxygenMedicationRequest('mr-10c', {
        dosageInstruction: [{ doseAndRate: [{ doseQuantity: { value: 2 } }, { doseQuantity: quantity(2, 'Lpmin') }] }],
      });
      expect(read(resource).notes.map((n) => [n.reason, n.detail])).toStrictEqual([
        ['unreadable-unit', '2 (no unit) at doseAndRate[0].doseQuantity is neither a flow nor an oxygen concentration.'],
        ['unreadable-unit', '2 Lpmin at doseAndRate[1].doseQuantity is neither a flow nor an oxygen concentration.'],
      ]);
    });

    it('notes a target extension that is not a range within 50-100 %', () => {
      const resource = oxygenMedicationRequest('mr-11', { extension: [targetExtension(98, 94)] });
      const { order, notes } = read(resource);
      expect(order.target).toBeUndefined();
      expect(notes.map((n) => n.reason)).toStrictEqual(['implausible']);
    });

    it('notes an order that names two devices', () => {
      const resource = oxygenMedicationRequest('mr-12', { dosageInstruction: [{ method: { text: 'Nasal cannula' }, text: 'Venturi 24%' }] });
      const { order, notes } = read(resource);
      expect(order.device).toBe('nasal-cannula');
      expect(notes.map((n) => n.detail)).toStrictEqual([
        "The order also names venturi-mask; it was read as nasal-cannula ('Nasal cannula').",
      ]);
    });

    it('reads nothing, and does not throw, from garbage fields', () => {
      const resource = {
        resourceType: 'MedicationRequest',
        id: 'mr-13',
        dosageInstruction: [null, 'text', { doseAndRate: { rateQuantity: 2 } }, { text: 42, method: [] }],
        extension: 'x',
        note: [{ text: null }],
      } as FhirResource;
      const { order, notes } = read(resource);
      expect([order.device, order.flowLPerMin, order.target, order.status]).toStrictEqual([undefined, undefined, undefined, undefined]);
      expect(notes).toStrictEqual([]);
    });
  });

  describe('how the order states its target and what it is for', () => {
    it('reads a one-sided target into targetNote and leaves the target unset', () => {
      const resource = oxygenMedicationRequest('mr-20', { dosageInstruction: [{ text: '2L NC, keep sats above 92' }] });
      const { order } = read(resource);
      expect(order.target).toBeUndefined();
      // BTS 2017 asks for a range; "above 92" is one bound of the TSANZ 2015 range 92-96 %
      expect(order.targetNote).toStrictEqual({ kind: 'one-sided', bound: 'above', percent: 92, text: '2L NC, keep sats above 92' });
    });

    it('reads a conditional target as ambiguous, keeping the range that allows the most oxygen', () => {
      const resource = oxygenServiceRequest('sr-20', {
        orderDetail: [{ text: 'Nasal cannula 2 L/min' }],
        patientInstruction: 'SpO2 94–98 % until the gas is back',
      });
      const { order } = read(resource);
      // BTS 2017 Tables 1-3: 94-98 %
      expect(order.target).toStrictEqual({ lowPercent: 94, highPercent: 98, readFrom: 'text' });
      expect(order.targetNote?.kind).toBe('ambiguous');
    });

    it('reads "no SpO2 target" in a note as a comfort order with no target', () => {
      const resource = oxygenMedicationRequest('mr-21', {
        dosageInstruction: [{ text: '2 L/min via nasal cannula' }],
        note: [{ text: 'Palliative: for comfort, no SpO2 target' }],
      });
      const { order } = read(resource);
      expect([order.purpose, order.targetNote?.kind, order.target]).toStrictEqual(['comfort', 'no-target', undefined]); // BTS 2017
    });

    it('reads a coded range and a text bound it breaks as ambiguous', () => {
      const resource = oxygenMedicationRequest('mr-22', {
        extension: [targetExtension(88, 92)], // BTS 2017 Table 4
        dosageInstruction: [{ text: 'keep SpO2 > 94%' }],
      });
      const { order } = read(resource);
      expect(order.target).toMatchObject({ lowPercent: 88, highPercent: 92, readFrom: 'structured' });
      expect(order.targetNote?.kind).toBe('ambiguous');
    });

    it('reads a stopped order, and a 0 L/min order, for what they are', () => {
      const stopped = oxygenMedicationRequest('mr-23', { status: 'stopped', dosageInstruction: [{ text: '2L NC' }] });
      expect(read(stopped).order.purpose).toBe('stop'); // FHIR R4 MedicationRequest.status
      const air = oxygenMedicationRequest('mr-24', { dosageInstruction: [{ doseAndRate: [{ rateQuantity: quantity(0, 'L/min') }] }] });
      expect(read(air).order.purpose).toBe('room-air'); // common practice: 0 L/min is air
    });

    it('skips an advisory change note when reading the order’s words', () => {
      const resource = oxygenMedicationRequest('mr-25', {
        dosageInstruction: [
          { text: '2L NC, target 88-92%. [Advisory change: target now 88-92%. Also written here and not changed: 94-98%. Check them before signing.]' },
        ],
      });
      const { order } = read(resource);
      expect([order.target, order.targetNote]).toStrictEqual([{ lowPercent: 88, highPercent: 92, readFrom: 'text' }, undefined]); // BTS 2017 Table 4
    });
  });

  describe('a device named but not recognised', () => {
    it('notes it, so that the checks skipped for want of a device are not silent', () => {
      const resource = oxygenServiceRequest('sr-unknown-device', {
        patientInstruction: 'O2 2L via wallbox, target SpO2 94-98%', // BTS 2017, Tables 1-3
      });
      const { order, notes } = read(resource);
      expect(order.device).toBeUndefined();
      expect(notes).toHaveLength(1);
      expect(notes[0]).toMatchObject({ reason: 'unrecognised', what: 'Ordered device' });
      expect(notes[0]?.detail).toMatch(/'wallbox'.*not recognise/);
    });

    it('says nothing when the words name no device at all', () => {
      const resource = oxygenServiceRequest('sr-no-device', { patientInstruction: 'O2 2 L/min, target SpO2 94-98%' });
      expect(read(resource).notes).toStrictEqual([]);
    });
  });
});

/**
 * readTargetWords is the part of readOrder a one-click target change needs (src/fhir/apply-change.ts):
 * it must read every order's target note, and a stop or comfort purpose, exactly as readOrder does.
 * The order words are invented Larkspur Bay wording; the ranges are BTS 2017 Table 4's.
 */

const WORDS = [
  '2 L/min nasal cannula, target SpO2 94-98%', // BTS 2017, Table 4
  '28% venturi at 4 L/min, aim sats 88-92', // BTS 2017, Table 4
  'Oxygen for comfort only, no SpO2 target',
  'Palliative: titrate to comfort via nasal cannula 2L',
  'Stop oxygen; check SpO2 on air',
  'Do not stop oxygen. 2L NC target 94-98%',
  'Target 88-92% if hypercapnic, otherwise 94-98%',
  'Keep SpO2 >= 92% on 2L NC',
  'Aim SpO2 92% on 4 L/min simple face mask',
  'Wean to room air, target 94-98%',
  'SpO2 90% on RA, 1 L/min nasal prongs',
  '0 L/min, on air',
  'No SpO2 target, 15L non-rebreather',
  '',
];

function orders(words: string): readonly FhirResource[] {
  return [
    oxygenMedicationRequest('mr-w', { dosageInstruction: [{ text: words }] }),
    oxygenMedicationRequest('mr-x', { extension: [targetExtension(88, 92)], dosageInstruction: [{ text: words }] }),
    oxygenMedicationRequest('mr-s', { status: 'stopped', dosageInstruction: [{ text: words }] }),
    oxygenServiceRequest('sr-w', { patientInstruction: words }),
    oxygenServiceRequest('sr-d', { doNotPerform: true, patientInstruction: words }),
    oxygenDeviceRequest('dr-w', 'Nasal cannula', { note: [{ text: words }] }),
  ];
}

describe('readTargetWords', () => {
  it('reads the target note and a stop or comfort purpose as readOrder does, for every kind of order and wording, read afresh or remembered', () => {
    const disagreements: string[] = [];
    const purposes = new Set<string>();
    for (const words of WORDS) {
      for (const resource of orders(words)) {
        const type = resource.resourceType as OrderResourceType;
        const { order } = readOrder(resource, type, `${type}/${resource.id ?? ''}`, true);
        const expected = {
          targetNote: order.targetNote,
          stopOrComfort: order.purpose === 'stop' || order.purpose === 'comfort' ? order.purpose : undefined,
        };
        purposes.add(order.purpose);
        // A copy is read from its words afresh; the order itself answers with what readOrder read of it.
        const fresh = readTargetWords(structuredClone(resource), type);
        const remembered = readTargetWords(resource, type);
        for (const [how, got] of [['fresh', fresh], ['remembered', remembered]] as const) {
          if (JSON.stringify(got) !== JSON.stringify(expected)) {
            disagreements.push(`${how} ${type} "${words}": ${JSON.stringify(got)} vs ${JSON.stringify(expected)}`);
          }
        }
      }
    }
    expect(disagreements).toStrictEqual([]);
    // The wordings cover every purpose, so the comparison means something for each.
    expect([...purposes].sort()).toStrictEqual(['comfort', 'room-air', 'stop', 'titrate', 'wean']);
  });

  it('reads the notes that withhold a new target: no target, and a target with two ranges', () => {
    const noTarget = oxygenMedicationRequest('mr-n', { dosageInstruction: [{ text: 'No SpO2 target, 15L non-rebreather' }] });
    expect(readTargetWords(noTarget, 'MedicationRequest').targetNote?.kind).toBe('no-target');
    const two = oxygenMedicationRequest('mr-a', {
      dosageInstruction: [{ text: 'Target 88-92% if hypercapnic, otherwise 94-98%' }], // BTS 2017, Table 4
    });
    expect(readTargetWords(two, 'MedicationRequest').targetNote?.kind).toBe('ambiguous');
  });
});
