import { readFileSync } from 'node:fs';
import type { Policy } from '../../src/core/policy.js';
import type {
  BloodGas,
  ConditionFact,
  ConditionKind,
  Facts,
  Measured,
  OxygenOrder,
} from '../../src/core/types.js';
import { parsePolicyText } from '../../src/policy/parse-policy.js';
import { convertKnown } from '../../src/units/convert.js';

/**
 * Small builders for test Facts: plain objects matching src/core/types.ts. The patients are invented
 * (Larkspur Bay General Hospital demo ward); the clinical numbers in each test cite their source.
 */

/** The clock every core test runs at. */
export const NOW = new Date('2025-03-14T12:00:00.000Z');

/** ISO time `minutes` before NOW (negative for after). */
export function minutesAgo(minutes: number): string {
  return new Date(NOW.getTime() - minutes * 60_000).toISOString();
}

export function loadPolicy(name: 'bts-2017' | 'tsanz-2015'): Policy {
  const text = readFileSync(new URL(`../../policies/based-on-${name}.yaml`, import.meta.url), 'utf8');
  const parsed = parsePolicyText(text);
  if (parsed.kind !== 'ok') {
    throw new Error(`bundled policy ${name} is invalid`);
  }
  return parsed.policy;
}

/** The bundled default policy (BTS 2017 targets). */
export const BTS = loadPolicy('bts-2017');
export const TSANZ = loadPolicy('tsanz-2015');

/** A copy of a policy with some parts replaced (the parsed policy is frozen). */
export function withPolicy(base: Policy, changes: Partial<Policy>): Policy {
  return { ...base, ...changes };
}

export function oxygenOrder(overrides: Partial<OxygenOrder> = {}): OxygenOrder {
  return {
    reference: 'MedicationRequest/o2-draft-1',
    resourceType: 'MedicationRequest',
    status: 'draft',
    device: 'nasal-cannula',
    deviceText: undefined,
    flowLPerMin: 2,
    setFio2Fraction: undefined,
    target: { lowPercent: 94, highPercent: 98, readFrom: 'structured' },
    targetNote: undefined,
    purpose: 'titrate',
    authoredOn: NOW.toISOString(),
    isSubject: true,
    ...overrides,
  };
}

/** An order on record (not in the draft), active. */
export function activeOrder(overrides: Partial<OxygenOrder> = {}): OxygenOrder {
  return oxygenOrder({
    reference: 'MedicationRequest/o2-active-1',
    status: 'active',
    isSubject: false,
    authoredOn: minutesAgo(24 * 60),
    ...overrides,
  });
}

export function measured(value: number, ageMinutes: number, unit: string, id?: string): Measured {
  return {
    value,
    at: minutesAgo(ageMinutes),
    reported: { value, unit },
    reference: id === undefined ? undefined : `Observation/${id}`,
  };
}

export const spo2 = (percent: number, ageMinutes = 10): Measured => measured(percent, ageMinutes, '%');
export const respRate = (perMin: number, ageMinutes = 10): Measured => measured(perMin, ageMinutes, '/min');
export const fio2 = (fraction: number, ageMinutes = 10): Measured => measured(fraction, ageMinutes, '1');
export const o2Flow = (lPerMin: number, ageMinutes = 10): Measured => measured(lPerMin, ageMinutes, 'L/min');
export const haemoglobin = (gPerDl: number, ageMinutes = 60): Measured => measured(gPerDl, ageMinutes, 'g/dL');

/**
 * A blood gas as the reader would produce it: pressures given in kPa (as UK laboratories report them)
 * are converted to mmHg with the project's UCUM converter, and kept as reported for display.
 */
