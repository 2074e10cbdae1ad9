import fc from 'fast-check';
import type { FhirResource } from '../../../src/fhir/gathered-data.js';
import * as c from '../../scenarios/support/clinical.js';
import {
  bloodGas,
  deviceOrder,
  medicationOrder,
  o2Flow,
  respRate,
  serviceOrder,
  spo2,
} from '../../scenarios/support/fhir.js';
import { scenario, type Scenario } from '../../scenarios/support/scenario.js';

/**
 * Generated oxygen orders for the clinical properties: plain cases with a realistic spread of
 * devices, flows, set FiO2, SpO2, respiratory rate, gases (kPa and mmHg) and conditions, turned into
 * FHIR through the scenario builders. Invented Larkspur Bay patients only.
 */

export type GeneratedDevice = 'nasal-cannula' | 'simple-face-mask' | 'venturi-mask' | 'reservoir-mask' | 'high-flow-nasal-cannula' | 'cpap-niv';
export type Risk = 'none' | 'copd' | 'kyphoscoliosis' | 'obesity-hypoventilation' | 'bronchiectasis';

export interface GeneratedGas {
  readonly ph: number;
  readonly pco2Kpa: number;
  readonly po2Kpa: number;
  readonly hco3: number;
  readonly inMmHg: boolean;
}

export interface GeneratedCase {
  readonly age: number;
  readonly device: GeneratedDevice;
  readonly flowLPerMin: number | undefined;
  /** Percent, for Venturi, high flow and NIV. */
  readonly fio2Percent: number | undefined;
  readonly resource: 'ServiceRequest' | 'MedicationRequest' | 'DeviceRequest';
  readonly target: readonly [number, number] | undefined;
  /** Where the target is written: in the words or the coded extension. */
  readonly targetCoded: boolean;
  readonly spo2Percent: number;
  readonly respRatePerMin: number;
  readonly risk: Risk;
  readonly gas: GeneratedGas | undefined;
  /** The flow recorded with the SpO2 reading, when the chart has one. */
  readonly recordedFlow: number | undefined;
}

/** Venturi settings with their usual minimum O2 flows (check-values.md §2a: BTS 2017; device labelling). */
const VENTURI: readonly (readonly [number, number])[] = [[24, 2], [28, 4], [31, 6], [35, 8], [40, 10], [60, 15]];

const WORDS: Readonly<Record<GeneratedDevice, string>> = {
  'nasal-cannula': 'nasal cannula',
  'simple-face-mask': 'simple face mask',
  'venturi-mask': 'Venturi mask',
  'reservoir-mask': 'non-rebreather mask',
  'high-flow-nasal-cannula': 'high-flow nasal cannula',
  'cpap-niv': 'NIV',
};

const settings: fc.Arbitrary<Pick<GeneratedCase, 'device' | 'flowLPerMin' | 'fio2Percent'>> = fc.oneof(
  fc.integer({ min: 1, max: 6 }).map((flow) => ({ device: 'nasal-cannula' as const, flowLPerMin: flow, fio2Percent: undefined })),
  fc.integer({ min: 5, max: 10 }).map((flow) => ({ device: 'simple-face-mask' as const, flowLPerMin: flow, fio2Percent: undefined })),
  fc.tuple(fc.constantFrom(...VENTURI), fc.constantFrom(1, 1.5)).map(([[fio2, min], k]) => ({
    device: 'venturi-mask' as const,
    flowLPerMin: Math.round(min * k),
    fio2Percent: fio2,
  })),
  fc.integer({ min: 10, max: 15 }).map((flow) => ({ device: 'reservoir-mask' as const, flowLPerMin: flow, fio2Percent: undefined })),
  fc.tuple(fc.integer({ min: 30, max: 60 }), fc.integer({ min: 6, max: 20 })).map(([flow, f]) => ({
    device: 'high-flow-nasal-cannula' as const,
    flowLPerMin: flow,
    fio2Percent: f * 5,
  })),
  fc.integer({ min: 5, max: 16 }).map((f) => ({ device: 'cpap-niv' as const, flowLPerMin: undefined, fio2Percent: f * 5 })),
);

/**
 * A gas whose numbers agree with each other: bicarbonate from pH and PCO2 by the Henderson-
 * Hasselbalch equation, HCO3 = 0.0307 x PCO2 (mmHg) x 10^(pH - 6.1) (standard acid-base physiology),
 * kept to 10-50 mmol/L. Random, unrelated values would be set aside by the service's consistency
 * check and test nothing.
 */
