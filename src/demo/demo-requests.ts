import { requestMoment, retimeRequest } from '../cli/retime-request.js';
import { CARD_UUID_NAMESPACE, uuidV5 } from '../cds/stable-uuid.js';

/**
 * The demo's shift at the fictional Larkspur Bay General Hospital, as hook calls: the saved example
 * requests in examples/ retimed into the hours before the service started, each given its own invented
 * patient id and ward, and patient-view calls built here with an invented SpO2 series, so that the
 * titration review has patients who spent time above and below their target. Pure: the example bodies
 * come in already read, and `now` is the start time. Every patient is invented; names in the examples
 * are never stored (the audit trail keeps a keyed hash of the patient id only).
 */

/** A hook call of the demo shift, ready for the same evaluation the hook route does. */
export interface DemoCall {
  readonly serviceId: string;
  readonly request: unknown;
  /** When the call is taken to have been made: the cards' issue time. */
  readonly issuedAt: Date;
  /** What the clinician did with this call's cards, by rule id, where the story needs it told. */
  readonly answers?: Readonly<Record<string, DemoAnswer>>;
}

/** A planned answer to a card: its suggestion taken, overridden with one of its reason codes, or none yet. */
export type DemoAnswer =
  | { readonly outcome: 'accepted' }
  | { readonly outcome: 'overridden'; readonly reasonCode: string }
  | { readonly outcome: 'none' };

/** The wards the demo shift covers (invented). */
export const DEMO_UNITS = {
  respiratory: 'Ward 7 Respiratory',
  acuteMedical: 'Acute Medical Unit',
  surgical: 'Ward 12 Surgical',
  highDependency: 'High Dependency Unit',
  emergency: 'Emergency Department',
} as const;

/** One order-sign or order-select call: which saved example, on which ward, for which invented patient. */
interface OrderCallPlan {
  readonly example: string;
  readonly unit: string;
  readonly patientNumber: number;
  /** Hours before the start time the order was signed or selected. */
  readonly hoursBefore: number;
}

const U = DEMO_UNITS;

/** The saved patient-view request the review calls are built on (its order, patient and encounter). */
const PATIENT_VIEW_BASE = 'patient-view-pneumonia-weaning.json';

/** Order calls over the twelve hours before start; some examples recur for another patient and ward. */
const ORDER_CALLS: readonly OrderCallPlan[] = [
  { example: 'order-sign-pneumonia-above-target.json', unit: U.respiratory, patientNumber: 101, hoursBefore: 11.5 },
  { example: 'order-sign-kyphoscoliosis-standard-target.json', unit: U.respiratory, patientNumber: 102, hoursBefore: 10.8 },
  { example: 'order-sign-copd-acidosis-venturi.json', unit: U.respiratory, patientNumber: 103, hoursBefore: 9.6 },
  { example: 'order-sign-asthma-lower-range.json', unit: U.acuteMedical, patientNumber: 104, hoursBefore: 9.1 },
  { example: 'order-sign-face-mask-no-target.json', unit: U.surgical, patientNumber: 105, hoursBefore: 8.4 },
  { example: 'order-select-nasal-cannula-high-flow.json', unit: U.surgical, patientNumber: 106, hoursBefore: 7.9 },
  { example: 'order-sign-duplicate-order.json', unit: U.acuteMedical, patientNumber: 107, hoursBefore: 7.2 },
  { example: 'order-sign-high-flow-rox.json', unit: U.highDependency, patientNumber: 108, hoursBefore: 6.5 },
  { example: 'order-sign-high-flow-failing.json', unit: U.highDependency, patientNumber: 109, hoursBefore: 5.8 },
  { example: 'order-sign-asthma-tiring-hypercapnia.json', unit: U.acuteMedical, patientNumber: 110, hoursBefore: 5.0 },
  { example: 'order-sign-carbon-monoxide.json', unit: U.emergency, patientNumber: 111, hoursBefore: 4.4 },
  { example: 'order-sign-pneumonia-above-target.json', unit: U.acuteMedical, patientNumber: 112, hoursBefore: 3.6 },
  { example: 'order-sign-kyphoscoliosis-standard-target.json', unit: U.surgical, patientNumber: 113, hoursBefore: 2.9 },
  { example: 'order-sign-face-mask-no-target.json', unit: U.acuteMedical, patientNumber: 114, hoursBefore: 2.1 },
  { example: 'order-sign-copd-acidosis-venturi.json', unit: U.acuteMedical, patientNumber: 115, hoursBefore: 1.2 },
];

