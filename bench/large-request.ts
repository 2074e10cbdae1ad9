import type { HookExample } from './cases.js';

/**
 * The large request of issue 9: a valid order-sign call whose observations prefetch holds about 200
 * SpO2, respiratory-rate and arterial blood gas observations (about 70 KB of JSON), for an invented
 * patient of the fictional Larkspur Bay General Hospital on a respiratory ward over two days. The
 * values are made up for the bench only, not clinical check values; each kind of observation is
 * coded as the examples code it (LOINC with UCUM units).
 */

export const LARGE_REQUEST_NAME = 'order-sign-200-observations';
export const LARGE_REQUEST_OBSERVATIONS = 200;

const PATIENT_ID = 'lbgh-bench-0200';
const ENCOUNTER_ID = 'enc-lbgh-bench-0200';
const UCUM = 'http://unitsofmeasure.org';
const SLOT_MS = 15 * 60_000;
/** A gas panel every this many slots (3 hours): ward gases are rarer than vital signs. */
const GAS_EVERY_SLOTS = 12;

type Json = Readonly<Record<string, unknown>>;

function observation(id: string, loinc: string, atMs: number, value: number, unit: string): Json {
  return {
    resource: {
      resourceType: 'Observation',
      id,
      status: 'final',
      // Coded as an EHR's minimal export codes them: LOINC and UCUM, no display text or category.
      code: { coding: [{ system: 'http://loinc.org', code: loinc }] },
      subject: { reference: `Patient/${PATIENT_ID}` },
      effectiveDateTime: new Date(atMs).toISOString().replace('.000Z', 'Z'),
      valueQuantity: { value, unit, system: UCUM, code: unit },
    },
  };
}

/** A smooth, repeatable wobble in [-1, 1] so the series is not flat and not random. */
const wobble = (slot: number, period: number): number => Math.sin((2 * Math.PI * slot) / period);
const round = (value: number, digits: number): number => Number(value.toFixed(digits));

/** `count` observations, newest first, the newest five minutes before `orderMs`. */
export function largeObservationSeries(orderMs: number, count: number): Json[] {
  const entries: Json[] = [];
  for (let slot = 0; entries.length < count; slot += 1) {
    const atMs = orderMs - 5 * 60_000 - slot * SLOT_MS;
    const n = String(slot).padStart(3, '0');
    entries.push(observation(`spo2-b200-${n}`, '59408-5', atMs, Math.round(88 + 2 * wobble(slot, 9)), '%'));
    if (entries.length < count) {
      entries.push(observation(`rr-b200-${n}`, '9279-1', atMs, Math.round(25 + 4 * wobble(slot, 7)), '/min'));
    }
    if (slot % GAS_EVERY_SLOTS === 1) {
      const gasMs = atMs - 5 * 60_000;
      // pH, PaCO2, PaO2 and bicarbonate of arterial blood.
      const gas: [string, number, string][] = [
        ['2744-1', round(7.32 + 0.02 * wobble(slot, 50), 2), '[pH]'],
        ['2019-8', round(7.6 + 0.4 * wobble(slot, 40), 1), 'kPa'],
        ['2703-7', round(7.8 + 0.5 * wobble(slot, 30), 1), 'kPa'],
        ['1960-4', Math.round(30 + wobble(slot, 60)), 'mmol/L'],
      ];
      for (const [loinc, value, unit] of gas) {
        if (entries.length < count) {
          entries.push(observation(`abg-b200-${n}-${loinc}`, loinc, gasMs, value, unit));
        }
      }
    }
  }
  return entries;
}

const searchset = (entry: readonly Json[]): Json => ({ resourceType: 'Bundle', type: 'searchset', total: entry.length, entry });

/** The whole order-sign request, its order authored at `now`. */
export function largeOrderSignRequest(now: Date, observations: number = LARGE_REQUEST_OBSERVATIONS): Json {
  const orderMs = now.getTime();
  const authoredOn = new Date(orderMs).toISOString().replace(/\.\d{3}Z$/, 'Z');
  return {
    hookInstance: '7d1c0e2a-5b8f-4c1e-9a0d-2000b0c0a070',
    hook: 'order-sign',
    context: {
      userId: 'Practitioner/dr-bench-01',
      patientId: PATIENT_ID,
      encounterId: ENCOUNTER_ID,
      draftOrders: {
        resourceType: 'Bundle',
        type: 'collection',
        entry: [
          {
            resource: {
              resourceType: 'MedicationRequest',
              id: 'o2-order-b200',
              status: 'draft',
              intent: 'order',
              medicationCodeableConcept: {
                coding: [{ system: 'http://snomed.info/sct', code: '24099007', display: 'Oxygen' }],
                text: 'Oxygen',
              },
              subject: { reference: `Patient/${PATIENT_ID}` },
              encounter: { reference: `Encounter/${ENCOUNTER_ID}` },
              authoredOn,
              requester: { reference: 'Practitioner/dr-bench-01' },
              dosageInstruction: [
                {
                  text: 'Oxygen via Venturi 28% at 4 L/min, target SpO2 88-92%',
                  method: { text: 'Venturi mask 28%' },
                  doseAndRate: [{ rateQuantity: { value: 4, unit: 'L/min', system: UCUM, code: 'L/min' } }],
                },
              ],
            },
          },
        ],
      },
    },
    prefetch: {
      patient: {
        resourceType: 'Patient',
        id: PATIENT_ID,
        identifier: [{ system: 'urn:larkspur-bay:mrn', value: 'LBGH-BENCH-0200' }],
        name: [{ family: 'Penhallow', given: ['Edith'] }],
        gender: 'female',
        birthDate: '1949-03-11',
      },
      observations: searchset(largeObservationSeries(orderMs, observations)),
      conditions: searchset([
        {
          resource: {
            resourceType: 'Condition',
            id: 'cond-b200',
            clinicalStatus: { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/condition-clinical', code: 'active' }] },
            verificationStatus: { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/condition-ver-status', code: 'confirmed' }] },
            code: { coding: [{ system: 'http://snomed.info/sct', code: '13645005', display: 'Chronic obstructive lung disease' }] },
            subject: { reference: `Patient/${PATIENT_ID}` },
          },
        },
      ]),
      encounter: {
        resourceType: 'Encounter',
        id: ENCOUNTER_ID,
        status: 'in-progress',
        class: { system: 'http://terminology.hl7.org/CodeSystem/v3-ActCode', code: 'IMP', display: 'inpatient encounter' },
        subject: { reference: `Patient/${PATIENT_ID}` },
        location: [{ location: { display: 'Ward 7 (Respiratory), Larkspur Bay General Hospital' } }],
      },
      medicationRequests: searchset([]),
      serviceRequests: searchset([]),
    },
  };
}

/** The large request as the bench sends it, compact JSON. */
export function largeExample(now: Date, observations: number = LARGE_REQUEST_OBSERVATIONS): HookExample {
  const body = JSON.stringify(largeOrderSignRequest(now, observations));
  return {
    name: observations === LARGE_REQUEST_OBSERVATIONS ? LARGE_REQUEST_NAME : `order-sign-${observations}-observations`,
    serviceId: 'oxygen-order-sign',
    body,
    requestBytes: Buffer.byteLength(body),
  };
}
