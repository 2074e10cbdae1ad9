import { z } from 'zod';
import { CONDITION_KINDS } from '../core/types.js';
import { CardWordingSchema, ClinicalBasisSchema, PolicyOverrideReasonsSchema } from './card-sections-schema.js';
import { BUILT_IN_DEVICE_CATALOGUE } from '../core/devices/catalogue.js';

/**
 * The policy file format (format version 1). Strict: an unknown key is an error, so a typo in a
 * threshold name cannot silently fall back to a default. Pressures are written as a value with a
 * UCUM unit (`kPa` or `mm[Hg]`) and converted to mmHg when the file is loaded.
 */

/**
 * A target bound: whole SpO2 percent inside 70–100, the span over which pulse oximeters are held to
 * their stated accuracy (ISO 80601-2-61: Arms within 4 % over SaO2 70–100 %). A range's order and the
 * ranges' relation to each other are checked in check-policy.ts, with messages that say why.
 */
const percent = z.number().min(70).max(100);

function isTimeZone(name: string): boolean {
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: name });
    return true;
  } catch {
    return false;
  }
}

export const SaturationRangeSchema = z.strictObject({ lowPercent: percent, highPercent: percent });

export const PressureSchema = z.strictObject({
  value: z.number().positive(),
  unit: z.enum(['kPa', 'mm[Hg]', 'mmHg']),
});

const IndicatorSchema = z.enum(['info', 'warning', 'critical']);

export const ReferenceSchema = z.strictObject({
  label: z.string().min(1).max(40),
  citation: z.string().min(1),
  url: z.url().optional(),
});

/**
 * The record of a committee's decision to switch off, or lower the indicator of, a rule whose cards are
 * critical by default. Without one, such a change is refused (check-policy.ts); with one, the service
 * starts and logs it, and `policy validate` shows it.
 */
export const AcknowledgementSchema = z.strictObject({
  ruleId: z.string().min(1),
  change: z.enum(['disabled', 'lowered']),
  reason: z.string().trim().min(10, 'give the reason in words, at least 10 characters'),
  by: z.string().min(1).optional(),
  date: z.iso.date().optional(),
});

export type Acknowledgement = z.infer<typeof AcknowledgementSchema>;

/**
 * A unit that sets its own ranges (an ICU on 92–96 % or 90–94 %), matched on the encounter's location.
 * Only the standard and at-risk ranges: the oxygen-toxicity range, the special conditions and every
 * threshold (the critical SpO2 among them) hold on every unit. The checks in check-policy.ts apply to
 * each unit's effective ranges.
 */
export const UnitSchema = z.strictObject({
  /** Short name for cards: "ICU" gives "ICU target (local policy)". */
  name: z.string().trim().min(1).max(40),
  match: z
    .strictObject({
      names: z.array(z.string().trim().min(1)).default([]),
      patterns: z.array(z.string().trim().min(1)).default([]),
      locations: z.array(z.string().trim().min(1)).default([]),
    })
    .refine((m) => m.names.length + m.patterns.length + m.locations.length > 0, {
      message: 'matches no location: give at least one of names, patterns or locations',
    }),
  targets: z
    .strictObject({ standard: SaturationRangeSchema.optional(), hypercapnicRisk: SaturationRangeSchema.optional() })
    .refine((t) => t.standard !== undefined || t.hypercapnicRisk !== undefined, {
      message: 'sets no range: give standard, hypercapnicRisk or both',
    }),
  /** Key into references for the source of the unit's ranges (e.g. an ICU trial); cards cite it. */
  basis: z.string().min(1).optional(),
});

/**
 * A stocked device's flow limits, L/min. Their order and their place inside what the device allows
 * are checked in device-catalogue-checks.ts, with the reason.
 */
const StockedDeviceSchema = z.strictObject({
  flowLPerMin: z.strictObject({ from: z.number().positive(), to: z.number().positive() }),
});

/** One Venturi valve: its setting in percent as labelled, and the minimum O2 flow printed on it (L/min). */
const VenturiValveSchema = z.strictObject({
  fio2Percent: z.number(),
  minimumFlowLPerMin: z.number().positive(),
});

/**
 * The devices the hospital stocks (docs/policy.md, "device catalogue"). Keys are the device kinds; a
 * kind left out is not stocked, so no card offers it. The default is every device at the device
 * models' built-in values, which is how the service behaved before the section existed.
 */
