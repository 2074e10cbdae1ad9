import { DEMO_UNITS } from '../demo/demo-requests.js';
import {
  condition,
  encounter,
  observation,
  oxygenOrder,
  patient,
  type DemoConditionCode,
  type DemoDevice,
  type DemoObservationKind,
  type DemoOrder,
  type Json,
} from './demo-resources.js';

/**
 * One invented admission at Larkspur Bay General Hospital: a patient, an encounter on a ward, the
 * conditions on record, one or two oxygen orders, and the SpO2, respiratory rate, oxygen and blood
 * gas Observations before and after each order. Deterministic from the random sequence given. Pure.
 *
 * The mixture is chosen so that policies differ visibly: standard-range patients with SpO2 and
 * written targets spread across 88-99 % (where 94-98 % and 92-96 % disagree), COPD patients ordered
 * 94-98 % as well as 88-92 %, patients whose COPD is recorded only after the order (the replay must not
 * see it), blood gases issued after the order was signed, and overlapping orders.
 */

export type DemoProfile = 'standard' | 'copd' | 'other-risk' | 'oxygen-if-hypoxaemic' | 'icu' | 'copd-recorded-later';

export const ICU_WARD = 'Intensive Care Unit';
const WARDS = [DEMO_UNITS.respiratory, DEMO_UNITS.acuteMedical, DEMO_UNITS.surgical, DEMO_UNITS.highDependency, DEMO_UNITS.emergency];

const COPD: DemoConditionCode = { snomed: '13645005', display: 'Chronic obstructive lung disease' };
const OTHER_RISK: readonly DemoConditionCode[] = [
  { snomed: '190966007', display: 'Obesity hypoventilation syndrome' },
  { snomed: '12295008', display: 'Bronchiectasis' },
  { snomed: '405773007', display: 'Kyphoscoliosis deformity of spine' },
];
const OXYGEN_IF_HYPOXAEMIC: readonly DemoConditionCode[] = [
  { snomed: '394659003', display: 'Acute coronary syndrome' },
  { snomed: '230690007', display: 'Cerebrovascular accident' },
];
const PNEUMONIA: DemoConditionCode = { snomed: '233604007', display: 'Pneumonia' };

// Invented names: given and family names drawn apart, so no combination is meant to be anyone.
const GIVEN = ['Ada', 'Bram', 'Cleo', 'Dov', 'Edda', 'Fenn', 'Greer', 'Hale', 'Ines', 'Jory', 'Kit', 'Lowen', 'Mab', 'Nell', 'Orrin', 'Pell'];
const FAMILY = ['Quillby', 'Marrowfield', 'Tansey', 'Brackwater', 'Ollander', 'Fernside', 'Hobday', 'Larchmont', 'Pennock', 'Sallow', 'Thimbleby', 'Varden'];

const MINUTE = 60_000;
const HOUR = 60 * MINUTE;
const DAY = 24 * HOUR;

export type Rng = () => number;

function pick<T>(rng: Rng, items: readonly T[]): T {
  const item = items[Math.floor(rng() * items.length)];
  if (item === undefined) {
    throw new Error('pick: empty list');
  }
  return item;
}

function between(rng: Rng, low: number, high: number): number {
  return low + Math.floor(rng() * (high - low + 1));
}

const round1 = (value: number): number => Math.round(value * 10) / 10;
const round2 = (value: number): number => Math.round(value * 100) / 100;

function chooseProfile(rng: Rng): DemoProfile {
  const r = rng();
  if (r < 0.45) return 'standard';
  if (r < 0.7) return 'copd';
  if (r < 0.78) return 'other-risk';
  if (r < 0.85) return 'oxygen-if-hypoxaemic';
  if (r < 0.95) return 'icu';
  return 'copd-recorded-later';
}

const atRisk = (profile: DemoProfile): boolean => profile === 'copd' || profile === 'other-risk';