const gas: fc.Arbitrary<GeneratedGas> = fc
  .record({
    ph: fc.integer({ min: 715, max: 750 }).map((v) => v / 100),
    // 6.0 kPa itself is left out: reported in mmHg it rounds to 45 mmHg, which sits on the boundary
    // (the corpus tests the boundary itself).
    pco2Kpa: fc.integer({ min: 35, max: 110 }).map((v) => (v === 60 ? 6.1 : v / 10)),
    po2Kpa: fc.integer({ min: 55, max: 160 }).map((v) => v / 10),
    inMmHg: fc.boolean(),
  })
  .map((g) => ({ ...g, hco3: Math.round(0.0307 * g.pco2Kpa * 7.50062 * 10 ** (g.ph - 6.1)) }))
  .filter((g) => g.hco3 >= 10 && g.hco3 <= 50);

export const anyCase: fc.Arbitrary<GeneratedCase> = fc
  .record({
    age: fc.integer({ min: 18, max: 95 }),
    settings,
    resource: fc.constantFrom('ServiceRequest' as const, 'MedicationRequest' as const, 'DeviceRequest' as const),
    target: fc.constantFrom<readonly [number, number] | undefined>([94, 98], [88, 92], [92, 96], undefined),
    targetCoded: fc.boolean(),
    spo2Percent: fc.integer({ min: 78, max: 100 }),
    respRatePerMin: fc.integer({ min: 8, max: 42 }),
    risk: fc.constantFrom<Risk>('none', 'none', 'copd', 'kyphoscoliosis', 'obesity-hypoventilation', 'bronchiectasis'),
    gas: fc.option(gas, { nil: undefined, freq: 2 }),
    recordFlow: fc.boolean(),
  })
  .map(({ settings: s, recordFlow, ...rest }) => ({
    ...rest,
    ...s,
    recordedFlow: recordFlow ? s.flowLPerMin : undefined,
  }));

/**
 * Benign cases (property d): an adult with no risk data, the policy's standard range ordered, SpO2
 * within it on a ward device at a usual setting for a resting patient: nasal cannula 1–4 L/min
 * (BTS 2017 Table 2 uses 2–6 L/min; 1–4 L/min gives FiO2 about 0.24–0.35, Therapeutic Guidelines),
 * or a 24–35 % Venturi at its usual flow (BTS 2017 Table 4; labelling).
 */
export const benignCase: fc.Arbitrary<GeneratedCase> = fc
  .record({
    age: fc.integer({ min: 18, max: 95 }),
    settings: fc.oneof(
      fc.integer({ min: 1, max: 4 }).map((flow) => ({ device: 'nasal-cannula' as const, flowLPerMin: flow, fio2Percent: undefined })),
      fc.constantFrom(...VENTURI.slice(0, 4)).map(([fio2, min]) => ({ device: 'venturi-mask' as const, flowLPerMin: min, fio2Percent: fio2 })),
    ),
    resource: fc.constantFrom('ServiceRequest' as const, 'MedicationRequest' as const, 'DeviceRequest' as const),
    targetCoded: fc.boolean(),
    spo2Percent: fc.integer({ min: 94, max: 98 }),
    respRatePerMin: fc.integer({ min: 12, max: 20 }),
    recordFlow: fc.boolean(),
  })
  .map(({ settings: s, recordFlow, ...rest }) => ({
    ...rest,
    ...s,
    target: [94, 98] as const,
    risk: 'none' as const,
    gas: undefined,
    recordedFlow: recordFlow ? s.flowLPerMin : undefined,
  }));

/** How a property varies the same case: the target's words, or how the gas was filed. */
export interface Variation {
  /** Replaces ", target SpO2 88-92%" in the order words (the target is then written, not coded). */
  readonly targetWords?: string;
  readonly gasFiling?: { readonly filing: 'together' | 'spread' | 'issued'; readonly spreadSeconds: number };
  /** Words appended to the order text (a contingency instruction). */
  readonly extraWords?: string;
}

