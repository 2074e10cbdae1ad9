import type { DeliveryEstimate } from '../devices/types.js';
import type {
  classifyPfBerlin,
  classifySfRice,
  hypoxaemiaMechanism,
  interpretBloodGas,
  interpretRox,
  RoxTimePoint,
} from '../physiology/index.js';
import type {
  BloodGas,
  Computation,
  ConditionKind,
  Measured,
  Outcome,
  OxygenOrder,
  SaturationRange,
} from '../types.js';
import type { UnitMatch } from './unit-targets.js';

type OkValue<T> = T extends { readonly kind: 'ok'; readonly value: infer V } ? V : never;

export type GasInterpretation = OkValue<ReturnType<typeof interpretBloodGas>>;
export type MechanismHint = OkValue<ReturnType<typeof hypoxaemiaMechanism>>;
export type BerlinClass = ReturnType<typeof classifyPfBerlin>;
export type RiceClass = ReturnType<typeof classifySfRice>;
export type RoxInterpretation = ReturnType<typeof interpretRox>;

/** A calculated number together with the working a card shows for it. */
export interface Calculated<T> {
  readonly value: T;
  readonly computation: Computation;
  /** The spread the number takes over the FiO2 range, when the FiO2 is not exact. */
  readonly range?: { readonly low: number; readonly high: number };
}

/**
 * P/F or S/F over the FiO2 range it was worked out at. `low` is at the high end of the FiO2 range,
 * `high` at the low end. The class is stated only when the whole range lies in one band; otherwise
 * it is undefined and `spannedCutoffs` names the cut-offs the range crosses.
 */
export interface OxygenationRatio {
  readonly ratio: number;
  readonly low: number;
  readonly high: number;
  readonly spannedCutoffs: readonly number[];
  /** The FiO2 used: value, range and where it came from (recorded, set or estimated). */
  readonly fio2: Fio2InForce;
}

export interface BarometricPressureUsed {
  readonly mmHg: number;
  /** `site-value`: the policy's measured or agreed pressure; otherwise the altitude model used. */
  readonly model: 'site-value' | 'isa-1993' | 'west-1996';
  readonly sourceKey: string;
  readonly computation: Computation;
}

/**
 * The FiO2 that was being breathed at a moment (a gas, an SpO2 reading): a recorded FiO2 is best, a
 * recorded flow on the ordered device next, the order's own estimate last. `basis` says which.
 */
export interface Fio2InForce {
  readonly estimate: number;
  readonly low: number;
  readonly high: number;
  readonly basis: 'recorded-fio2' | 'recorded-flow' | 'order-estimate';
  /**
   * Where the figure came from, for the card: `recorded` (an FiO2 observation, or air), `set` (a
   * device's setting: Venturi, high flow, CPAP/NIV) or `estimated` (worked out from a flow).
   */
  readonly source: 'recorded' | 'set' | 'estimated';
  /** The device estimate behind a `set` or `estimated` figure (undefined for `recorded`). */
  readonly delivery: DeliveryEstimate | undefined;
  /** Time of the observation used; undefined for the order estimate. */
  readonly at: string | undefined;
  /** True when the FiO2 is room air (recorded 0.21 or a recorded flow of 0). */
  readonly onAir: boolean;
}

export interface CurrentValues {
  /** Latest SpO2 within `freshness.vitalSignsMinutes`. */
  readonly spo2: Measured | undefined;
  readonly respRate: Measured | undefined;
  /** Latest haemoglobin within `freshness.haemoglobinHours`. */
  readonly haemoglobin: Measured | undefined;
  /** Latest gas of any specimen within `freshness.bloodGasMinutes`: PCO2 and pH guidance. */
  readonly gas: BloodGas | undefined;
  /** Latest arterial gas within the same window: the only source of PaO2-based numbers. */
  readonly arterialGas: BloodGas | undefined;
}