function chooseTarget(rng: Rng, profile: DemoProfile): DemoOrder['target'] {
  const r = rng();
  if (atRisk(profile)) {
    // Some orders at 94-98 % for patients at hypercapnic risk: the error BTS 2017 Table 4 warns of.
    return r < 0.5 ? { lowPercent: 88, highPercent: 92 } : r < 0.85 ? { lowPercent: 94, highPercent: 98 } : undefined;
  }
  return r < 0.55 ? { lowPercent: 94, highPercent: 98 } : r < 0.8 ? { lowPercent: 92, highPercent: 96 } : undefined;
}

function chooseDevice(rng: Rng, profile: DemoProfile): DemoDevice {
  if (profile === 'icu') {
    return { kind: 'high-flow', flowLPerMin: pick(rng, [40, 50, 60]), fio2Fraction: pick(rng, [0.35, 0.45, 0.6]) };
  }
  const r = rng();
  if (atRisk(profile) && r < 0.5) {
    const fio2Percent = pick(rng, [24, 28, 35]);
    // The flows printed on common Venturi valves (24 % 2 L/min, 28 % 4 L/min, 35 % 8 L/min; common practice)
    return { kind: 'venturi', fio2Percent, flowLPerMin: fio2Percent === 24 ? 2 : fio2Percent === 28 ? 4 : 8 };
  }
  return r < 0.8 ? { kind: 'nasal-cannula', flowLPerMin: between(rng, 1, 4) } : { kind: 'simple-face-mask', flowLPerMin: between(rng, 5, 8) };
}

/** The SpO2 at order time: spread across the bands where the two standard ranges disagree. */
function chooseSpo2(rng: Rng, profile: DemoProfile): number {
  if (atRisk(profile) || profile === 'copd-recorded-later') return between(rng, 84, 97);
  if (profile === 'oxygen-if-hypoxaemic') return between(rng, 90, 99);
  return between(rng, 86, 99);
}

function orderType(rng: Rng, device: DemoDevice): DemoOrder['type'] {
  if (device.kind === 'high-flow') return 'ServiceRequest';
  const r = rng();
  return r < 0.4 ? 'MedicationRequest' : r < 0.8 ? 'ServiceRequest' : 'DeviceRequest';
}

export interface DemoCase {
  /** Every resource of the admission, each with its resourceType. */
  readonly resources: readonly Json[];
  readonly orders: number;
}

/**
 * Admission `n` (1-based) with `orderCount` (1 or 2) orders, starting within 30 days of `startMs`.
 * Ids are `lbgh-sim-<n>` and derived from it, so they are unique across an export.
 */
