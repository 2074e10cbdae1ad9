import type { CdsRequest } from '../../../src/cds/schemas.js';
import type { FhirResource, GatheredData } from '../../../src/fhir/gathered-data.js';

/**
 * Invented Larkspur Bay General Hospital hook calls for evaluateHook tests, built in code so each
 * test can vary one thing. No real patients. The main case: a 64-year-old with kyphoscoliosis, an
 * arterial gas this morning with PaCO2 6.7 kPa, and a draft order for nasal cannula 3 L/min with a
 * target of 94–98 %.
 */

export const NOW = new Date('2025-03-14T09:45:00Z');
const PATIENT_ID = 'lb-pt-0064';
const UCUM = 'http://unitsofmeasure.org';

export function observation(id: string, loinc: string, value: number, unit: string, at: string): FhirResource {
  return {
    resourceType: 'Observation',
    id,
    status: 'final',
    code: { coding: [{ system: 'http://loinc.org', code: loinc }] },
    subject: { reference: `Patient/${PATIENT_ID}` },
    effectiveDateTime: at,
    valueQuantity: { value, unit, system: UCUM, code: unit },
  };
}

export function draftOxygenOrder(instruction: string): FhirResource {
  return {
    resourceType: 'ServiceRequest',
    id: 'lb-o2-0064',
    status: 'draft',
    intent: 'order',
    code: {
      coding: [{ system: 'http://snomed.info/sct', code: '57485005', display: 'Oxygen therapy' }],
      text: 'Oxygen therapy',
    },
    subject: { reference: `Patient/${PATIENT_ID}` },
    authoredOn: '2025-03-14T09:40:00Z',
    requester: { reference: 'Practitioner/lb-dr-0042' },
    patientInstruction: instruction,
  };
}

export function orderSignRequest(order: FhirResource, extraEntries: readonly FhirResource[] = []): CdsRequest {
  return {
    hook: 'order-sign',
    hookInstance: '9d3c2b1a-6f5e-4d4c-8b3a-2f1e0d9c8b7a',
    context: {
      userId: 'Practitioner/lb-dr-0042',
      patientId: PATIENT_ID,
      draftOrders: { resourceType: 'Bundle', entry: [order, ...extraEntries].map((resource) => ({ resource })) },
    },
  };
}

export function orderSelectRequest(order: FhirResource): CdsRequest {
  const sign = orderSignRequest(order);
  return {
    ...sign,
    hook: 'order-select',
    hookInstance: '1a2b3c4d-5e6f-4a7b-8c9d-0e1f2a3b4c5d',
    context: { ...sign.context, selections: [`${order.resourceType}/${String(order.id)}`] },
  };
}

const kyphoscoliosis: FhirResource = {
  resourceType: 'Condition',
  id: 'lb-cond-0064',
  clinicalStatus: {
    coding: [{ system: 'http://terminology.hl7.org/CodeSystem/condition-clinical', code: 'active' }],
  },
  code: {
    coding: [{ system: 'http://snomed.info/sct', code: '405773007', display: 'Kyphoscoliosis deformity of spine' }],
  },
  subject: { reference: `Patient/${PATIENT_ID}` },
};

/** The gathered prefetch for the kyphoscoliosis case (as the http layer hands it over). */
export function kyphoscoliosisData(overrides: Partial<GatheredData> = {}): GatheredData {
  return {
    // Born 1960-06-02: 64 years old on 2025-03-14.
    patient: { resourceType: 'Patient', id: PATIENT_ID, birthDate: '1960-06-02' },
    observations: [
      observation('lb-spo2-0064', '59408-5', 93, '%', '2025-03-14T09:20:00Z'),
      observation('lb-rr-0064', '9279-1', 22, '/min', '2025-03-14T09:20:00Z'),
      observation('lb-ph-0064', '2744-1', 7.37, '[pH]', '2025-03-14T06:40:00Z'),
      observation('lb-paco2-0064', '2019-8', 6.7, 'kPa', '2025-03-14T06:40:00Z'),
      observation('lb-pao2-0064', '2703-7', 8.1, 'kPa', '2025-03-14T06:40:00Z'),
      observation('lb-hco3-0064', '1960-4', 30, 'mmol/L', '2025-03-14T06:40:00Z'),
    ],
    conditions: [kyphoscoliosis],
    encounter: undefined,
    activeOrders: [],
    missing: [],
    ...overrides,
  };
}
