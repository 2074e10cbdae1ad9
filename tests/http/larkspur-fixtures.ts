/**
 * Invented demo data for the HTTP tests: Larkspur Bay General Hospital, a fictional hospital, and its
 * fictional patient lb-pt-0417. No real person, order or token.
 */

export const PATIENT_ID = 'lb-pt-0417';
export const ENCOUNTER_ID = 'lb-enc-2231';
export const TOKEN = 'lbgh-demo-token-4f9c2e';
export const PATIENT_FAMILY_NAME = 'Harrowgate';
/** The clock the app is given: half an hour after the observations. */
export const NOW = new Date('2025-03-14T09:00:00Z');

export const patient = {
  resourceType: 'Patient',
  id: PATIENT_ID,
  identifier: [{ system: 'urn:larkspur-bay:mrn', value: 'LB-MRN-880417' }],
  name: [{ family: PATIENT_FAMILY_NAME, given: ['Edwin'] }],
  gender: 'male',
  birthDate: '1951-09-30',
};

export const encounter = {
  resourceType: 'Encounter',
  id: ENCOUNTER_ID,
  status: 'in-progress',
  class: { system: 'http://terminology.hl7.org/CodeSystem/v3-ActCode', code: 'IMP' },
  subject: { reference: `Patient/${PATIENT_ID}` },
};

function observation(id: string, loinc: string, value: number, unit: string, code: string) {
  return {
    resourceType: 'Observation',
    id,
    status: 'final',
    code: { coding: [{ system: 'http://loinc.org', code: loinc }] },
    subject: { reference: `Patient/${PATIENT_ID}` },
    effectiveDateTime: '2025-03-14T08:30:00Z',
    valueQuantity: { value, unit, system: 'http://unitsofmeasure.org', code },
  };
}

export const spo2 = observation('lb-obs-spo2-1', '59408-5', 87, '%', '%');
export const respRate = observation('lb-obs-rr-1', '9279-1', 24, 'breaths/min', '/min');
export const paco2 = observation('lb-obs-paco2-1', '2019-8', 7.1, 'kPa', 'kPa');
export const ph = observation('lb-obs-ph-1', '2744-1', 7.33, 'pH', '[pH]');

export const copd = {
  resourceType: 'Condition',
  id: 'lb-cond-copd',
  clinicalStatus: {
    coding: [{ system: 'http://terminology.hl7.org/CodeSystem/condition-clinical', code: 'active' }],
  },
  code: {
    coding: [
      { system: 'http://snomed.info/sct', code: '13645005', display: 'Chronic obstructive lung disease' },
    ],
    text: 'COPD',
  },
  subject: { reference: `Patient/${PATIENT_ID}` },
};

export function searchset(
  resources: readonly unknown[],
  links: readonly { relation: string; url: string }[] = [],
): Record<string, unknown> {
  return {
    resourceType: 'Bundle',
    type: 'searchset',
    ...(links.length === 0 ? {} : { link: links }),
    entry: resources.map((resource) => ({ resource, search: { mode: 'match' } })),
  };
}

/** The oxygen order being signed: nasal cannula 4 L/min with a 94-98 % target (SNOMED 57485005). */
export const oxygenOrder = {
  resourceType: 'ServiceRequest',
  id: 'lb-o2-0417',
  status: 'draft',
  intent: 'order',
  code: {
    coding: [{ system: 'http://snomed.info/sct', code: '57485005', display: 'Oxygen therapy' }],
    text: 'Oxygen via nasal cannula 4 L/min, target SpO2 94-98 %',
  },
  subject: { reference: `Patient/${PATIENT_ID}` },
  encounter: { reference: `Encounter/${ENCOUNTER_ID}` },
  authoredOn: '2025-03-14T08:55:00Z',
};

export const context = {
  userId: 'Practitioner/lb-dr-0042',
  patientId: PATIENT_ID,
  encounterId: ENCOUNTER_ID,
  draftOrders: { resourceType: 'Bundle', type: 'collection', entry: [{ resource: oxygenOrder }] },
};

/** Every prefetch key satisfied. */
export const fullPrefetch = {
  patient,
  observations: searchset([spo2, respRate, paco2, ph]),
  conditions: searchset([copd]),
  encounter,
  medicationRequests: searchset([]),
  serviceRequests: searchset([]),
};

export const fhirAuthorization = {
  access_token: TOKEN,
  token_type: 'Bearer',
  expires_in: 300,
  scope: 'user/Patient.read user/Observation.read user/Condition.read user/Encounter.read',
  subject: 'oxygen-order-checker',
};

/** An order-sign request with every prefetch key satisfied and no FHIR server access. */
export function orderSignRequest(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    hook: 'order-sign',
    hookInstance: 'd1577c69-dfbe-44ad-ba6d-3e05e953b2ea',
    context: structuredClone(context),
    prefetch: structuredClone(fullPrefetch),
    ...overrides,
  };
}
