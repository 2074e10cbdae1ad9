import type { HookName } from '../core/types.js';
import { FHIR_ID_PATTERN, RELATIVE_REFERENCE_PATTERN, type DiscoveryResponse } from './schemas.js';

/**
 * The service catalogue served at `GET {base}/cds-services` (CDS Hooks 2.0 §Discovery) and the
 * prefetch templates the services declare (§Prefetch Template). Templates stay inside the
 * spec's recommended query subset (#prefetch-query-restrictions): instance reads, type-level
 * searches, reference and token-equality parameters, `_sort` and `_count`.
 */

const LOINC = 'http://loinc.org';

/** The Observation codes read by src/fhir, with what each is (LOINC; see check-values.md §6). */
export const OBSERVATION_LOINC_CODES = [
  '59408-5', // SpO2 by pulse oximetry
  '2708-6', // oxygen saturation in arterial blood (R4 core oxygensat profile)
  '3150-0', // inhaled oxygen concentration (FiO2)
  '3151-8', // inhaled oxygen flow rate
  '9279-1', // respiratory rate
  '2703-7', // PaO2
  '2019-8', // PaCO2
  '2744-1', // arterial pH
  '1960-4', // bicarbonate, arterial
  '1963-8', // bicarbonate, serum/plasma
  '1925-7', // base excess, arterial, by calculation
  '2746-6', // venous pH
  '2705-2', // venous PO2
  '2021-4', // venous PCO2
  '718-7', // haemoglobin
  '39156-5', // BMI
] as const;

/** SNOMED CT 57485005 "Oxygen therapy (procedure)". */
const OXYGEN_THERAPY_SNOMED = 'http://snomed.info/sct|57485005';

export type PrefetchKey =
  | 'patient'
  | 'observations'
  | 'conditions'
  | 'encounter'
  | 'medicationRequests'
  | 'serviceRequests'
  | 'deviceRequests';

export interface PrefetchKeyDefinition {
  readonly template: string;
  /** A required key that cannot be had from prefetch or the FHIR server means 412 (§Prefetch Template). */
  readonly required: boolean;
  readonly description: string;
}

/**
 * Every prefetch key. The optional ones never cause a 412: without an encounter there is no ward
 * to show, and without the orders on record the duplicate-order check stays silent.
 */
export const PREFETCH_KEYS: Readonly<Record<PrefetchKey, PrefetchKeyDefinition>> = {
  patient: {
    template: 'Patient/{{context.patientId}}',
    required: true,
    description: 'The patient (age).',
  },
  observations: {
    template:
      'Observation?patient={{context.patientId}}' +
      `&code=${OBSERVATION_LOINC_CODES.map((code) => `${LOINC}|${code}`).join(',')}` +
      '&_sort=-date&_count=100',
    required: true,
    description: 'Recent SpO2, FiO2, oxygen flow, respiratory rate, blood gases, haemoglobin and BMI.',
  },
  conditions: {
    // No status filter: R4 names it clinical-status, and resolved episodes (previous NIV) still count.
    template: 'Condition?patient={{context.patientId}}',
    required: true,
    description: 'Conditions that change the target range (BTS 2017 Table 4 risk factors and special situations).',
  },
  encounter: {
    template: 'Encounter/{{context.encounterId}}',
    required: false,
    description: 'The current encounter (ward), when the client sends encounterId.',
  },
  medicationRequests: {
    template: 'MedicationRequest?patient={{context.patientId}}&status=active',
    required: false,
    description: 'Active medication orders, to find oxygen already prescribed.',
  },
  serviceRequests: {
    template: `ServiceRequest?patient={{context.patientId}}&status=active&code=${OXYGEN_THERAPY_SNOMED}`,
    required: false,
    description: 'Active oxygen therapy orders already on record.',
  },
  deviceRequests: {
    // No code filter: oxygen equipment is coded many ways; the reader keeps only oxygen orders.
    template: 'DeviceRequest?patient={{context.patientId}}&status=active',
    required: false,
    description: 'Active device orders, to find oxygen ordered as equipment (patient-view).',
  },
};

function templatesFor(keys: readonly PrefetchKey[]): Readonly<Partial<Record<PrefetchKey, string>>> {
  return Object.fromEntries(keys.map((key) => [key, PREFETCH_KEYS[key].template]));
}

/** The order services' keys: the orders on record only feed the duplicate check. */
const PREFETCH = templatesFor([
  'patient',
  'observations',
  'conditions',
  'encounter',
  'medicationRequests',
  'serviceRequests',
]);

/**
 * patient-view has no draft: the active oxygen order is the subject, so every kind of order on record
 * is asked for. Observations are the same time-sorted, paged search (`_sort=-date`, 100 a page; the
 * FHIR fallback follows `next` links, src/http/gather-pages.ts); the look-back window is applied when
 * they are read, since a template cannot carry a time relative to the call.
 */
const PATIENT_VIEW_PREFETCH = templatesFor([
  'patient',
  'observations',
  'conditions',
  'encounter',
  'medicationRequests',
  'serviceRequests',
  'deviceRequests',
]);

