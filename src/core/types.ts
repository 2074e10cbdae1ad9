/**
 * Plain, readonly data shared by the pure core: what the service knows about a patient and an order
 * (Facts), what the hospital decided (Policy), and what the checks found (Finding).
 *
 * Units are in the names. Pressures are mmHg inside the core (the physiology is published in mmHg);
 * values the lab reported in kPa are converted once, at the FHIR edge, and keep their reported form
 * for display.
 */

/** Clinical "can't tell" is a value, never an exception or a silent NaN. */
export type Outcome<T> =
  | { readonly kind: 'ok'; readonly value: T }
  | { readonly kind: 'unknown'; readonly reason: string; readonly missing?: readonly string[] };

export type Indicator = 'info' | 'warning' | 'critical';
export type HookName = 'order-sign' | 'order-select' | 'patient-view';

/** Device kinds are this service's own names; the FHIR reader maps the trade's words onto them. */
export const DEVICE_KINDS = [
  'nasal-cannula',
  'simple-face-mask',
  'venturi-mask',
  'reservoir-mask',
  'high-flow-nasal-cannula',
  'tracheostomy-mask',
  'cpap-niv',
] as const;
export type DeviceKind = (typeof DEVICE_KINDS)[number];

export interface SaturationRange {
  readonly lowPercent: number;
  readonly highPercent: number;
}

/** Where a value read from an order came from: a coded element, or words in free text. */
export type ReadFrom = 'structured' | 'text';

export interface OrderTarget extends SaturationRange {
  readonly readFrom: ReadFrom;
}

/**
 * How an order states its target when it is not one clear range: a single bound ("SpO2 > 94%"), one
 * value ("target SpO2 94%"), two
 * ranges or a condition ("88-92% if drowsy, otherwise 94-98%"), or an explicit statement that there
 * is no SpO2 target (palliative or comfort oxygen). `text` is the words it was read from.
 */
export type TargetNote =
  | {
      readonly kind: 'one-sided';
      readonly bound: 'at-least' | 'above' | 'at-most' | 'below';
      readonly percent: number;
      readonly text: string;
    }
  | { readonly kind: 'ambiguous'; readonly ranges: readonly SaturationRange[]; readonly text: string }
  | { readonly kind: 'no-target'; readonly text: string }
  /** One number with no bound word ("target SpO2 94%"): neither a range nor clearly a floor. */
  | { readonly kind: 'single-value'; readonly percent: number; readonly text: string };

/**
 * What the order is for. Most orders titrate oxygen to a target; some are for comfort only
 * (terminal palliative care, BTS 2017), stop or wean oxygen, or put the patient on room air (0 L/min).
 * Orders that are not titrations never get advice to raise the oxygen.
 */
export type OrderPurpose = 'titrate' | 'comfort' | 'stop' | 'wean' | 'room-air';

/** An oxygen order as read from a draft MedicationRequest, ServiceRequest or DeviceRequest. */
export interface OxygenOrder {
  /** `ResourceType/id` of the draft resource; suggestions update this resource. */
  readonly reference: string;
  readonly resourceType: 'MedicationRequest' | 'ServiceRequest' | 'DeviceRequest';
  readonly status: string | undefined;
  readonly device: DeviceKind | undefined;
  /** The words the device was named by, for display when the kind is unknown. */
  readonly deviceText: string | undefined;
  readonly flowLPerMin: number | undefined;
  /** A set FiO2: a Venturi setting, or the blender setting of high-flow or NIV. */
  readonly setFio2Fraction: number | undefined;
  readonly target: OrderTarget | undefined;
  /** Set when the target is written as a single bound, two ranges, a condition, or "no target". */
  readonly targetNote: TargetNote | undefined;
  readonly purpose: OrderPurpose;
  /** When the order was written (ISO 8601), if known. */
  readonly authoredOn: string | undefined;
  /** True when this order is among the ones the user just selected (order-select) or is signing. */
  readonly isSubject: boolean;
}

/** One measured value at a time. `value` is in the unit its field name says. */
export interface Measured {
  readonly value: number;
  /** ISO 8601 effective time. */
  readonly at: string;
  /**
   * `Date.parse(at)`, worked out once where the facts were read, so the rules need not parse the same
   * text again and again (core/time/reading-time.ts). Absent on facts made by hand; `at` is then parsed.
   */
  readonly atMs?: number;
  /** The value and UCUM unit as the source reported them, for display. */
  readonly reported: { readonly value: number; readonly unit: string };
  /** The FHIR Observation reference, for traceability in cards. */
  readonly reference: string | undefined;
}

/** A blood gas sample; PaO2 and PaCO2 belong together, so they travel together. */
export interface BloodGas {
  readonly at: string;
  /** `Date.parse(at)`, as on `Measured`. */
  readonly atMs?: number;
  readonly specimen: 'arterial' | 'venous' | 'unknown';
  readonly ph: number | undefined;
  readonly pao2MmHg: number | undefined;
  readonly paco2MmHg: number | undefined;
  readonly hco3MmolPerL: number | undefined;
  readonly baseExcessMmolPerL: number | undefined;
  /** As reported, for display: e.g. { paco2: { value: 6.7, unit: 'kPa' } }. */
  readonly reported: Readonly<Record<string, { readonly value: number; readonly unit: string }>>;
}

/**
 * Conditions that change which target applies. Names are ours; the reader maps SNOMED CT, ICD-10
 * and text onto them.
 */
