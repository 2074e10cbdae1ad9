import type { FhirResource } from '../../../src/fhir/gathered-data.js';

/**
 * Small FHIR R4 builders for the scenario corpus: invented patients at Larkspur Bay General
 * Hospital, a fictional hospital. No real people. Every time is given as minutes before the fixed
 * clock `NOW`, so a scenario reads as the ward sees it ("SpO2 92 % twenty minutes ago").
 */

export const NOW = new Date('2026-11-20T10:00:00Z');
export const PATIENT_ID = 'lbgh-scn-0001';

const LOINC = 'http://loinc.org';
const SNOMED = 'http://snomed.info/sct';
const UCUM = 'http://unitsofmeasure.org';
const ICD10 = 'http://hl7.org/fhir/sid/icd-10';
const CLINICAL = 'http://terminology.hl7.org/CodeSystem/condition-clinical';
const TARGET_EXTENSION = 'https://oxygen-order-checker.example.org/fhir/StructureDefinition/target-oxygen-saturation';

/** `minutes` before NOW as a FHIR dateTime. */
export function ago(minutes: number): string {
  return new Date(NOW.getTime() - minutes * 60_000).toISOString();
}

let serial = 0;
/** A fresh resource id (the harness resets the counter per scenario so ids are stable). */
export function nextId(prefix: string): string {
  serial += 1;
  return `${prefix}-${String(serial).padStart(3, '0')}`;
}
export function resetIds(): void {
  serial = 0;
}

function quantity(value: number, unit: string): Record<string, unknown> {
  return { value, unit, system: UCUM, code: unit };
}

function observation(loinc: string, value: number, unit: string, minutesAgo: number, extra: Record<string, unknown> = {}): FhirResource {
  return {
    resourceType: 'Observation',
    id: nextId('obs'),
    status: 'final',
    code: { coding: [{ system: LOINC, code: loinc }] },
    subject: { reference: `Patient/${PATIENT_ID}` },
    effectiveDateTime: ago(minutesAgo),
    valueQuantity: quantity(value, unit),
    ...extra,
  };
}

// --- the patient -----------------------------------------------------------------------------

/** A patient of `years` on NOW (birthday a month before NOW), or with no birthDate when undefined. */
export function patientAged(years: number | undefined): FhirResource {
  const born = new Date(NOW.getTime());
  born.setUTCFullYear(born.getUTCFullYear() - (years ?? 0));
  born.setUTCMonth(born.getUTCMonth() - 1);
  return {
    resourceType: 'Patient',
    id: PATIENT_ID,
    ...(years === undefined ? {} : { birthDate: born.toISOString().slice(0, 10) }),
    managingOrganization: { display: 'Larkspur Bay General Hospital' },
  };
}

// --- bedside observations (LOINC, check-values.md §6) ----------------------------------------

export const spo2 = (percent: number, minutesAgo = 15): FhirResource => observation('59408-5', percent, '%', minutesAgo);
export const respRate = (perMin: number, minutesAgo = 15): FhirResource => observation('9279-1', perMin, '/min', minutesAgo);
export const o2Flow = (lPerMin: number, minutesAgo = 15): FhirResource => observation('3151-8', lPerMin, 'L/min', minutesAgo);
export const fio2Percent = (percent: number, minutesAgo = 15): FhirResource => observation('3150-0', percent, '%', minutesAgo);
export const haemoglobin = (gPerDl: number, minutesAgo = 600): FhirResource => observation('718-7', gPerDl, 'g/dL', minutesAgo);
export const bmi = (kgPerM2: number): FhirResource => observation('39156-5', kgPerM2, 'kg/m2', 60 * 24 * 30);

/** SpO2 read on room air: the reading with a recorded oxygen flow of 0 L/min at the same time. */
export function spo2OnAir(percent: number, minutesAgo = 15): FhirResource[] {
  return [spo2(percent, minutesAgo), o2Flow(0, minutesAgo)];
}

/** SpO2 read on a recorded flow (L/min) at the same time. */
export function spo2OnFlow(percent: number, lPerMin: number, minutesAgo = 15): FhirResource[] {
  return [spo2(percent, minutesAgo), o2Flow(lPerMin, minutesAgo)];
}