/** The saved examples the demo shift uses, read by the caller from examples/. */
export const DEMO_EXAMPLE_FILES: readonly string[] = [
  ...new Set([...ORDER_CALLS.map((plan) => plan.example), PATIENT_VIEW_BASE]),
];

const SERVICE_FOR_HOOK: Readonly<Record<string, string>> = {
  'order-sign': 'oxygen-order-sign',
  'order-select': 'oxygen-order-select',
  'patient-view': 'oxygen-titration-review',
};

/** One patient-view call: an invented patient's active oxygen order and their SpO2 over the shift. */
interface ReviewCallPlan {
  readonly unit: string;
  readonly patientNumber: number;
  readonly hoursBefore: number;
  /** The order as a prescriber writes it (read by src/fhir like any order's text). */
  readonly orderText: string;
  /** SNOMED CT condition on record, when there is one. */
  readonly condition?: { readonly code: string; readonly display: string };
  /** SpO2 (%) every 30 minutes, oldest first; the last is 10 minutes before the call. */
  readonly spo2Percent: readonly number[];
  /** Recorded oxygen flow (L/min) at each reading. */
  readonly flowLPerMin: readonly number[];
  readonly answers: Readonly<Record<string, DemoAnswer>>;
}

/** SNOMED CT 13645005 "Chronic obstructive lung disease". */
const COPD = { code: '13645005', display: 'Chronic obstructive lung disease' } as const;
/** SNOMED CT 385093006 "Community acquired pneumonia". */
const PNEUMONIA = { code: '385093006', display: 'Community acquired pneumonia' } as const;

const repeat = (value: number, count: number): number[] => Array.from({ length: count }, () => value);

/**
 * The respiratory therapist's round at the end of the shift: who spent time above target on oxygen,
 * who spent time below it, who is ready to step down. Readings are invented for the demo.
 */
const REVIEW_CALLS: readonly ReviewCallPlan[] = [
  {
    // COPD on 2 L/min held at 94–96 % against an 88–92 % target: above target most of the shift.
    unit: U.respiratory,
    patientNumber: 116,
    hoursBefore: 0.9,
    orderText: 'Oxygen 2 L/min via nasal cannulae. Target SpO2 88-92%',
    condition: COPD,
    spo2Percent: [91, 92, 93, 94, 95, 95, 94, 96, 95, 94, 95, 96, 95, 94, 95, 96, 95],
    flowLPerMin: repeat(2, 17),
    // The therapist took the step down offered.
    answers: { 'time-above-target-on-oxygen': { outcome: 'accepted' } },
  },
  {
    // Pneumonia on 4 L/min at 99–100 % against 94–98 %: above target on oxygen.
    unit: U.acuteMedical,
    patientNumber: 112,
    hoursBefore: 0.6,
    orderText: 'Oxygen 4 L/min via nasal cannulae. Target SpO2 94-98%',
    condition: PNEUMONIA,
    spo2Percent: [97, 98, 99, 99, 100, 99, 100, 100, 99, 99, 100, 99, 100, 99, 99, 100, 99],
    flowLPerMin: repeat(4, 17),
    answers: { 'time-above-target-on-oxygen': { outcome: 'overridden', reasonCode: 'weaning-in-progress' } },
  },
  {
    // After surgery, 2 L/min: a dip to 90–92 % mid-shift, back in range now.
    unit: U.surgical,
    patientNumber: 117,
    hoursBefore: 0.5,
    orderText: 'Oxygen 3 L/min via nasal cannulae. Target SpO2 94-98%',
    spo2Percent: [96, 95, 95, 94, 92, 91, 90, 91, 92, 93, 95, 96, 95, 96, 95, 96, 96],
    flowLPerMin: [2, 2, 2, 2, 2, 2, 3, 3, 3, 3, 3, 3, 3, 3, 3, 3, 3],
    // Not yet answered: one for the therapist's round.
    answers: { 'time-below-target': { outcome: 'none' } },
  },
  {
    // Flow raised through the shift and SpO2 still falling below 94–98 %: below target now.
    unit: U.highDependency,
    patientNumber: 118,
    hoursBefore: 0.4,
    orderText: 'Oxygen 6 L/min via simple face mask. Target SpO2 94-98%',
    condition: PNEUMONIA,
    spo2Percent: [96, 96, 95, 95, 94, 95, 94, 94, 93, 94, 93, 93, 92, 93, 92, 92, 91],
    flowLPerMin: [5, 5, 5, 5, 5, 5, 6, 6, 6, 6, 6, 6, 6, 6, 6, 6, 6],
    answers: {
      'time-below-target': { outcome: 'overridden', reasonCode: 'escalation-in-hand' },
      'rising-oxygen-need': { outcome: 'overridden', reasonCode: 'cause-known-and-treated' },
    },
  },
  {
    // COPD on 1 L/min: a spell at 85–87 % against 88–92 %, back in range after the flow was raised.
    unit: U.acuteMedical,
    patientNumber: 120,
    hoursBefore: 0.3,
    orderText: 'Oxygen 2 L/min via nasal cannulae. Target SpO2 88-92%',
    condition: COPD,
    spo2Percent: [89, 90, 89, 88, 87, 86, 85, 86, 87, 89, 90, 89, 90, 91, 90, 89, 90],
    flowLPerMin: [1, 1, 1, 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 2, 2, 2, 2],
    answers: {
      'time-below-target': { outcome: 'overridden', reasonCode: 'patient-usual-saturation' },
      'blood-gas-overdue': { outcome: 'none' },
    },
  },
];

