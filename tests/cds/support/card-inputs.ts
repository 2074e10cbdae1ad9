import { readFileSync } from 'node:fs';
import type { CardTemplate } from '../../../src/cds/card-templates.js';
import type { Assessment } from '../../../src/core/assessment/types.js';
import type { Policy } from '../../../src/core/policy.js';
import type { Facts, Finding } from '../../../src/core/types.js';
import type { FhirResource } from '../../../src/fhir/gathered-data.js';
import { parsePolicyText } from '../../../src/policy/parse-policy.js';

/**
 * Hand-made inputs for card-building tests: an invented Larkspur Bay patient aged 64 with
 * kyphoscoliosis, PaCO2 6.7 kPa this morning, nasal cannula 3 L/min ordered with a 94–98 % target.
 * The physiology numbers here are illustrative card content, not check values; the rule and
 * physiology tests own those.
 */

export const NOW = new Date('2025-03-14T08:10:00Z');
export const HOOK_INSTANCE = '5b0e8f9c-7a41-4d2e-9c1b-1f6a2d3e4b5c';

export function bundledPolicy(): Policy {
  const parsed = parsePolicyText(readFileSync(new URL('../../../policies/based-on-bts-2017.yaml', import.meta.url), 'utf8'));
  if (parsed.kind !== 'ok') {
    throw new Error('bundled policy does not parse');
  }
  return parsed.policy;
}

export const draftServiceRequest: FhirResource = {
  resourceType: 'ServiceRequest',
  id: 'lb-o2-0001',
  status: 'draft',
  intent: 'order',
  code: {
    coding: [{ system: 'http://snomed.info/sct', code: '57485005', display: 'Oxygen therapy' }],
    text: 'Oxygen therapy',
  },
  subject: { reference: 'Patient/lb-pt-0001' },
  authoredOn: '2025-03-14T08:05:00Z',
  patientInstruction: 'Oxygen 3 L/min via nasal cannula, target SpO2 94-98%',
};

const gas = {
  at: '2025-03-14T06:40:00Z',
  specimen: 'arterial',
  ph: 7.37,
  pao2MmHg: 60.8,
  paco2MmHg: 50.3,
  hco3MmolPerL: 29,
  baseExcessMmolPerL: undefined,
  reported: {
    ph: { value: 7.37, unit: '[pH]' },
    pao2: { value: 8.1, unit: 'kPa' },
    paco2: { value: 6.7, unit: 'kPa' },
    hco3: { value: 29, unit: 'mmol/L' },
  },
} as const;

export const facts: Facts = {
  patient: { ageYears: 64, bmiKgPerM2: undefined },
  orders: [
    {
      reference: 'ServiceRequest/lb-o2-0001',
      resourceType: 'ServiceRequest',
      status: 'draft',
      device: 'nasal-cannula',
      deviceText: 'nasal cannula',
      flowLPerMin: 3,
      setFio2Fraction: undefined,
      target: { lowPercent: 94, highPercent: 98, readFrom: 'text' },
      targetNote: undefined,
      purpose: 'titrate',
      authoredOn: '2025-03-14T08:05:00Z',
      isSubject: true,
    },
  ],
  activeOrders: [],
  spo2Percent: [
    { value: 93, at: '2025-03-14T07:50:00Z', reported: { value: 93, unit: '%' }, reference: 'Observation/lb-spo2-0001' },
  ],
  fio2Fraction: [],
  o2FlowLPerMin: [
    { value: 2, at: '2025-03-14T07:50:00Z', reported: { value: 2, unit: 'L/min' }, reference: 'Observation/lb-flow-0001' },
  ],
  respRatePerMin: [
    { value: 22, at: '2025-03-14T07:50:00Z', reported: { value: 22, unit: '/min' }, reference: 'Observation/lb-rr-0001' },
  ],
  haemoglobinGPerDL: [],
  trendReadings: { spo2Percent: [], fio2Fraction: [], o2FlowLPerMin: [] },
  bloodGases: [gas],
  historicBloodGases: [],
  conditions: [
    {
      kind: 'chest-wall-deformity',
      matchedBy: 'SNOMED CT 405773007',
      display: 'Kyphoscoliosis deformity of spine',
      reference: 'Condition/lb-cond-0001',
    },
  ],
  setAside: [
    {
      what: 'SpO2 of 38 %',
      reason: 'implausible',
      detail: 'Outside the plausible range for a pulse oximeter reading.',
      reference: 'Observation/lb-spo2-0000',
    },
  ],
  missingData: [],
  encounterUnit: 'Ward 7 (respiratory)',
};

const unknown = { kind: 'unknown', reason: 'not needed for this card test' } as const;
const pressureComputation = {
  name: 'Barometric pressure at the site',
  formula: 'P = 760 × (1 − 2.25577e-5 × h)^5.25588',
  substituted: 'h = 40 m',
  result: '756 mmHg',
  sourceKey: 'isa-1993',
};