export interface CdsServiceDefinition {
  readonly id: string;
  readonly hook: HookName;
  readonly title: string;
  readonly description: string;
  readonly usageRequirements: string;
  readonly prefetch: Readonly<Partial<Record<PrefetchKey, string>>>;
}

const USAGE =
  'Needs the patient, recent observations and conditions, by prefetch or by FHIR read access ' +
  '(fhirServer and fhirAuthorization). Advisory only: it never blocks an order.';

export const CDS_SERVICES: readonly CdsServiceDefinition[] = [
  {
    id: 'oxygen-order-sign',
    hook: 'order-sign',
    title: 'Oxygen order check at signing',
    description:
      'Checks an oxygen order before it is signed: the target SpO2 range against the patient\'s risk of ' +
      'hypercapnic respiratory failure, the device and flow against the FiO2 it delivers, and the recent ' +
      'saturations and blood gases. Shows its numbers and sources and offers a one-click change to the draft.',
    usageRequirements: USAGE,
    prefetch: PREFETCH,
  },
  {
    id: 'oxygen-order-select',
    hook: 'order-select',
    title: 'Oxygen order check at selection',
    description:
      'Quick, order-level checks when an oxygen order is picked from the catalogue: whether its target ' +
      'SpO2 range suits this patient, whether the device and flow fit together, and whether oxygen is ' +
      'already ordered. The full check runs again at signing.',
    usageRequirements: USAGE,
    prefetch: PREFETCH,
  },
  {
    id: 'oxygen-titration-review',
    hook: 'patient-view',
    title: 'Oxygen titration review',
    description:
      'When the record of a patient with an active oxygen order is opened: time in, above and below the ' +
      'target SpO2 range over the last hours, a rising oxygen need, whether the patient looks stable enough ' +
      'to step the oxygen down or stop it (BTS 2017 weaning advice), and an overdue blood gas for a patient ' +
      'at risk of hypercapnic respiratory failure. Offers a change to the active order only where the step ' +
      'is clear.',
    usageRequirements:
      'Needs the patient, recent observations, conditions and the active orders, by prefetch or by FHIR ' +
      'read access (fhirServer and fhirAuthorization). Advisory only: it never changes an order by itself.',
    prefetch: PATIENT_VIEW_PREFETCH,
  },
];

/** The service for a path id, or undefined (the http layer answers 404). */
export function findService(id: string): CdsServiceDefinition | undefined {
  return CDS_SERVICES.find((service) => service.id === id);
}

/** The discovery body (CDS Hooks 2.0 §Discovery › Response). */
export function discoveryResponse(): DiscoveryResponse {
  return {
    services: CDS_SERVICES.map((service) => ({
      hook: service.hook,
      title: service.title,
      description: service.description,
      id: service.id,
      prefetch: { ...service.prefetch },
      usageRequirements: service.usageRequirements,
    })),
  };
}

/**
 * Prefetch tokens valid for order-sign, order-select and patient-view (§Prefetch tokens; Hook Library
 * STU1; patient-view marks userId, patientId and encounterId as tokens).
 */
export const PREFETCH_TOKENS = [
  'context.userId',
  'context.patientId',
  'context.encounterId',
  'userPractitionerId',
  'userPractitionerRoleId',
  'userPatientId',
  'userRelatedPersonId',
] as const;

const USER_TOKEN_TYPES: Readonly<Record<string, string>> = {
  userPractitionerId: 'Practitioner',
  userPractitionerRoleId: 'PractitionerRole',
  userPatientId: 'Patient',
  userRelatedPersonId: 'RelatedPerson',
};

function tokenValue(token: string, context: Readonly<Record<string, unknown>>): string | undefined {
  const userId = context['userId'];
  const userType = USER_TOKEN_TYPES[token];
  if (userType !== undefined) {
    // The client normally derives these from userId (e.g. Practitioner/123 → 123).
    if (typeof userId !== 'string' || !RELATIVE_REFERENCE_PATTERN.test(userId)) {
      return undefined;
    }
    const [type, id] = userId.split('/');
    return type === userType ? id : undefined;
  }
  if (token === 'context.userId') {
    return typeof userId === 'string' && RELATIVE_REFERENCE_PATTERN.test(userId) ? userId : undefined;
  }
  if (token === 'context.patientId' || token === 'context.encounterId') {
    const value = context[token.slice('context.'.length)];
    // Only a well-formed FHIR id is substituted, so nothing sent can rewrite the query.
    return typeof value === 'string' && FHIR_ID_PATTERN.test(value) ? value : undefined;
  }
  return undefined;
}

/**
 * Fills a prefetch template's tokens from the hook context, for the FHIR fallback when the client
 * did not satisfy a key. Returns undefined when any token has no usable value (e.g. no encounterId),
 * meaning "this query cannot be made", not an error. Pure.
 */
export function expandPrefetchTemplate(
  template: string,
  context: Readonly<Record<string, unknown>>,
): string | undefined {
  let unresolved = false;
  const expanded = template.replace(/\{\{\s*([^{}\s]+)\s*\}\}/g, (_match, token: string) => {
    const value = tokenValue(token, context);
    if (value === undefined) {
      unresolved = true;
      return '';
    }
    return value;
  });
  return unresolved ? undefined : expanded;
}
