import type { ConditionKind, DeviceKind, Indicator, SaturationRange } from './types.js';

/**
 * The local oxygen policy as the core sees it: parsed, unit-converted and frozen by src/policy.
 * Every threshold a rule uses lives here, never as a literal in the rule.
 */

/** A pressure threshold: canonical mmHg for comparison, and the words the policy author wrote. */
export interface PressureThreshold {
  readonly mmHg: number;
  /** e.g. "6.0 kPa", exactly as the policy file gave it. */
  readonly display: string;
}

export interface PublishedReference {
  /** Short label for card sources, e.g. "BTS 2017". */
  readonly label: string;
  /** Full citation, e.g. "BTS guideline for oxygen use in adults…, Thorax 72 Suppl 1 (2017)". */
  readonly citation: string;
  readonly url?: string;
}

/**
 * Targets a unit sets for itself (policy `units`), e.g. an ICU on 92–96 %. A unit may set only the
 * standard and the at-risk range: the oxygen-toxicity range (BTS 2017 Table 3), the special conditions
 * and every threshold, the critical SpO2 among them, hold on every unit.
 */
export interface UnitTargets {
  /** Short name shown on cards: "ICU" gives "ICU target (local policy)". */
  readonly name: string;
  /** How the encounter's location is recognised; the first unit in the file that matches wins. */
  readonly match: {
    /** Location names exactly as the record writes them, compared without case or extra spaces. */
    readonly names: readonly string[];
    /** Name patterns in which `*` stands for any text, e.g. "*Intensive Care*", compared without case. */
    readonly patterns: readonly string[];
    /** Location references ("Location/lbgh-icu") or identifiers ("system|value", or the value alone). */
    readonly locations: readonly string[];
  };
  /** Undefined: the policy's own range applies on this unit. */
  readonly targets: {
    readonly standard: SaturationRange | undefined;
    readonly hypercapnicRisk: SaturationRange | undefined;
  };
  /** Key into `references` for the basis of the unit's ranges; cards cite it, else "local-policy". */
  readonly basisKey: string | undefined;
}

/** Flow limits, L/min, a hospital sets for a device it stocks (`from` ≤ `to`). */
export interface FlowLimitsLPerMin {
  readonly from: number;
  readonly to: number;
}

/** One Venturi valve a hospital stocks: its FiO2 setting and the minimum O2 flow printed on it. */
export interface StockedVenturiSetting {
  /** The valve's setting as a fraction, e.g. 0.28 for the 28 % valve. */
  readonly fio2Fraction: number;
  /** The least O2 flow at which the valve entrains as labelled, L/min (manufacturer's label). */
  readonly minimumFlowLPerMin: number;
}

/**
 * The devices the hospital stocks (policy `devices`; docs/policy.md, "device catalogue"). A device
 * kind that is absent is not stocked: no card offers it. Orders for it are still checked, against
 * the device model's built-in range.
 */
export interface DeviceCatalogue {
  /** Each stocked kind but the Venturi mask, with the flows the hospital runs it at. */
  readonly flowLimits: Readonly<Partial<Record<Exclude<DeviceKind, 'venturi-mask'>, FlowLimitsLPerMin>>>;
  /** The Venturi valves stocked, ascending by setting; empty when no Venturi masks are stocked. */
  readonly venturiSettings: readonly StockedVenturiSetting[];
}

