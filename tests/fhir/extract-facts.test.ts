import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { extractFacts } from '../../src/fhir/extract-facts.js';
import type { GatheredData } from '../../src/fhir/gathered-data.js';
import {
  ICD10,
  NOW,
  SNOMED,
  btsPolicy,
  bundle,
  condition,
  gathered,
  minutesAgo,
  observation,
  oxygenDeviceRequest,
  oxygenMedicationRequest,
  oxygenServiceRequest,
  quantity,
} from './helpers/larkspur-bay.js';

const policy = btsPolicy();

const mr = oxygenMedicationRequest('mr-1', { dosageInstruction: [{ text: '2L NC, target SpO2 94-98%' }] });
const sr = oxygenServiceRequest('sr-1', { orderDetail: [{ text: 'Venturi 28% at 4 L/min' }] });
const dr = oxygenDeviceRequest('dr-1', 'Non-rebreather mask', { parameter: [{ code: { text: 'Oxygen flow' }, valueQuantity: quantity(15, 'L/min') }] });
const unrelated = [
  { resourceType: 'MedicationRequest', id: 'mr-amox', status: 'draft', medicationCodeableConcept: { text: 'Amoxicillin 500 mg' } },
  { resourceType: 'NutritionOrder', id: 'no-1', status: 'draft' },
  { resourceType: 'VisionPrescription', id: 'vp-1' },
];

function facts(input: { hook?: 'order-sign' | 'order-select'; draftOrders?: unknown; selections?: readonly string[]; data?: GatheredData }) {
  return extractFacts(
    {
      hook: input.hook ?? 'order-sign',
      draftOrders: 'draftOrders' in input ? input.draftOrders : bundle([mr]),
      selections: input.selections,
      data: input.data ?? gathered(),
    },
    policy,
    NOW,
  );
}

