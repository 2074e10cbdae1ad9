import { readFileSync } from 'node:fs';
import type { Policy } from '../../../src/core/policy.js';
import type { FhirResource, GatheredData } from '../../../src/fhir/gathered-data.js';
import { parsePolicyText } from '../../../src/policy/parse-policy.js';

/**
 * Invented test data for the FHIR reader: patients and orders at Larkspur Bay General Hospital, a
 * fictional hospital. No real people. The values are chosen to exercise the reader; the published
 * sources the tests check against are named in the tests.
 */

export const NOW = new Date('2026-12-01T12:00:00Z');

/** The bundled BTS 2017 policy: vital signs current for 240 min, gases 720 min, Hb 72 h, history 1825 d. */
export function btsPolicy(): Policy {
  const text = readFileSync(new URL('../../../policies/based-on-bts-2017.yaml', import.meta.url), 'utf8');
  const parsed = parsePolicyText(text);
  if (parsed.kind !== 'ok') {
    throw new Error('bundled policy did not parse');
  }
  return parsed.policy;
}

export const LOINC = 'http://loinc.org';
export const SNOMED = 'http://snomed.info/sct';
export const UCUM = 'http://unitsofmeasure.org';
export const ICD10 = 'http://hl7.org/fhir/sid/icd-10';
export const ICD10CM = 'http://hl7.org/fhir/sid/icd-10-cm';
export const RXNORM = 'http://www.nlm.nih.gov/research/umls/rxnorm';

/** `minutes` before NOW, as FHIR dateTime. */
export function minutesAgo(minutes: number): string {
  return new Date(NOW.getTime() - minutes * 60_000).toISOString();
}

export function quantity(value: number, unit: string): Record<string, unknown> {
  return { value, unit, system: UCUM, code: unit };
}

export function observation(
  id: string,
  loinc: string,
  value: number,
  unit: string,
  at: string,
  extra: Record<string, unknown> = {},
): FhirResource {
  return {
    resourceType: 'Observation',
    id,
    status: 'final',
    code: { coding: [{ system: LOINC, code: loinc }] },
    subject: { reference: 'Patient/lbgh-0001' },
    effectiveDateTime: at,
    valueQuantity: quantity(value, unit),
    ...extra,
  };
}

export function condition(id: string, code: Record<string, unknown>, extra: Record<string, unknown> = {}): FhirResource {
  return {
    resourceType: 'Condition',
    id,
    clinicalStatus: { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/condition-clinical', code: 'active' }] },
    code,
    subject: { reference: 'Patient/lbgh-0001' },
    ...extra,
  };
}

export const patient: FhirResource = {
  resourceType: 'Patient',
  id: 'lbgh-0001',
  birthDate: '1951-03-14',
  managingOrganization: { display: 'Larkspur Bay General Hospital' },
};

export function bundle(resources: readonly unknown[], type?: string): Record<string, unknown> {
  return {
    resourceType: 'Bundle',
    ...(type === undefined ? {} : { type }),
    entry: resources.map((resource) => ({ resource })),
  };
}

export function gathered(overrides: Partial<GatheredData> = {}): GatheredData {
  return {
    patient,
    observations: [],
    conditions: [],
    encounter: undefined,
    activeOrders: [],
    missing: [],
    ...overrides,
  };
}

/** A draft MedicationRequest for oxygen, by SNOMED CT 24099007, with whatever dosage is given. */
export function oxygenMedicationRequest(id: string, extra: Record<string, unknown> = {}): FhirResource {
  return {
    resourceType: 'MedicationRequest',
    id,
    status: 'draft',
    intent: 'order',
    medicationCodeableConcept: { coding: [{ system: SNOMED, code: '24099007', display: 'Oxygen' }], text: 'Oxygen' },
    subject: { reference: 'Patient/lbgh-0001' },
    authoredOn: '2026-12-01T11:50:00Z',
    ...extra,
  };
}

export function oxygenServiceRequest(id: string, extra: Record<string, unknown> = {}): FhirResource {
  return {
    resourceType: 'ServiceRequest',
    id,
    status: 'draft',
    intent: 'order',
    code: { coding: [{ system: SNOMED, code: '57485005', display: 'Oxygen therapy' }], text: 'Oxygen therapy' },
    subject: { reference: 'Patient/lbgh-0001' },
    ...extra,
  };
}

export function oxygenDeviceRequest(id: string, deviceText: string, extra: Record<string, unknown> = {}): FhirResource {
  return {
    resourceType: 'DeviceRequest',
    id,
    status: 'draft',
    intent: 'order',
    codeCodeableConcept: { text: deviceText },
    subject: { reference: 'Patient/lbgh-0001' },
    ...extra,
  };
}