function orderWords(g: GeneratedCase, v: Variation = {}): string {
  const setting =
    g.device === 'venturi-mask'
      ? `Venturi ${String(g.fio2Percent)}% at ${String(g.flowLPerMin)} L/min`
      : g.device === 'high-flow-nasal-cannula'
        ? `high-flow nasal cannula ${String(g.flowLPerMin)} L/min, FiO2 ${String(g.fio2Percent)}%`
        : g.device === 'cpap-niv'
          ? `NIV, FiO2 ${String(g.fio2Percent)}%`
          : `${String(g.flowLPerMin)} L/min via ${WORDS[g.device]}`;
  const target =
    v.targetWords !== undefined
      ? `, ${v.targetWords}`
      : g.target === undefined || g.targetCoded
        ? ''
        : `, target SpO2 ${String(g.target[0])}-${String(g.target[1])}%`;
  return `Oxygen ${setting}${target}${v.extraWords === undefined ? '' : `. ${v.extraWords}`}`;
}

function draftOf(g: GeneratedCase, v: Variation): FhirResource {
  const options = g.target !== undefined && g.targetCoded && v.targetWords === undefined ? { target: g.target } : {};
  const words = orderWords(g, v);
  if (g.resource === 'MedicationRequest') {
    const coded = g.flowLPerMin === undefined ? {} : { flowLPerMin: g.flowLPerMin };
    return medicationOrder(words, { method: WORDS[g.device], ...coded }, options);
  }
  if (g.resource === 'DeviceRequest') {
    return deviceOrder(
      WORDS[g.device],
      {
        ...(g.flowLPerMin === undefined ? {} : { flowLPerMin: g.flowLPerMin }),
        ...(g.fio2Percent === undefined ? {} : { fio2Percent: g.fio2Percent }),
        note: words,
      },
      options,
    );
  }
  return serviceOrder(words, options);
}

const RISK: Readonly<Record<Exclude<Risk, 'none'>, () => FhirResource>> = {
  copd: c.copd,
  kyphoscoliosis: c.kyphoscoliosis,
  'obesity-hypoventilation': c.obesityHypoventilation,
  bronchiectasis: c.bronchiectasis,
};

/** kPa to mmHg (1 kPa = 7.50062 mmHg, standard conversion), rounded as a lab reports it. */
const mmHg = (kpa: number): number => Math.round(kpa * 7.50062);

/** The case as a scenario (no expectations: the properties state them). */
export function toScenario(g: GeneratedCase, v: Variation = {}): Scenario {
  return scenario({
    id: 'generated',
    story: 'generated',
    pov: 'ward doctor',
    topic: 'property',
    age: g.age,
    build: () => ({
      drafts: [draftOf(g, v)],
      record: [
        spo2(g.spo2Percent),
        respRate(g.respRatePerMin),
        ...(g.recordedFlow === undefined ? [] : [o2Flow(g.recordedFlow)]),
        ...(g.risk === 'none' ? [] : [RISK[g.risk]()]),
        ...(g.gas === undefined
          ? []
          : [
              bloodGas(
                {
                  ...(g.gas.inMmHg
                    ? { ph: g.gas.ph, pco2: mmHg(g.gas.pco2Kpa), po2: mmHg(g.gas.po2Kpa), hco3: g.gas.hco3, unit: 'mm[Hg]' as const }
                    : { ph: g.gas.ph, pco2: g.gas.pco2Kpa, po2: g.gas.po2Kpa, hco3: g.gas.hco3 }),
                  ...(v.gasFiling ?? {}),
                },
              ),
            ]),
      ],
    }),
    expect: [],
  });
}

/**
 * Hypercapnic acidosis: pH < 7.35 with PCO2 >= 6 kPa (BTS 2017 clarification, Thorax 72:588;
 * BTS/ICS 2016 uses pH < 7.35 for acidosis).
 */
export function hasHypercapnicAcidosis(g: GeneratedCase): boolean {
  return g.gas !== undefined && g.gas.ph < 7.35 && g.gas.pco2Kpa >= 6;
}

/**
 * True when SpO2 is below every target that could be the titration target: the ordered range's
 * lower bound and the policy's (88 % with a Table 4 risk or a raised PCO2, else 94 %; BTS 2017
 * Tables 1-4). Below the lowest of them the patient is below target whichever range applies.
 */
export function isBelowAnyTarget(g: GeneratedCase): boolean {
  const atRisk = g.risk !== 'none' || (g.gas !== undefined && g.gas.pco2Kpa >= 6);
  const policyLow = atRisk ? 88 : 94;
  return g.spo2Percent < Math.min(g.target?.[0] ?? policyLow, policyLow);
}
