import { SYSTEMS } from '../fhir/codes.js';

/**
 * FHIR R4 resource builders for the invented Larkspur Bay General Hospital export (demo-export).
 * Shapes follow examples/*.json; codes come from src/fhir/codes.ts. Pure.
 */

export type Json = Readonly<Record<string, unknown>>;

const iso = (ms: number): string => new Date(ms).toISOString().replace('.000Z', 'Z');

const VITAL = { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/observation-category', code: 'vital-signs' }] };
const LAB = { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/observation-category', code: 'laboratory' }] };

/** The Observations the demo writes: LOINC code, display, UCUM unit and category. */
export const DEMO_OBSERVATIONS = {
  spo2: { code: '59408-5', display: 'Oxygen saturation in Arterial blood by Pulse oximetry', unit: '%', category: VITAL },
  respRate: { code: '9279-1', display: 'Respiratory rate', unit: '/min', category: VITAL },
  fio2: { code: '3150-0', display: 'Inhaled oxygen concentration', unit: '%', category: VITAL },
  o2Flow: { code: '3151-8', display: 'Inhaled oxygen flow rate', unit: 'L/min', category: VITAL },
  ph: { code: '2744-1', display: 'pH of Arterial blood', unit: '[pH]', category: LAB },
  paco2: { code: '2019-8', display: 'Carbon dioxide [Partial pressure] in Arterial blood', unit: 'kPa', category: LAB },
  pao2: { code: '2703-7', display: 'Oxygen [Partial pressure] in Arterial blood', unit: 'kPa', category: LAB },
  hco3: { code: '1960-4', display: 'Bicarbonate [Moles/volume] in Arterial blood', unit: 'mmol/L', category: LAB },
} as const;

export type DemoObservationKind = keyof typeof DEMO_OBSERVATIONS;

export function observation(
  id: string,
  patientId: string,
  kind: DemoObservationKind,
  value: number,
  effectiveMs: number,
  issuedMs?: number,
): Json {
  const spec = DEMO_OBSERVATIONS[kind];
  return {
    resourceType: 'Observation',
    id,
    status: 'final',
    category: [spec.category],
    code: { coding: [{ system: SYSTEMS.loinc, code: spec.code, display: spec.display }], text: spec.display },
    subject: { reference: `Patient/${patientId}` },
    effectiveDateTime: iso(effectiveMs),
    ...(issuedMs === undefined ? {} : { issued: iso(issuedMs) }),
    valueQuantity: { value, unit: spec.unit, system: SYSTEMS.ucum, code: spec.unit },
  };
}

export interface DemoConditionCode {
  readonly snomed: string;
  readonly display: string;
}

export function condition(id: string, patientId: string, code: DemoConditionCode, recordedMs: number): Json {
  return {
    resourceType: 'Condition',
    id,
    clinicalStatus: { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/condition-clinical', code: 'active' }] },
    verificationStatus: { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/condition-ver-status', code: 'confirmed' }] },
    code: { coding: [{ system: SYSTEMS.snomed, code: code.snomed, display: code.display }], text: code.display },
    subject: { reference: `Patient/${patientId}` },
    recordedDate: iso(recordedMs),
  };
}

export function patient(id: string, name: { given: string; family: string }, gender: string, birthDate: string): Json {
  return {
    resourceType: 'Patient',
    id,
    identifier: [{ system: 'urn:larkspur-bay:mrn', value: id.toUpperCase() }],
    name: [{ family: name.family, given: [name.given] }],
    gender,
    birthDate,
  };
}

export function encounter(id: string, patientId: string, ward: string, startMs: number, endMs: number): Json {
  return {
    resourceType: 'Encounter',
    id,
    status: 'finished',
    class: { system: 'http://terminology.hl7.org/CodeSystem/v3-ActCode', code: 'IMP', display: 'inpatient encounter' },
    subject: { reference: `Patient/${patientId}` },
    period: { start: iso(startMs), end: iso(endMs) },
    location: [{ location: { display: `${ward}, Larkspur Bay General Hospital` }, period: { start: iso(startMs), end: iso(endMs) } }],
  };
}

export type DemoDevice =
  | { readonly kind: 'nasal-cannula'; readonly flowLPerMin: number }
  | { readonly kind: 'simple-face-mask'; readonly flowLPerMin: number }
  | { readonly kind: 'venturi'; readonly fio2Percent: number; readonly flowLPerMin: number }
  | { readonly kind: 'high-flow'; readonly flowLPerMin: number; readonly fio2Fraction: number };

export interface DemoOrder {
  readonly id: string;
  readonly type: 'MedicationRequest' | 'ServiceRequest' | 'DeviceRequest';
  readonly patientId: string;
  readonly encounterId: string;
  readonly authoredMs: number;
  /** When a later order replaced it; undefined while it is the last one. */
  readonly endMs: number | undefined;
  readonly device: DemoDevice;
  readonly target: { readonly lowPercent: number; readonly highPercent: number } | undefined;
}

function deviceWords(device: DemoDevice): string {
  switch (device.kind) {
    case 'nasal-cannula':
      return `Oxygen ${device.flowLPerMin} L/min via nasal cannula`;
    case 'simple-face-mask':
      return `Oxygen ${device.flowLPerMin} L/min via simple face mask`;
    case 'venturi':
      return `Oxygen via Venturi ${device.fio2Percent}% at ${device.flowLPerMin} L/min`;
    case 'high-flow':
      return `High flow nasal oxygen ${device.flowLPerMin} L/min FiO2 ${device.fio2Fraction.toFixed(2)}`;
  }
}

function instruction(order: DemoOrder): string {
  const target = order.target === undefined ? '' : `, target SpO2 ${order.target.lowPercent}-${order.target.highPercent}%`;
  return `${deviceWords(order.device)}${target}`;
}

const quantity = (value: number, unit: string): Json => ({ value, unit, system: SYSTEMS.ucum, code: unit });

/** One oxygen order as MedicationRequest, ServiceRequest or DeviceRequest, the way examples/ write them. */
export function oxygenOrder(order: DemoOrder): Json {
  const status = order.endMs === undefined ? 'active' : 'completed';
  const common = {
    id: order.id,
    status,
    intent: 'order',
    subject: { reference: `Patient/${order.patientId}` },
    encounter: { reference: `Encounter/${order.encounterId}` },
    authoredOn: iso(order.authoredMs),
    requester: { reference: 'Practitioner/lbgh-dr-demo-01' },
  };
  const period = order.endMs === undefined ? undefined : { start: iso(order.authoredMs), end: iso(order.endMs) };
  switch (order.type) {
    case 'MedicationRequest':
      return {
        resourceType: 'MedicationRequest',
        ...common,
        medicationCodeableConcept: {
          coding: [
            { system: SYSTEMS.snomed, code: '24099007', display: 'Oxygen' },
            { system: SYSTEMS.rxnorm, code: '7806', display: 'Oxygen' },
          ],
          text: 'Oxygen',
        },
        dosageInstruction: [
          { text: instruction(order), doseAndRate: [{ rateQuantity: quantity(order.device.flowLPerMin, 'L/min') }] },
        ],
        ...(period === undefined ? {} : { dispenseRequest: { validityPeriod: period } }),
      };
    case 'ServiceRequest':
      return {
        resourceType: 'ServiceRequest',
        ...common,
        code: { coding: [{ system: SYSTEMS.snomed, code: '57485005', display: 'Oxygen therapy' }], text: 'Oxygen therapy' },
        patientInstruction: instruction(order),
        ...(period === undefined ? {} : { occurrencePeriod: period }),
      };
    case 'DeviceRequest':
      return { resourceType: 'DeviceRequest', ...common, ...deviceRequestParts(order), ...(period === undefined ? {} : { occurrencePeriod: period }) };
  }
}

function deviceRequestParts(order: DemoOrder): Json {
  const device = order.device;
  const name =
    device.kind === 'venturi' ? 'Venturi mask' : device.kind === 'nasal-cannula' ? 'Nasal cannula' : device.kind === 'simple-face-mask' ? 'Simple face mask' : 'High flow nasal cannula';
  const parameters: Json[] = [
    { code: { coding: [{ system: SYSTEMS.loinc, code: '3151-8', display: 'Inhaled oxygen flow rate' }] }, valueQuantity: quantity(device.flowLPerMin, 'L/min') },
  ];
  if (device.kind === 'venturi') {
    parameters.push({ code: { coding: [{ system: SYSTEMS.loinc, code: '3150-0', display: 'Inhaled oxygen concentration' }] }, valueQuantity: quantity(device.fio2Percent, '%') });
  }
  if (order.target !== undefined) {
    parameters.push({
      code: { text: 'Target SpO2' },
      valueRange: { low: quantity(order.target.lowPercent, '%'), high: quantity(order.target.highPercent, '%') },
    });
  }
  return { codeCodeableConcept: { text: name }, parameter: parameters, note: [{ text: instruction(order) }] };
}