/** Stable id text for an invented patient: `lbgh-demo-0116`. */
function patientIdFor(patientNumber: number): string {
  return `lbgh-demo-${String(patientNumber).padStart(4, '0')}`;
}

/** Replaces every occurrence of the example's patient id (Patient/…, enc-…, context) with another. */
function renamePatient(request: unknown, fromId: string, toId: string): unknown {
  return JSON.parse(JSON.stringify(request).replaceAll(fromId, toId)) as unknown;
}

interface RequestShape {
  hook: string;
  hookInstance: string;
  context: Record<string, unknown> & { patientId: string };
  prefetch: Record<string, unknown>;
}

function asRequest(body: unknown): RequestShape {
  return body as RequestShape;
}

/** An Encounter naming the ward the way src/fhir/read-encounter.ts reads it (location display). */
function encounterAt(patientId: string, unit: string): Record<string, unknown> {
  return {
    resourceType: 'Encounter',
    id: `enc-${patientId}`,
    status: 'in-progress',
    class: { system: 'http://terminology.hl7.org/CodeSystem/v3-ActCode', code: 'IMP', display: 'inpatient encounter' },
    subject: { reference: `Patient/${patientId}` },
    location: [{ location: { display: unit }, status: 'active' }],
  };
}

/** The demo call's own hookInstance: derived from the start time and its place in the shift. */
function hookInstanceFor(now: Date, index: number): string {
  return uuidV5(CARD_UUID_NAMESPACE, `demo-seed\n${now.toISOString()}\n${index}`);
}

function retimedTo(example: unknown, at: Date): unknown {
  const moment = requestMoment(example);
  if (moment === undefined) {
    throw new Error('demo: a saved example names no moment to retime from');
  }
  return retimeRequest(example, moment, at);
}

function orderCall(plan: OrderCallPlan, example: unknown, now: Date, index: number): DemoCall {
  const issuedAt = new Date(now.getTime() - plan.hoursBefore * 3_600_000);
  const original = asRequest(example);
  const patientId = patientIdFor(plan.patientNumber);
  const request = asRequest(renamePatient(retimedTo(example, issuedAt), original.context.patientId, patientId));
  request.hookInstance = hookInstanceFor(now, index);
  request.context.encounterId = `enc-${patientId}`;
  request.prefetch['encounter'] = encounterAt(patientId, plan.unit);
  return { serviceId: serviceFor(request.hook), request, issuedAt };
}

function serviceFor(hook: string): string {
  const serviceId = SERVICE_FOR_HOOK[hook];
  if (serviceId === undefined) {
    throw new Error(`demo: no service for hook '${hook}'`);
  }
  return serviceId;
}