describe('extractFacts', () => {
  it('reads every oxygen order in an order-sign bundle with no Bundle.type as a subject', () => {
    const result = facts({ draftOrders: bundle([mr, ...unrelated, sr, dr]) });
    expect(result.orders.map((o) => [o.reference, o.device, o.flowLPerMin, o.isSubject])).toStrictEqual([
      ['MedicationRequest/mr-1', 'nasal-cannula', 2, true],
      ['ServiceRequest/sr-1', 'venturi-mask', 4, true],
      ['DeviceRequest/dr-1', 'reservoir-mask', 15, true],
    ]);
  });

  it('makes only the selected orders the subject on order-select', () => {
    const result = facts({
      hook: 'order-select',
      draftOrders: bundle([mr, sr, dr], 'collection'),
      selections: ['ServiceRequest/sr-1', 'https://ehr.larkspur.example/fhir/DeviceRequest/dr-1'],
    });
    expect(result.orders.map((o) => [o.reference, o.isSubject])).toStrictEqual([
      ['MedicationRequest/mr-1', false],
      ['ServiceRequest/sr-1', true],
      ['DeviceRequest/dr-1', true],
    ]);
  });

  it('reads a non-draft order being re-signed', () => {
    const active = { ...mr, status: 'active' };
    expect(facts({ draftOrders: bundle([active]) }).orders[0]?.status).toBe('active');
  });

  it('builds the facts for an invented Larkspur Bay patient with COPD', () => {
    const gasAt = minutesAgo(40);
    const result = facts({
      data: gathered({
        observations: [
          observation('spo2', '59408-5', 86, '%', minutesAgo(10)),
          observation('rr', '9279-1', 26, '/min', minutesAgo(10)),
          observation('ph', '2744-1', 7.33, '[pH]', gasAt),
          observation('pco2', '2019-8', 6.9, 'kPa', gasAt),
          observation('bmi', '39156-5', 27.5, 'kg/m2', '2026-10-02'),
        ],
        conditions: [condition('copd', { coding: [{ system: SNOMED, code: '13645005', display: 'Chronic obstructive lung disease' }] })],
        encounter: {
          resourceType: 'Encounter',
          id: 'enc-1',
          location: [{ location: { display: 'Larkspur Bay General Hospital, Acute Medical Unit' } }],
        },
        missing: ['haemoglobin'],
      }),
    });
    expect(result.patient).toStrictEqual({ ageYears: 75, bmiKgPerM2: 27.5 }); // born 1951-03-14
    expect(result.spo2Percent.map((m) => m.value)).toStrictEqual([86]);
    expect(result.respRatePerMin.map((m) => m.value)).toStrictEqual([26]);
    expect(result.bloodGases).toHaveLength(1);
    expect(result.bloodGases[0]?.paco2MmHg).toBeCloseTo(51.75, 2); // 6.9 kPa x 7.50062 (check-values 3b)
    expect(result.conditions).toStrictEqual([
      { kind: 'copd', matchedBy: 'SNOMED CT 13645005', display: 'Chronic obstructive lung disease', reference: 'Condition/copd' },
    ]);
    expect(result.encounterUnit).toBe('Larkspur Bay General Hospital, Acute Medical Unit');
    expect(result.missingData).toStrictEqual(['haemoglobin']);
    expect(result.setAside).toStrictEqual([]);
  });

  it('lists oxygen orders already on record, but not the draft itself or stopped orders', () => {
    const onRecord = [
      { ...oxygenServiceRequest('sr-old', { orderDetail: [{ text: '2L NC' }] }), status: 'active' },
      { ...oxygenMedicationRequest('mr-hold'), status: 'on-hold' },
      { ...mr, status: 'active' },
      { ...oxygenServiceRequest('sr-done'), status: 'completed' },
      { resourceType: 'MedicationRequest', id: 'mr-x', status: 'active', medicationCodeableConcept: { text: 'Salbutamol' } },
    ];
    // A searchset Bundle left inside the list is opened too.
    const searchset = bundle(onRecord, 'searchset') as { resourceType: string };
    const result = facts({ data: gathered({ activeOrders: [searchset] }) });
    expect(result.activeOrders.map((o) => [o.reference, o.isSubject])).toStrictEqual([
      ['ServiceRequest/sr-old', false],
      ['MedicationRequest/mr-hold', false],
    ]);
  });

  it('notes an OperationOutcome sent in place of data', () => {
    const outcome = {
      resourceType: 'OperationOutcome',
      id: 'oo-1',
      issue: [{ severity: 'error', code: 'timeout', diagnostics: 'Observation search timed out' }],
    };
    const result = facts({ data: gathered({ observations: [outcome] }) });
    expect(result.setAside).toStrictEqual([
      {
        what: 'OperationOutcome',
        reason: 'error-in-source',
        detail: 'The EHR reported a problem getting data: Observation search timed out',
        reference: 'OperationOutcome/oo-1',
      },
    ]);
  });

  it('gathers notes from every reader', () => {
    const result = facts({
      data: gathered({
        observations: [observation('s', '59408-5', 30, '%', minutesAgo(5))],
        conditions: [condition('t', { coding: [{ system: ICD10, code: 'T60.3' }] })],
      }),
    });
    expect(result.setAside.map((n) => [n.what, n.reason])).toStrictEqual([
      ['SpO2', 'implausible'],
      ['T60.3', 'unrecognised'],
    ]);
  });

  describe('edge cases', () => {
    it.each([
      ['null', null],
      ['a string', 'Bundle'],
      ['a number', 42],
      ['an empty array', []],
      ['a Bundle whose entry is an object', { resourceType: 'Bundle', entry: { resource: mr } }],
      ['a Bundle with odd entries', { resourceType: 'Bundle', entry: [null, 'x', { resource: 5 }, { resource: { resourceType: 7 } }] }],
    ])('reads no orders, and does not throw, when draftOrders is %s', (_what, draftOrders) => {
      expect(facts({ draftOrders }).orders).toStrictEqual([]);
    });

    it('reads orders from a bare resource or an array of resources', () => {
      expect(facts({ draftOrders: mr }).orders.map((o) => o.reference)).toStrictEqual(['MedicationRequest/mr-1']);
      expect(facts({ draftOrders: [sr, dr] }).orders.map((o) => o.reference)).toStrictEqual(['ServiceRequest/sr-1', 'DeviceRequest/dr-1']);
    });

    it('reads a draft twice in the bundle once', () => {
      expect(facts({ draftOrders: bundle([mr, mr]) }).orders).toHaveLength(1);
    });

    it('treats a selection that names nothing as no subject', () => {
      const result = facts({ hook: 'order-select', draftOrders: bundle([mr]), selections: ['MedicationRequest/other'] });
      expect(result.orders.map((o) => o.isSubject)).toStrictEqual([false]);
    });

    it('survives gathered data of the wrong shapes', () => {
      const odd = { patient: 'x', observations: 'y', conditions: null, encounter: [], activeOrders: {}, missing: [1, 'spo2'] } as unknown as GatheredData;
      const result = facts({ data: odd });
      expect([result.patient.ageYears, result.spo2Percent, result.conditions, result.missingData]).toStrictEqual([undefined, [], [], ['spo2']]);
    });

    it('never throws on arbitrary JSON anywhere a caller can send it', () => {
      const anyJson = fc.jsonValue();
      fc.assert(
        fc.property(anyJson, anyJson, anyJson, anyJson, (draftOrders, observations, conditions, patient) => {
          const data = { ...gathered(), observations: [observations], conditions: [conditions], patient } as unknown as GatheredData;
          const result = extractFacts({ hook: 'order-select', draftOrders, selections: ['MedicationRequest/1'], data }, policy, NOW);
          expect(Array.isArray(result.orders)).toBe(true);
        }),
        { numRuns: 200 },
      );
    });

    it('never throws on resources of the right type with arbitrary fields', () => {
      const fields = fc.dictionary(
        fc.constantFrom('code', 'dosageInstruction', 'orderDetail', 'parameter', 'valueQuantity', 'component', 'effectiveDateTime', 'status', 'extension', 'note', 'clinicalStatus'),
        fc.jsonValue(),
      );
      const resource = fc.tuple(fc.constantFrom('MedicationRequest', 'ServiceRequest', 'DeviceRequest', 'Observation', 'Condition'), fields);
      fc.assert(
        fc.property(fc.array(resource, { maxLength: 5 }), (items) => {
          const resources = items.map(([resourceType, rest]) => ({ ...rest, resourceType, code: rest['code'] ?? { text: 'oxygen' } }));
          const data = gathered({ observations: resources, conditions: resources, activeOrders: resources });
          const result = extractFacts({ hook: 'order-sign', draftOrders: bundle(resources), selections: undefined, data }, policy, NOW);
          expect(Array.isArray(result.setAside)).toBe(true);
        }),
        { numRuns: 300 },
      );
    });
  });
});