export interface GasInput {
  readonly ph?: number;
  /** In `unit` (kPa unless said). */
  readonly pco2?: number;
  readonly po2?: number;
  readonly hco3?: number;
  readonly baseExcess?: number;
  readonly unit?: 'kPa' | 'mm[Hg]';
  readonly minutesAgo?: number;
  readonly specimen?: 'arterial' | 'venous';
  /**
   * How the EHR filed it: 'together' (one effective time), 'spread' (each result `spreadSeconds`
   * later than the one before), 'issued' (same effective time, differing `issued`), 'specimen'
   * (spread times, one shared Observation.specimen), 'panel' (a 24336-0 panel with hasMember).
   */
  readonly filing?: 'together' | 'spread' | 'issued' | 'specimen' | 'panel';
  readonly spreadSeconds?: number;
}

const ARTERIAL = { ph: '2744-1', po2: '2703-7', pco2: '2019-8', hco3: '1960-4', baseExcess: '1925-7' } as const;
const VENOUS = { ph: '2746-6', po2: '2705-2', pco2: '2021-4', hco3: '1963-8', baseExcess: '11555-0' } as const;

/** One blood gas sample as the lab files it: one Observation per result (LOINC, check-values.md §6). */
export function bloodGas(input: GasInput): FhirResource[] {
  const codes = input.specimen === 'venous' ? VENOUS : ARTERIAL;
  const unit = input.unit ?? 'kPa';
  const minutesAgo = input.minutesAgo ?? 40;
  const filing = input.filing ?? 'together';
  const step = input.spreadSeconds ?? 90;
  const specimenRef = { reference: `Specimen/${nextId('spec')}` };
  const results: FhirResource[] = [];
  const parts: [keyof typeof codes, number | undefined, string][] = [
    ['ph', input.ph, '[pH]'],
    ['pco2', input.pco2, unit],
    ['po2', input.po2, unit],
    ['hco3', input.hco3, 'mmol/L'],
    ['baseExcess', input.baseExcess, 'mmol/L'],
  ];
  for (const [field, value, valueUnit] of parts) {
    if (value === undefined) continue;
    const index = results.length;
    const spreadMinutes = filing === 'spread' || filing === 'specimen' ? -(index * step) / 60 : 0;
    const extra: Record<string, unknown> = {};
    if (filing === 'issued') extra['issued'] = new Date(Date.parse(ago(minutesAgo)) + (index * step + 300) * 1000).toISOString();
    if (filing === 'specimen') extra['specimen'] = specimenRef;
    results.push(observation(codes[field], value, valueUnit, minutesAgo + spreadMinutes, extra));
  }
  if (filing === 'panel') {
    const panel: FhirResource = {
      ...observation('24336-0', 0, '1', minutesAgo),
      valueQuantity: undefined,
      hasMember: results.map((r) => ({ reference: `Observation/${String(r.id)}` })),
    };
    // Members filed a little apart, as some analysers do, linked only through the panel.
    return [panel, ...results.map((r, i) => ({ ...r, effectiveDateTime: ago(minutesAgo - i * 1.5) }))];
  }
  return results;
}

// --- conditions ----------------------------------------------------------------------------

export interface ConditionInput {
  readonly text: string;
  readonly snomed?: string;
  readonly icd10?: string;
  readonly status?: 'active' | 'resolved';
}

export function condition(input: ConditionInput): FhirResource {
  const coding = [
    ...(input.snomed === undefined ? [] : [{ system: SNOMED, code: input.snomed, display: input.text }]),
    ...(input.icd10 === undefined ? [] : [{ system: ICD10, code: input.icd10, display: input.text }]),
  ];
  return {
    resourceType: 'Condition',
    id: nextId('cond'),
    clinicalStatus: { coding: [{ system: CLINICAL, code: input.status ?? 'active' }] },
    code: { ...(coding.length === 0 ? {} : { coding }), text: input.text },
    subject: { reference: `Patient/${PATIENT_ID}` },
  };
}

// --- oxygen orders -------------------------------------------------------------------------