function vitalSign(
  id: string,
  patientId: string,
  code: { readonly code: string; readonly display: string; readonly text: string },
  at: Date,
  value: number,
  unit: string,
): Record<string, unknown> {
  return {
    fullUrl: `https://fhir.larkspur-bay.example/r4/Observation/${id}`,
    resource: {
      resourceType: 'Observation',
      id,
      status: 'final',
      category: [
        { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/observation-category', code: 'vital-signs' }] },
      ],
      code: { coding: [{ system: 'http://loinc.org', code: code.code, display: code.display }], text: code.text },
      subject: { reference: `Patient/${patientId}` },
      effectiveDateTime: at.toISOString().replace('.000Z', 'Z'),
      valueQuantity: { value, unit, system: 'http://unitsofmeasure.org', code: unit },
    },
  };
}

/** LOINC 59408-5 SpO2 by pulse oximetry and 3151-8 inhaled oxygen flow rate (src/cds/services.ts). */
const SPO2_CODE = { code: '59408-5', display: 'Oxygen saturation in Arterial blood by Pulse oximetry', text: 'SpO2' };
const FLOW_CODE = { code: '3151-8', display: 'Inhaled oxygen flow rate', text: 'Oxygen flow' };

function reviewCall(plan: ReviewCallPlan, base: unknown, now: Date, index: number): DemoCall {
  if (plan.spo2Percent.length !== plan.flowLPerMin.length) {
    throw new Error('demo: each SpO2 reading needs its flow');
  }
  const issuedAt = new Date(now.getTime() - plan.hoursBefore * 3_600_000);
  const original = asRequest(base);
  const patientId = patientIdFor(plan.patientNumber);
  const request = asRequest(renamePatient(retimedTo(base, issuedAt), original.context.patientId, patientId));
  request.hookInstance = hookInstanceFor(now, index);
  request.context.encounterId = `enc-${patientId}`;
  request.prefetch['encounter'] = encounterAt(patientId, plan.unit);
  const count = plan.spo2Percent.length;
  const entries = plan.spo2Percent.flatMap((spo2, i) => {
    // Newest first, as the prefetch's `_sort=-date` asks; the last reading 10 minutes before the call.
    const at = new Date(issuedAt.getTime() - (10 + (count - 1 - i) * 30) * 60_000);
    const n = String(i + 1).padStart(2, '0');
    return [
      vitalSign(`spo2-${patientId}-${n}`, patientId, SPO2_CODE, at, spo2, '%'),
      vitalSign(`flow-${patientId}-${n}`, patientId, FLOW_CODE, at, plan.flowLPerMin[i] ?? 0, 'L/min'),
    ];
  });
  request.prefetch['observations'] = { resourceType: 'Bundle', type: 'searchset', total: entries.length, entry: entries.reverse() };
  request.prefetch['conditions'] =
    plan.condition === undefined
      ? { resourceType: 'Bundle', type: 'searchset', total: 0 }
      : {
          resourceType: 'Bundle',
          type: 'searchset',
          total: 1,
          entry: [
            {
              resource: {
                resourceType: 'Condition',
                id: `cond-${patientId}`,
                clinicalStatus: {
                  coding: [{ system: 'http://terminology.hl7.org/CodeSystem/condition-clinical', code: 'active' }],
                },
                verificationStatus: {
                  coding: [{ system: 'http://terminology.hl7.org/CodeSystem/condition-ver-status', code: 'confirmed' }],
                },
                code: { coding: [{ system: 'http://snomed.info/sct', ...plan.condition }], text: plan.condition.display },
                subject: { reference: `Patient/${patientId}` },
              },
            },
          ],
        };
  const orders = request.prefetch['serviceRequests'] as { entry?: { resource: Record<string, unknown> }[] };
  for (const entry of orders.entry ?? []) {
    entry.resource['patientInstruction'] = plan.orderText;
  }
  return { serviceId: serviceFor(request.hook), request, issuedAt, answers: plan.answers };
}

/**
 * Every call of the demo shift, oldest first. `examples` maps each of DEMO_EXAMPLE_FILES to its parsed
 * body; the weaning example itself is also reviewed as it stands (ready to step down), on Ward 7.
 */
export function buildDemoCalls(examples: ReadonlyMap<string, unknown>, now: Date): DemoCall[] {
  const example = (name: string): unknown => {
    const body = examples.get(name);
    if (body === undefined) {
      throw new Error(`demo: example ${name} was not read`);
    }
    return body;
  };
  const orders = ORDER_CALLS.map((plan, index) => orderCall(plan, example(plan.example), now, index));
  const base = example(PATIENT_VIEW_BASE);
  const reviews = REVIEW_CALLS.map((plan, index) => reviewCall(plan, base, now, ORDER_CALLS.length + index));
  const weaning = weaningCall(base, now, ORDER_CALLS.length + REVIEW_CALLS.length);
  return [...orders, ...reviews, weaning].sort((a, b) => a.issuedAt.getTime() - b.issuedAt.getTime());
}

/** The saved weaning example as it stands, for patient 119 on Ward 7: ready to step down. */
function weaningCall(base: unknown, now: Date, index: number): DemoCall {
  const issuedAt = new Date(now.getTime() - 0.8 * 3_600_000);
  const patientId = patientIdFor(119);
  const request = asRequest(renamePatient(retimedTo(base, issuedAt), asRequest(base).context.patientId, patientId));
  request.hookInstance = hookInstanceFor(now, index);
  request.prefetch['encounter'] = encounterAt(patientId, U.respiratory);
  // Stepped down as suggested.
  return { serviceId: serviceFor(request.hook), request, issuedAt, answers: { 'ready-to-step-down': { outcome: 'accepted' } } };
}