export interface PhysiologyResults {
  readonly fio2AtGas: Outcome<Fio2InForce>;
  readonly fio2AtSpo2: Outcome<Fio2InForce>;
  readonly inspiredPo2: Outcome<Calculated<number>>;
  readonly alveolarPo2: Outcome<Calculated<number>>;
  readonly aaGradient: Outcome<Calculated<number>>;
  /** Unknown when the gas was not taken on air: the age norm is for air only. */
  readonly expectedAaGradient: Outcome<Calculated<number>>;
  readonly pfRatio: Outcome<Calculated<OxygenationRatio & { readonly berlin: BerlinClass | undefined }>>;
  readonly sfRatio: Outcome<Calculated<OxygenationRatio & { readonly rice: RiceClass | undefined }>>;
  readonly rox: Outcome<
    Calculated<{
      readonly index: number;
      readonly hoursOnHighFlow: number | undefined;
      readonly interpretation: RoxInterpretation;
      /** The set FiO2 the index used (recorded at the reading, else set on the high-flow order). */
      readonly fio2Fraction: number;
      /**
       * The Roca 2019 time point whose thresholds were applied: the last one reached, or 12 h when the
       * start is unknown (`startKnown` false); undefined before 2 h on high flow.
       */
      readonly threshold:
        | { readonly timePoint: RoxTimePoint; readonly failureBelow: number; readonly startKnown: boolean }
        | undefined;
      /** Which threshold was used and why, in words for a card. */
      readonly thresholdNote: string;
    }>
  >;
  readonly oxygenContent: Outcome<Calculated<number>>;
  readonly gasInterpretation: Outcome<GasInterpretation>;
  readonly mechanism: Outcome<MechanismHint>;
}

export type RiskReasonKind =
  | 'condition'
  | 'previous-ventilation'
  | 'previous-hypercapnic-failure'
  | 'current-hypercapnia'
  | 'previous-hypercapnia'
  | 'raised-bicarbonate'
  | 'raised-bmi';

export interface RiskReason {
  readonly kind: RiskReasonKind;
  /** Plain words for the card, e.g. "COPD (SNOMED CT 13645005)" or "PaCO2 6.7 kPa at 07:40". */
  readonly evidence: string;
  readonly condition: ConditionKind | undefined;
  /** FHIR reference of the Condition or Observation, for traceability. */
  readonly reference: string | undefined;
}

export interface HypercapnicRiskDecision {
  readonly atRisk: boolean;
  readonly reasons: readonly RiskReason[];
  /** Whether the current gas shows PCO2 at or above the threshold; undefined without one. */
  readonly currentHypercapnia: boolean | undefined;
  /** Previous NIV/IMV, chronic hypercapnic failure, or an older hypercapnic gas: no re-targeting. */
  readonly previousFailure: boolean;
  /** Acute, acute-on-chronic or chronic compensated: the one answer every rule reads. */
  readonly classification: HypercapniaClassification;
}

/**
 * What kind of hypercapnia the current gas shows. `acute`: PCO2 at or above the hypercapnia
 * threshold with no sign of chronic retention (no history, bicarbonate within the acute rise), as in
 * a tiring patient (acute asthma, sedation, exhaustion, neuromuscular weakness); `acute-on-chronic`:
 * acidaemic with signs of chronic retention; `chronic-compensated`: pH not acidaemic with signs of
 * chronic retention; `timing-unknown`: hypercapnic but without a pH; `not-hypercapnic` and
 * `no-current-gas` say why there is nothing to classify.
 */
export type HypercapniaKind =
  | 'no-current-gas'
  | 'not-hypercapnic'
  | 'acute'
  | 'acute-on-chronic'
  | 'chronic-compensated'
  | 'timing-unknown';

/** The metabolic side of the current gas, judged against the bicarbonate an acute PCO2 rise explains. */
export interface CompensationReading {
  readonly measure: 'reported-bicarbonate' | 'base-excess' | 'calculated-bicarbonate';
  /** "HCO3 25 mmol/L" or "base excess +1 mmol/L", as shown on cards. */
  readonly shown: string;
  /** Beyond what an acute rise explains: a sign of renal compensation for long-standing CO2 retention. */
  readonly raised: boolean;
  readonly computation: Computation;
}