export const DevicesSchema = z.strictObject({
  'nasal-cannula': StockedDeviceSchema.optional(),
  'simple-face-mask': StockedDeviceSchema.optional(),
  'reservoir-mask': StockedDeviceSchema.optional(),
  'venturi-mask': z.strictObject({ settings: z.array(VenturiValveSchema).min(1) }).optional(),
  'tracheostomy-mask': StockedDeviceSchema.optional(),
  'high-flow-nasal-cannula': StockedDeviceSchema.optional(),
  'cpap-niv': StockedDeviceSchema.optional(),
});

export type DevicesSection = z.infer<typeof DevicesSchema>;

/** The built-in catalogue written as a `devices` section: the schema's default. */
export function builtInDevicesSection(): DevicesSection {
  const section: Record<string, unknown> = Object.fromEntries(
    Object.entries(BUILT_IN_DEVICE_CATALOGUE.flowLimits).map(([kind, limits]) => [
      kind,
      { flowLPerMin: { from: limits.from, to: limits.to } },
    ]),
  );
  section['venturi-mask'] = {
    settings: BUILT_IN_DEVICE_CATALOGUE.venturiSettings.map((s) => ({
      fio2Percent: Math.round(s.fio2Fraction * 100),
      minimumFlowLPerMin: s.minimumFlowLPerMin,
    })),
  };
  return DevicesSchema.parse(section);
}