export function demoCase(n: number, orderCount: 1 | 2, rng: Rng, startMs: number): DemoCase {
  const key = String(n).padStart(6, '0');
  const patientId = `lbgh-sim-${key}`;
  const encounterId = `enc-${patientId}`;
  const profile = chooseProfile(rng);
  const ward = profile === 'icu' ? ICU_WARD : pick(rng, WARDS);
  const admittedMs = startMs + Math.floor(rng() * 29 * DAY / MINUTE) * MINUTE;
  const ageYears = between(rng, 35, 92);
  const birth = new Date(admittedMs - ageYears * 365.25 * DAY - between(rng, 0, 300) * DAY).toISOString().slice(0, 10);
  const resources: Json[] = [
    patient(patientId, { given: pick(rng, GIVEN), family: pick(rng, FAMILY) }, pick(rng, ['female', 'male']), birth),
  ];
  let conditionNumber = 0;
  const addCondition = (code: DemoConditionCode, recordedMs: number): void => {
    conditionNumber += 1;
    resources.push(condition(`cond-${key}-${conditionNumber}`, patientId, code, recordedMs));
  };
  if (profile === 'copd') addCondition(COPD, admittedMs - between(rng, 200, 3000) * DAY);
  if (profile === 'other-risk') addCondition(pick(rng, OTHER_RISK), admittedMs - between(rng, 100, 3000) * DAY);
  if (profile === 'oxygen-if-hypoxaemic') addCondition(pick(rng, OXYGEN_IF_HYPOXAEMIC), admittedMs + 20 * MINUTE);
  if (profile === 'standard' && rng() < 0.6) addCondition(PNEUMONIA, admittedMs + 30 * MINUTE);

  let observationNumber = 0;
  const addObservation = (kind: DemoObservationKind, value: number, effectiveMs: number, issuedMs?: number): void => {
    observationNumber += 1;
    resources.push(observation(`obs-${key}-${observationNumber}`, patientId, kind, value, effectiveMs, issuedMs));
  };

  let authoredMs = admittedMs + between(rng, 60, 240) * MINUTE;
  const orders: DemoOrder[] = [];
  for (let i = 1; i <= orderCount; i += 1) {
    const device = chooseDevice(rng, profile);
    const nextMs = i < orderCount ? authoredMs + between(rng, 3, 8) * HOUR : undefined;
    // One later order in ten leaves the earlier one running: two oxygen orders at once.
    const endMs = nextMs !== undefined && rng() < 0.9 ? nextMs : undefined;
    orders.push({ id: `o2-${key}-${i}`, type: orderType(rng, device), patientId, encounterId, authoredMs, endMs, device, target: chooseTarget(rng, profile) });
    const spo2 = chooseSpo2(rng, profile);
    addObservation('spo2', Math.min(100, spo2 + between(rng, -2, 2)), authoredMs - between(rng, 50, 90) * MINUTE);
    addObservation('spo2', spo2, authoredMs - between(rng, 1, 30) * MINUTE);
    addObservation('respRate', between(rng, 14, 34), authoredMs - between(rng, 1, 30) * MINUTE);
    if (rng() < 0.5) {
      addObservation(device.kind === 'venturi' ? 'fio2' : 'o2Flow', device.kind === 'venturi' ? device.fio2Percent : Math.max(1, device.flowLPerMin - 1), authoredMs - between(rng, 5, 40) * MINUTE);
    }
    if (atRisk(profile) || profile === 'copd-recorded-later' || rng() < 0.15) {
      const drawnMs = authoredMs - between(rng, 20, 120) * MINUTE;
      // One gas in five is issued after the order was signed: the replay must not see it.
      const issuedMs = rng() < 0.2 ? authoredMs + between(rng, 1, 20) * MINUTE : drawnMs + between(rng, 5, 15) * MINUTE;
      const retains = atRisk(profile) && rng() < 0.7;
      addObservation('ph', round2(retains ? 7.28 + rng() * 0.14 : 7.36 + rng() * 0.08), drawnMs, issuedMs);
      addObservation('paco2', round1(retains ? 6.2 + rng() * 2.4 : 4.6 + rng() * 1.3), drawnMs, issuedMs);
      addObservation('pao2', round1(7 + rng() * 4), drawnMs, issuedMs);
      addObservation('hco3', round1(retains ? 27 + rng() * 7 : 22 + rng() * 4), drawnMs, issuedMs);
    }
    // After the order: the record goes on (the replay must not see these either).
    addObservation('spo2', Math.min(100, spo2 + between(rng, -1, 4)), authoredMs + between(rng, 20, 40) * MINUTE);
    addObservation('spo2', Math.min(100, spo2 + between(rng, 0, 5)), authoredMs + between(rng, 100, 160) * MINUTE);
    addObservation('respRate', between(rng, 12, 28), authoredMs + between(rng, 100, 160) * MINUTE);
    if (nextMs !== undefined) authoredMs = nextMs;
  }
  if (profile === 'copd-recorded-later') addCondition(COPD, authoredMs + between(rng, 30, 600) * MINUTE);
  const dischargedMs = authoredMs + between(rng, 1, 5) * DAY;
  resources.push(encounter(encounterId, patientId, ward, admittedMs, dischargedMs));
  resources.push(...orders.map(oxygenOrder));
  return { resources, orders: orders.length };
}