export const assessment: Assessment = {
  order: facts.orders[0],
  barometricPressure: { mmHg: 756.4, model: 'isa-1993', sourceKey: 'isa-1993', computation: pressureComputation },
  unit: { kind: 'none', reason: 'no-units' },
  delivery: {
    kind: 'ok',
    value: {
      fio2: { estimate: 0.32, low: 0.28, high: 0.36 },
      thresholdFio2: { fraction: 0.28, point: 'low-end' },
      fio2Source: 'estimated',
      model: { kind: 'anatomic-reservoir', name: 'nasal cannula anatomic-reservoir model', sourceKey: 'device-mixing' },
      envelope: { low: 0.27, high: 0.37, basis: 'nasal cannula "rule of 4" ± 0.05', sourceKey: 'device-mixing' },
      respRatePerMin: 20,
      fixedPerformance: false,
      totalFlowLPerMin: undefined,
      peakInspiratoryFlowLPerMin: 30,
      entrainmentRatio: undefined,
      minimumFlowLPerMin: undefined,
      notes: [],
      sourceKeys: ['device-mixing'],
    },
  },
  current: {
    spo2: facts.spo2Percent[0],
    respRate: facts.respRatePerMin[0],
    haemoglobin: undefined,
    gas,
    arterialGas: gas,
  },
  physiology: {
    fio2AtGas: unknown,
    fio2AtSpo2: unknown,
    inspiredPo2: unknown,
    alveolarPo2: unknown,
    aaGradient: unknown,
    expectedAaGradient: unknown,
    pfRatio: unknown,
    sfRatio: unknown,
    rox: unknown,
    oxygenContent: unknown,
    gasInterpretation: unknown,
    mechanism: unknown,
  },
  hypercapnicRisk: {
    atRisk: true,
    reasons: [
      {
        kind: 'condition',
        evidence: 'Chest wall deformity: Kyphoscoliosis deformity of spine (SNOMED CT 405773007)',
        condition: 'chest-wall-deformity',
        reference: 'Condition/lb-cond-0001',
      },
      { kind: 'current-hypercapnia', evidence: 'PaCO2 6.7 kPa at 06:40', condition: undefined, reference: undefined },
    ],
    currentHypercapnia: true,
    previousFailure: false,
    classification: {
      kind: 'chronic-compensated',
      acidaemic: false,
      compensation: undefined,
      chronicEvidence: ['Chest wall deformity: Kyphoscoliosis deformity of spine (SNOMED CT 405773007)'],
      summary: 'chronic hypercapnia with pH not acidaemic (compensated)',
    },
  },
  target: {
    kind: 'range',
    range: { lowPercent: 88, highPercent: 92 },
    basis: 'hypercapnic-risk',
    reason: 'at risk of hypercapnic respiratory failure (chest wall deformity)',
    sourceKey: 'bts-2017',
  },
  targetComparison: {
    kind: 'above-hypercapnic-range',
    ordered: { lowPercent: 94, highPercent: 98 },
    advised: { lowPercent: 88, highPercent: 92 },
  },
  titrationTarget: { range: { lowPercent: 94, highPercent: 98 }, basis: 'ordered' },
  population: { kind: 'adult', ageYears: 64 },
};

export const template: CardTemplate = {
  summary: 'Target {{orderedRange}} ordered, but this patient is at risk of hypercapnia: {{advisedRange}} advised',
  detail: 'Risk: {{riskReasons}}. Delivered FiO2 about {{deliveredFio2}}. Repeat the gas in {{repeatGasWindow}}.',
  suggestionLabel: 'Change target to {{advisedRange}}',
  overrideReasons: [
    { code: 'patient-specific-target', display: 'Patient has an individual target agreed by the team' },
    { code: 'senior-decision', display: 'A senior clinician has set this target' },
  ],
};

export const finding: Finding = {
  ruleId: 'target-above-hypercapnic-range',
  ruleVersion: 1,
  indicator: 'critical',
  orderReference: 'ServiceRequest/lb-o2-0001',
  values: {
    orderedRange: '94–98 %',
    advisedRange: '88–92 %',
    riskReasons: 'kyphoscoliosis_(chest wall deformity)',
    deliveredFio2: '0.32 (0.28–0.36)',
    repeatGasWindow: '30 min to 1 h',
  },
  computations: [
    pressureComputation,
    {
      name: 'Alveolar PO2 (simplified alveolar gas equation)',
      formula: 'PAO2 = FiO2 × (PB − PH2O) − PaCO2 / R',
      substituted: '0.32 × (756 − 47) − 50.3 / 0.8',
      result: '164 mmHg',
      sourceKey: 'alveolar-gas',
    },
  ],
  sourceKeys: ['bts-2017', 'device-mixing'],
  change: { kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } },
};