export interface HypercapniaClassification {
  readonly kind: HypercapniaKind;
  /** pH below `thresholds.acidosisPhBelow`; undefined without a current pH. */
  readonly acidaemic: boolean | undefined;
  /** Undefined unless the current gas is hypercapnic. */
  readonly compensation: CompensationReading | undefined;
  /** Signs of long-standing CO2 retention: risk reasons other than the current gas, and a raised bicarbonate on it. */
  readonly chronicEvidence: readonly string[];
  /** One plain line for cards, e.g. "acute hypercapnic acidosis: no sign of chronic CO2 retention". */
  readonly summary: string;
}

/** Whether the adult checks apply: the guidelines encoded are for adults (`population.minimumAgeYears`). */
export type PopulationDecision =
  | { readonly kind: 'adult'; readonly ageYears: number }
  | { readonly kind: 'below-minimum-age'; readonly ageYears: number; readonly minimumAgeYears: number }
  | { readonly kind: 'age-unknown'; readonly minimumAgeYears: number };

export type TargetBasis =
  | 'standard'
  | 'standard-despite-acute-hypercapnia'
  | 'hypercapnic-risk'
  | 'standard-after-normal-gas'
  | 'oxygen-toxicity-risk';

export type NoTargetCondition = 'carbon-monoxide-poisoning' | 'pneumothorax' | 'cluster-headache';

/** Which target the policy says applies to this patient, and why. */
export type ApplicableTarget =
  | {
      readonly kind: 'range';
      readonly range: SaturationRange;
      readonly basis: TargetBasis;
      /** Short phrase for cards: "at risk of hypercapnic respiratory failure (COPD)". */
      readonly reason: string;
      readonly sourceKey: string;
    }
  | {
      readonly kind: 'no-spo2-target';
      readonly condition: NoTargetCondition;
      readonly reason: string;
      readonly sourceKey: string;
    };

/**
 * How the ordered target compares with the applicable one. Each kind other than `matches`,
 * `no-order` and `no-range-applies` is owned by exactly one rule, so no two cards say the same thing.
 */
export type TargetComparison =
  | { readonly kind: 'no-order' }
  | { readonly kind: 'no-range-applies' }
  | { readonly kind: 'matches' }
  | { readonly kind: 'missing'; readonly advised: SaturationRange }
  | {
      readonly kind:
        | 'above-hypercapnic-range'
        | 'lower-range-without-risk'
        | 'toxicity-range-not-ordered'
        | 'differs';
      readonly ordered: SaturationRange | undefined;
      readonly advised: SaturationRange;
    };

/** The range the nurse titrates to: the ordered one if present, else the applicable one. */
export interface TitrationTarget {
  readonly range: SaturationRange;
  /**
   * `advised-over-ordered`: the ordered range is above a range that limits oxygen, so the advised one
   * is used. `applicable-over-lower-ordered`: the ordered range is lower than the applicable one with
   * no documented reason (the at-risk range without a documented risk or after a normal gas; any
   * lower range for a tiring patient without chronic retention), so SpO2 is judged against the
   * applicable range.
   */
  readonly basis: 'ordered' | 'applicable' | 'advised-over-ordered' | 'applicable-over-lower-ordered';
}

/** Everything derived once per call for one subject order; rules read it and never recompute it. */
export interface Assessment {
  readonly order: OxygenOrder | undefined;
  readonly barometricPressure: BarometricPressureUsed;
  readonly delivery: Outcome<DeliveryEstimate>;
  readonly current: CurrentValues;
  readonly physiology: PhysiologyResults;
  readonly hypercapnicRisk: HypercapnicRiskDecision;
  /** The unit override whose ranges the target came from, or why none applies (unit-targets.ts). */
  readonly unit: UnitMatch;
  readonly target: ApplicableTarget;
  readonly targetComparison: TargetComparison;
  readonly titrationTarget: TitrationTarget | undefined;
  /** Adult, below the policy's minimum age, or age unknown; the engine runs no adult advice below it. */
  readonly population: PopulationDecision;
}