export const CONDITION_KINDS = [
  // BTS 2017 Table 4: at risk of hypercapnic respiratory failure.
  'copd',
  'bronchiectasis',
  'cystic-fibrosis',
  'neuromuscular-disease',
  'chest-wall-deformity',
  'obesity-hypoventilation',
  'morbid-obesity',
  'chronic-hypercapnic-respiratory-failure',
  'previous-niv-or-imv',
  // BTS 2017 special situations: the usual SpO2 target does not apply or differs.
  'carbon-monoxide-poisoning',
  'paraquat-poisoning',
  'bleomycin-lung-injury',
  'cluster-headache',
  'pneumothorax',
  'sickle-cell-crisis',
  'pregnancy',
  // Acute illnesses in which a raised PCO2 means tiring, not chronic retention (BTS/SIGN asthma
  // guideline; BTS 2017 keeps acute asthma at the standard range).
  'acute-asthma',
  'sedative-or-opioid-toxicity',
  // BTS 2017 Table 3: oxygen only if hypoxaemic.
  'acute-coronary-syndrome',
  'stroke',
  'hyperventilation',
] as const;
export type ConditionKind = (typeof CONDITION_KINDS)[number];

export interface ConditionFact {
  readonly kind: ConditionKind;
  /** How it was recognised: "SNOMED CT 13645005", "ICD-10 J44.1", or "text: 'COPD'". */
  readonly matchedBy: string;
  readonly display: string;
  readonly reference: string | undefined;
}

/** A value the reader set aside rather than use, with the reason; cards list these. */
export interface SetAsideNote {
  readonly what: string;
  readonly reason: 'implausible' | 'stale' | 'unreadable-unit' | 'unrecognised' | 'error-in-source';
  readonly detail: string;
  readonly reference: string | undefined;
}

/** Readings kept for trends over a longer window than the current values (see `Facts.trendReadings`). */
export interface TrendReadings {
  readonly spo2Percent: readonly Measured[];
  readonly fio2Fraction: readonly Measured[];
  readonly o2FlowLPerMin: readonly Measured[];
}

export interface Facts {
  readonly patient: {
    readonly ageYears: number | undefined;
    readonly bmiKgPerM2: number | undefined;
  };
  /** The oxygen orders in the draft bundle; the one under check has `isSubject`. */
  readonly orders: readonly OxygenOrder[];
  /** Active oxygen orders already on the record (not in this draft), for the duplicate check. */
  readonly activeOrders: readonly OxygenOrder[];
  /** Most recent first; only values within the policy freshness window. */
  readonly spo2Percent: readonly Measured[];
  readonly fio2Fraction: readonly Measured[];
  readonly o2FlowLPerMin: readonly Measured[];
  readonly respRatePerMin: readonly Measured[];
  readonly haemoglobinGPerDL: readonly Measured[];
  /**
   * SpO2, FiO2 and O2 flow readings for trends over hours (rising-oxygen-need), most recent first,
   * within the longer of `freshness.vitalSignsMinutes` and `thresholds.oxygenNeedTrendMinutes`.
   * Never current values: a 5-hour-old SpO2 here says where a trend began, not how the patient is.
   */
  readonly trendReadings: TrendReadings;
  /** Most recent first, within the freshness window for current use. */
  readonly bloodGases: readonly BloodGas[];
  /** Older gases, outside the freshness window, kept to show previous hypercapnia. */
  readonly historicBloodGases: readonly BloodGas[];
  readonly conditions: readonly ConditionFact[];
  readonly setAside: readonly SetAsideNote[];
  /** Prefetch keys or resources that could not be had, named for the "data missing" card. */
  readonly missingData: readonly string[];
  readonly encounterUnit: string | undefined;
  /**
   * The encounter's current location as references and identifiers ("Location/lbgh-icu",
   * "system|value", "value"), for unit overrides that match on them. Absent when not read.
   */
  readonly encounterLocationIds?: readonly string[];
}

/** A calculation shown in a card: the formula, this patient's numbers in it, and the result. */
export interface Computation {
  readonly name: string;
  readonly formula: string;
  readonly substituted: string;
  readonly result: string;
  /** Key into the policy's reference list (`policy.references`), e.g. 'bts-2017'. */
  readonly sourceKey: string;
}

/** A change to the draft order that would resolve a finding. The cds layer turns it into FHIR. */
export type OrderChange =
  | { readonly kind: 'set-target'; readonly range: SaturationRange }
  | { readonly kind: 'set-flow'; readonly flowLPerMin: number }
  | {
      readonly kind: 'set-device';
      readonly device: DeviceKind;
      readonly flowLPerMin: number;
      readonly setFio2Fraction?: number;
    }
  /** End the oxygen order: the weaning step after the lowest flow (BTS 2017, from memory). */
  | { readonly kind: 'stop-oxygen' };

export interface Finding {
  readonly ruleId: string;
  readonly ruleVersion: number;
  readonly indicator: Indicator;
  /** The order the finding is about (`ResourceType/id`), when it is about one. */
  readonly orderReference: string | undefined;
  /** Values the card template interpolates, already formatted for display. */
  readonly values: Readonly<Record<string, string>>;
  readonly computations: readonly Computation[];
  /** Keys into `policy.references` naming the published basis. */
  readonly sourceKeys: readonly string[];
  readonly change: OrderChange | undefined;
}