export interface OrderOptions {
  readonly status?: 'draft' | 'active';
  /** Minutes before NOW the order was written; undefined leaves authoredOn out. */
  readonly authoredMinutesAgo?: number | undefined;
  readonly target?: readonly [number, number];
}

function common(options: OrderOptions): Record<string, unknown> {
  const authored = 'authoredMinutesAgo' in options ? options.authoredMinutesAgo : 5;
  return {
    status: options.status ?? 'draft',
    intent: 'order',
    subject: { reference: `Patient/${PATIENT_ID}` },
    ...(authored === undefined ? {} : { authoredOn: ago(authored) }),
    requester: { reference: 'Practitioner/lbgh-prescriber-07' },
    ...(options.target === undefined
      ? {}
      : {
          extension: [
            {
              url: TARGET_EXTENSION,
              valueRange: { low: quantity(options.target[0], '%'), high: quantity(options.target[1], '%') },
            },
          ],
        }),
  };
}

/** A ServiceRequest for oxygen therapy (SNOMED CT 57485005) stated in words, as many EHRs send it. */
export function serviceOrder(instruction: string, options: OrderOptions = {}): FhirResource {
  return {
    resourceType: 'ServiceRequest',
    id: nextId('o2'),
    code: { coding: [{ system: SNOMED, code: '57485005', display: 'Oxygen therapy' }], text: 'Oxygen therapy' },
    patientInstruction: instruction,
    ...common(options),
  };
}

/** A MedicationRequest for oxygen (SNOMED CT 24099007) with a device in `method` and a coded flow. */
export function medicationOrder(
  instruction: string,
  coded: { readonly method?: string; readonly flowLPerMin?: number; readonly fio2Percent?: number } = {},
  options: OrderOptions = {},
): FhirResource {
  const rate =
    coded.flowLPerMin !== undefined
      ? [{ rateQuantity: quantity(coded.flowLPerMin, 'L/min') }]
      : coded.fio2Percent !== undefined
        ? [{ doseQuantity: quantity(coded.fio2Percent, '%') }]
        : [];
  return {
    resourceType: 'MedicationRequest',
    id: nextId('o2'),
    medicationCodeableConcept: { coding: [{ system: SNOMED, code: '24099007', display: 'Oxygen' }], text: 'Oxygen' },
    dosageInstruction: [
      {
        text: instruction,
        ...(coded.method === undefined ? {} : { method: { text: coded.method } }),
        ...(rate.length === 0 ? {} : { doseAndRate: rate }),
      },
    ],
    ...common(options),
  };
}

/** A DeviceRequest naming the device in words, with flow and FiO2 as coded parameters (LOINC 3151-8, 3150-0). */
export function deviceOrder(
  device: string,
  coded: { readonly flowLPerMin?: number; readonly fio2Percent?: number; readonly note?: string } = {},
  options: OrderOptions = {},
): FhirResource {
  const parameter = [
    ...(coded.flowLPerMin === undefined
      ? []
      : [{ code: { coding: [{ system: LOINC, code: '3151-8' }], text: 'Oxygen flow' }, valueQuantity: quantity(coded.flowLPerMin, 'L/min') }]),
    ...(coded.fio2Percent === undefined
      ? []
      : [{ code: { coding: [{ system: LOINC, code: '3150-0' }], text: 'FiO2' }, valueQuantity: quantity(coded.fio2Percent, '%') }]),
  ];
  return {
    resourceType: 'DeviceRequest',
    id: nextId('o2'),
    codeCodeableConcept: { text: device },
    ...(parameter.length === 0 ? {} : { parameter }),
    ...(coded.note === undefined ? {} : { note: [{ text: coded.note }] }),
    ...common(options),
  };
}

/** The same order as already running on the record (status active), written `minutesAgo` ago. */
export function onRecord(order: FhirResource, minutesAgo: number | undefined): FhirResource {
  const { authoredOn: _dropped, ...rest } = order as Record<string, unknown>;
  return {
    ...(rest as FhirResource),
    id: nextId('o2-rec'),
    status: 'active',
    ...(minutesAgo === undefined ? {} : { authoredOn: ago(minutesAgo) }),
  };
}