export interface Policy {
  readonly id: string;
  readonly version: string;
  readonly title: string;
  /**
   * The date (ISO, at the site) from which the committee means the policy to apply; undefined for a
   * file written before the key existed (in effect once loaded). Loading it earlier is allowed and
   * logged as a warning at start (src/policy/effective-from.ts).
   */
  readonly effectiveFrom: string | undefined;
  /** Key into `references` for the guideline the policy is based on. */
  readonly basisKey: string;
  readonly site: {
    readonly name: string;
    readonly altitudeM: number;
    /** A measured or agreed site pressure overrides the altitude model when given. */
    readonly barometricPressureMmHg: number | undefined;
    /** IANA time zone the site's clinicians read times in, e.g. "Europe/London". */
    readonly timeZone: string;
  };
  readonly targets: {
    /** Acutely ill adults not at risk of hypercapnic respiratory failure (BTS 2017: 94–98 %). */
    readonly standard: SaturationRange;
    /** At risk of hypercapnic respiratory failure (BTS 2017 Table 4: 88–92 %). */
    readonly hypercapnicRisk: SaturationRange;
    /** Paraquat poisoning or bleomycin lung injury (BTS 2017 Table 3: 85–88 %). */
    readonly oxygenToxicityRisk: SaturationRange;
  };
  /** Unit overrides of `targets`, in file order (first match wins; src/core/assessment/unit-targets.ts). */
  readonly units: readonly UnitTargets[];
  readonly hypercapnicRisk: {
    /** Conditions that by themselves put a patient at risk (BTS 2017 Table 4). */
    readonly conditions: readonly ConditionKind[];
    /** PaCO2 at or above this on a gas means hypercapnia (BTS 2017 clarification: ≥ 6 kPa). */
    readonly hypercapniaPaco2: PressureThreshold;
    /** HCO3 above this with normal pH suggests long-standing hypercapnia (BTS 2017, V2). */
    readonly chronicBicarbonateAboveMmolPerL: number;
    /** BMI above which obesity counts as a risk (BTS 2017 Table 4, ambulance material: > 40). */
    readonly morbidObesityBmiAbove: number;
    /**
     * Acute hypercapnia (acidaemic, or pH not yet low) with no sign of chronic retention (acute asthma,
     * exhaustion, sedation): `keep` keeps the patient's range (BTS 2017 keeps acute asthma at 94–98 %);
     * `hypercapnic-risk-range` moves to `targets.hypercapnicRisk`. A local decision.
     */
    readonly acuteHypercapniaWithoutRiskTarget: 'keep' | 'hypercapnic-risk-range';
  };
  /** Who the checks are for: the guidelines encoded are for adults. */
  readonly population: {
    /** Below this age no adult target or titration advice is given (common practice: 16). */
    readonly minimumAgeYears: number;
  };
  /** Special situations that change the advice rather than the range. */
  readonly specialConditions: {
    /** Oxygen treats hypoxaemia, not breathlessness, in these (BTS 2017 Table 3). */
    readonly oxygenOnlyIfHypoxaemic: readonly ConditionKind[];
  };
  readonly freshness: {
    /** How old an SpO2, FiO2, flow or respiratory rate may be and still count as current. */
    readonly vitalSignsMinutes: number;
    readonly bloodGasMinutes: number;
    readonly haemoglobinHours: number;
    /** How far back an old gas may show previous hypercapnia. */
    readonly previousHypercapniaDays: number;
    /** Results of one gas filed with times this close belong to one sample (common practice: 10). */
    readonly bloodGasGroupingMinutes: number;
  };
  readonly thresholds: {
    /** pH below this is acidosis (RCEM normal range 7.35–7.45). */
    readonly acidosisPhBelow: number;
    /** Consider NIV: pH below and PaCO2 above these after initial therapy (BTS/ICS 2016). */
    readonly nivPhBelow: number;
    readonly nivPaco2Above: PressureThreshold;
    /** Consider invasive ventilation below this pH (BTS/ICS 2016). */
    readonly invasiveVentilationPhBelow: number;
    /** SpO2 below this is critical, whatever the target (BTS 2017 Table 2: < 85 % → reservoir mask). */
    readonly criticalSpo2BelowPercent: number;
    /** Points below the target's lower bound that make a low SpO2 critical rather than a warning. */
    readonly criticalPointsBelowTarget: number;
    /** FiO2 at or above this needs senior or critical-care review. */
    readonly highOxygenFio2AtLeast: number;
    /** Respiratory rate above which a Venturi flow is raised by half (BTS 2017 Table 4). */
    readonly venturiTachypnoeaRespRateAbove: number;
    readonly venturiTachypnoeaFlowMultiplier: number;
    /** Cluster headache: high-flow oxygen via a reservoir mask at this flow (BTS 2017, V2: 12–15 L/min). */
    readonly clusterHeadacheFlowLPerMin: { readonly from: number; readonly to: number };
    /** Pneumothorax under observation: reservoir mask at this flow (BTS 2017 Table 2: 15 L/min). */
    readonly pneumothoraxFlowLPerMin: number;
    /** One weaning step on a nasal cannula (common practice: flowmeters step in whole litres). */
    readonly nasalCannulaStepDownLPerMin: number;
    /** Repeat blood gas window after starting or changing oxygen in an at-risk patient (BTS 2017). */
    readonly repeatGasMinutes: { readonly from: number; readonly to: number };
    /** The highest flow a ward oxygen flowmeter gives (common practice: 15 L/min). */
    readonly flowmeterMaxLPerMin: number;
    /** High flow at or above this set FiO2 with SpO2 below target is failing (local choice: 0.6). */
    readonly highFlowFailingFio2AtLeast: number;
    /** How far back recorded flows, FiO2 and SpO2 are read for a rising oxygen need. */
    readonly oxygenNeedTrendMinutes: number;
    /** A fall in SpO2 of at least this many points calls for fuller assessment (BTS 2017: 3). */
    readonly spo2FallPoints: number;
  };
  /** The titration review on `patient-view`: how far back, how long a reading stands, when to speak. */
  readonly titrationReview: {
    /** Hours looked back over (default 8: one nursing shift, common practice). */
    readonly lookbackHours: number;
    /** One SpO2 reading stands for the patient until the next, at most this long (local choice: 120). */
    readonly maxReadingHoldMinutes: number;
    /** Observed time needed before shares of time are judged (local choice: 120). */
    readonly minObservedMinutes: number;
    /** Share of observed time above target on oxygen that makes a card (local choice: 50). */
    readonly aboveTargetShareAtLeastPercent: number;
    /** Share of observed time below target that makes a card once back in range (local choice: 10). */
    readonly belowTargetShareAtLeastPercent: number;
    /** Nasal-cannula flow at or below which oxygen may be stopped (BTS 2017, from memory: 2; 1 at risk). */
    readonly stopFromFlowLPerMin: { readonly standard: number; readonly hypercapnicRisk: number };
    /** Consecutive readings in the target range before stopping (BTS 2017, from memory: 2). */
    readonly stopAfterReadingsInRange: number;
  };
  /** The devices the hospital stocks, their flow limits and Venturi valves. */
  readonly devices: DeviceCatalogue;
  /** Severity overrides by rule id; a hospital may raise or lower a rule's indicator. */
  readonly severity: Readonly<Record<string, Indicator>>;
  /** Rules switched off by the hospital, by rule id. */
  readonly disabledRules: readonly string[];
  readonly references: Readonly<Record<string, PublishedReference>>;
  /** Lines added to every card's detail (oximetry limits, advisory-only wording, local contacts). */
  readonly cautions: readonly string[];
  /** What the cards cite: the guidelines followed and, per rule or topic, the one a card's statement is from. */
  readonly clinicalBasis: ClinicalBasis;
  /** Local card wording: a folder that overrides `cards/<rule-id>.yaml` per rule, read by the shell at load. */
  readonly cardWording: { readonly folder: string | undefined };
  /** The override reasons the policy offers on cards, merged with each card file's (docs/policy.md). */
  readonly overrideReasons: PolicyOverrideReasons;
}

export interface ClinicalBasis {
  /** Reference keys of the guidelines the policy follows; the primary (`basisKey`) first. */
  readonly guidelineKeys: readonly string[];
  /** Rule id → reference key its card cites as `{{guideline}}`; unlisted rules cite the primary. */
  readonly ruleCitations: Readonly<Record<string, string>>;
  /** Topic (e.g. `ventilation`) → reference key, for `{{<topic>Guideline}}`. */
  readonly topicCitations: Readonly<Record<string, string>>;
}

export interface OverrideReasonText {
  /** kebab-case, under the service's override-reason CodeSystem. */
  readonly code: string;
  readonly display: string;
}

export interface PolicyOverrideReasons {
  /** `add` to the card file's reasons, or `replace` them where the policy gives any for the rule. */
  readonly merge: 'add' | 'replace';
  readonly allCards: readonly OverrideReasonText[];
  readonly byRule: Readonly<Record<string, readonly OverrideReasonText[]>>;
}