export const PolicyFileSchema = z.strictObject({
  format: z.literal(1),
  id: z.string().regex(/^[a-z0-9][a-z0-9-]*$/, 'use lower-case letters, digits and hyphens'),
  version: z.string().min(1),
  title: z.string().min(1),
  /** Reference key of the primary guideline; the cards cite it unless `clinicalBasis` names another. */
  basis: z.string().min(1),
  /** ISO date from which the policy applies; absent in files written before it (in effect once loaded). */
  effectiveFrom: z.iso.date().optional(),
  /** Default: the primary guideline alone (how cards cited before this section existed). */
  clinicalBasis: ClinicalBasisSchema.optional(),
  site: z.strictObject({
    name: z.string().min(1),
    /** metres above sea level */
    altitudeM: z.number().min(-500).max(6000),
    barometricPressure: PressureSchema.optional(),
    /** IANA time zone for times shown to clinicians */
    timeZone: z
      .string()
      .refine(isTimeZone, { message: 'use an IANA time zone name, e.g. Europe/London' })
      .default('Europe/London'),
  }),
  targets: z.strictObject({
    standard: SaturationRangeSchema,
    hypercapnicRisk: SaturationRangeSchema,
    oxygenToxicityRisk: SaturationRangeSchema,
  }),
  units: z.array(UnitSchema).default([]),
  hypercapnicRisk: z.strictObject({
    conditions: z.array(z.enum(CONDITION_KINDS)).min(1),
    hypercapniaPaco2AtLeast: PressureSchema,
    chronicBicarbonateAboveMmolPerL: z.number().min(20).max(40),
    morbidObesityBmiAbove: z.number().min(25).max(80),
    acuteHypercapniaWithoutRiskTarget: z.enum(['keep', 'hypercapnic-risk-range']).default('keep'),
  }),
  population: z.strictObject({ minimumAgeYears: z.number().int().min(12).max(21) }).default({ minimumAgeYears: 16 }),
  specialConditions: z
    .strictObject({ oxygenOnlyIfHypoxaemic: z.array(z.enum(CONDITION_KINDS)) })
    .default({
      oxygenOnlyIfHypoxaemic: ['acute-coronary-syndrome', 'stroke', 'pregnancy', 'hyperventilation', 'sickle-cell-crisis'],
    }),
  freshness: z.strictObject({
    vitalSignsMinutes: z.number().int().min(1).max(1440),
    bloodGasMinutes: z.number().int().min(1).max(10080),
    haemoglobinHours: z.number().int().min(1).max(720),
    previousHypercapniaDays: z.number().int().min(0).max(3650),
    bloodGasGroupingMinutes: z.number().min(0).max(60).default(10),
  }),
  thresholds: z.strictObject({
    acidosisPhBelow: z.number().min(7).max(7.6),
    nivPhBelow: z.number().min(7).max(7.6),
    nivPaco2Above: PressureSchema,
    invasiveVentilationPhBelow: z.number().min(6.9).max(7.5),
    criticalSpo2BelowPercent: z.number().min(50).max(100),
    criticalPointsBelowTarget: z.number().min(0).max(30),
    highOxygenFio2AtLeast: z.number().min(0.21).max(1),
    venturiTachypnoeaRespRateAbove: z.number().min(10).max(60),
    venturiTachypnoeaFlowMultiplier: z.number().min(1).max(3),
    clusterHeadacheFlowLPerMin: z
      .strictObject({ from: z.number().min(1).max(15), to: z.number().min(1).max(15) })
      .refine((w) => w.from <= w.to, { message: 'from must not exceed to' }),
    pneumothoraxFlowLPerMin: z.number().min(1).max(15),
    nasalCannulaStepDownLPerMin: z.number().min(0.5).max(2),
    repeatGasMinutes: z
      .strictObject({ from: z.number().int().min(5), to: z.number().int().max(240) })
      .refine((w) => w.from <= w.to, { message: 'from must not exceed to' }),
    highFlowFailingFio2AtLeast: z.number().min(0.21).max(1).default(0.6),
    flowmeterMaxLPerMin: z.number().min(10).max(70).default(15),
    oxygenNeedTrendMinutes: z.number().int().min(30).max(1440).default(360),
    spo2FallPoints: z.number().min(1).max(10).default(3),
  }),
  /**
   * The titration review on `patient-view` (docs/clinical-basis.md, "Titration review"). Defaults are
   * local choices or, where marked, BTS 2017 weaning advice from memory.
   */
  titrationReview: z
    .strictObject({
      /** hours looked back over: one nursing shift (common practice) */
      lookbackHours: z.number().int().min(1).max(24),
      /** how long one SpO2 reading stands for the patient when no newer one comes (local choice) */
      maxReadingHoldMinutes: z.number().int().min(15).max(480),
      /** observed time needed before shares of time are judged (local choice) */
      minObservedMinutes: z.number().int().min(15).max(1440),
      /** share of observed time above target on oxygen that makes a card (local choice) */
      aboveTargetShareAtLeastPercent: z.number().min(1).max(100),
      /** share of observed time below target that makes a card when the latest reading is in range (local choice) */
      belowTargetShareAtLeastPercent: z.number().min(1).max(100),
      /** nasal-cannula flow from which oxygen may be stopped (BTS 2017, from memory: 2 L/min; 1 L/min at risk) */
      stopFromFlowLPerMin: z.strictObject({
        standard: z.number().min(0.5).max(4),
        hypercapnicRisk: z.number().min(0.5).max(4),
      }),
      /** consecutive readings in the target range before stopping (BTS 2017, from memory: 2) */
      stopAfterReadingsInRange: z.number().int().min(1).max(6),
    })
    .default({
      lookbackHours: 8,
      maxReadingHoldMinutes: 120,
      minObservedMinutes: 120,
      aboveTargetShareAtLeastPercent: 50,
      belowTargetShareAtLeastPercent: 10,
      stopFromFlowLPerMin: { standard: 2, hypercapnicRisk: 1 },
      stopAfterReadingsInRange: 2,
    }),
  devices: DevicesSchema.default(builtInDevicesSection),
  severity: z.record(z.string(), IndicatorSchema).default({}),
  disabledRules: z.array(z.string()).default([]),
  acknowledgements: z.array(AcknowledgementSchema).default([]),
  references: z.record(z.string(), ReferenceSchema),
  /**
   * Lines appended to every card. The advisory-only and pulse-oximetry lines are required by name, so
   * a local rewording cannot drop either safety statement by accident.
   */
  cautions: z.strictObject({
    advisoryOnly: z.string().min(20),
    pulseOximetry: z.string().min(20),
    more: z.array(z.string().min(1)).default([]),
  }),
  /** Default: no folder, the bundled `cards/` wording for every rule. */
  cardWording: CardWordingSchema.default({}),
  /** Default: the reasons in each `cards/<rule-id>.yaml`, as before. */
  overrideReasons: PolicyOverrideReasonsSchema.default({ merge: 'add', allCards: [], byRule: {} }),
});

export type PolicyFile = z.infer<typeof PolicyFileSchema>;