export function bloodGas(parts: {
  readonly ageMinutes: number;
  readonly specimen?: BloodGas['specimen'];
  readonly ph?: number;
  readonly paco2Kpa?: number;
  readonly pao2Kpa?: number;
  readonly paco2MmHg?: number;
  readonly pao2MmHg?: number;
  readonly hco3?: number;
}): BloodGas {
  const reported: Record<string, { value: number; unit: string }> = {};
  const pressure = (kpa: number | undefined, mmHg: number | undefined, key: string): number | undefined => {
    if (kpa !== undefined) {
      reported[key] = { value: kpa, unit: 'kPa' };
      return convertKnown(kpa, 'kPa', 'mm[Hg]');
    }
    if (mmHg !== undefined) {
      reported[key] = { value: mmHg, unit: 'mm[Hg]' };
    }
    return mmHg;
  };
  const paco2MmHg = pressure(parts.paco2Kpa, parts.paco2MmHg, 'paco2');
  const pao2MmHg = pressure(parts.pao2Kpa, parts.pao2MmHg, 'pao2');
  if (parts.ph !== undefined) {
    reported.ph = { value: parts.ph, unit: '[pH]' };
  }
  if (parts.hco3 !== undefined) {
    reported.hco3 = { value: parts.hco3, unit: 'mmol/L' };
  }
  return {
    at: minutesAgo(parts.ageMinutes),
    specimen: parts.specimen ?? 'arterial',
    ph: parts.ph,
    pao2MmHg,
    paco2MmHg,
    hco3MmolPerL: parts.hco3,
    baseExcessMmolPerL: undefined,
    reported,
  };
}

const DISPLAY: Readonly<Record<ConditionKind, [string, string]>> = {
  copd: ['Chronic obstructive lung disease', 'SNOMED CT 13645005'],
  bronchiectasis: ['Bronchiectasis', 'SNOMED CT 12295008'],
  'cystic-fibrosis': ['Cystic fibrosis', 'SNOMED CT 190905008'],
  'neuromuscular-disease': ['Motor neuron disease', 'SNOMED CT 37340000'],
  'chest-wall-deformity': ['Kyphoscoliosis deformity of spine', 'SNOMED CT 405773007'],
  'obesity-hypoventilation': ['Obesity hypoventilation', 'SNOMED CT 190966007'],
  'morbid-obesity': ['Morbid obesity', "text: 'morbid obesity'"],
  'chronic-hypercapnic-respiratory-failure': ['Chronic respiratory failure with hypercapnia', 'ICD-10 J96.12'],
  'previous-niv-or-imv': ['Previous non-invasive ventilation', "text: 'NIV 2023'"],
  'carbon-monoxide-poisoning': ['Carbon monoxide poisoning', "text: 'CO poisoning'"],
  'paraquat-poisoning': ['Paraquat poisoning', "text: 'paraquat'"],
  'bleomycin-lung-injury': ['Bleomycin lung injury', "text: 'bleomycin lung'"],
  'cluster-headache': ['Cluster headache', "text: 'cluster headache'"],
  pneumothorax: ['Pneumothorax', "text: 'pneumothorax'"],
  'sickle-cell-crisis': ['Sickle cell crisis', "text: 'sickle cell crisis'"],
  pregnancy: ['Pregnancy', "text: 'pregnant'"],
  'acute-asthma': ['Acute severe asthma', "text: 'acute asthma'"],
  'sedative-or-opioid-toxicity': ['Opioid toxicity', "text: 'opioid toxicity'"],
  'acute-coronary-syndrome': ['Acute coronary syndrome', "text: 'ACS'"],
  stroke: ['Acute stroke', "text: 'stroke'"],
  hyperventilation: ['Hyperventilation', "text: 'hyperventilation'"],
};

export function condition(kind: ConditionKind): ConditionFact {
  const [display, matchedBy] = DISPLAY[kind];
  return { kind, display, matchedBy, reference: `Condition/${kind}` };
}

/** Facts for an invented adult on the Larkspur Bay medical ward, with nothing on record by default. */
export function buildFacts(overrides: Partial<Facts> = {}): Facts {
  const facts: Omit<Facts, 'trendReadings'> = {
    patient: { ageYears: 58, bmiKgPerM2: 26 },
    orders: [oxygenOrder()],
    activeOrders: [],
    spo2Percent: [],
    fio2Fraction: [],
    o2FlowLPerMin: [],
    respRatePerMin: [],
    haemoglobinGPerDL: [],
    bloodGases: [],
    historicBloodGases: [],
    conditions: [],
    setAside: [],
    missingData: [],
    encounterUnit: 'Larkspur Bay General Hospital, Ward 4 (demo)',
    ...overrides,
  };
  // Unless a test says otherwise, the readings given are the trend too (as the reader keeps them).
  const trendReadings = overrides.trendReadings ?? {
    spo2Percent: facts.spo2Percent,
    fio2Fraction: facts.fio2Fraction,
    o2FlowLPerMin: facts.o2FlowLPerMin,
  };
  return { ...facts, trendReadings };
}
