import type { Outcome } from '../types.js';

/**
 * The input ranges the physiology functions accept. They are wide on purpose: they refuse values no
 * living adult can have (or that make a formula meaningless), not values that are merely unusual.
 * Judging plausibility against the patient is the FHIR reader's job (it sets values aside).
 *
 * The plain-number functions (contract signatures return `number`) throw a `RangeError` outside
 * these ranges: that is a programmer error, because callers holding patient data are expected to
 * check first with {@link checkPhysiologyInputs}, which returns an `Outcome` instead.
 */
export interface ValidRange {
  readonly min: number;
  readonly max: number;
  readonly unit: string;
  /** When true both ends are excluded (the formula is undefined at them). */
  readonly exclusive?: boolean;
}

export const PHYSIOLOGY_VALID_RANGES = {
  /** Dead Sea shore (about −430 m) to above the Everest summit (8848 m). */
  altitudeM: { min: -500, max: 9000, unit: 'm' },
  /** Everest summit is about 253 mmHg; hyperbaric pressures are out of scope. */
  barometricPressureMmHg: { min: 200, max: 800, unit: 'mmHg' },
  waterVapourMmHg: { min: 0, max: 80, unit: 'mmHg' },
  /** 0.20 allows for the rounding of room air (0.2095); nothing below is a breathable ward gas. */
  fio2Fraction: { min: 0.2, max: 1, unit: 'fraction' },
  /** Fat 0.7 to carbohydrate 1.0, with margin for overfeeding. */
  respiratoryQuotient: { min: 0.6, max: 1.2, unit: 'ratio' },
  /** Climbers near the Everest summit reach about 7.5 mmHg. */
  paco2MmHg: { min: 5, max: 200, unit: 'mmHg' },
  pao2MmHg: { min: 10, max: 800, unit: 'mmHg' },
  /** Any oxygen tension, for the dissociation curve and oxygen content. */
  po2MmHg: { min: 0, max: 800, unit: 'mmHg' },
  alveolarPo2MmHg: { min: 1, max: 800, unit: 'mmHg' },
  inspiredPo2MmHg: { min: 20, max: 800, unit: 'mmHg' },
  /** A-a gradient may be slightly negative from measurement error; larger negatives are refused. */
  aaGradientMmHg: { min: -800, max: 800, unit: 'mmHg' },
  expectedAaGradientMmHg: { min: 0, max: 100, unit: 'mmHg' },
  hypercapniaPaco2MmHg: { min: 30, max: 80, unit: 'mmHg' },
  /** Oximeters are calibrated only from 70 %; lower readings are accepted but unreliable. */
  spo2Percent: { min: 20, max: 100, unit: '%' },
  saturationFraction: { min: 0, max: 1, unit: 'fraction' },
  respRatePerMin: { min: 1, max: 80, unit: '/min' },
  haemoglobinGPerDL: { min: 1, max: 25, unit: 'g/dL' },
  /** The service is for adult inpatients; the age norms were described in adults. */
  ageYears: { min: 18, max: 120, unit: 'years' },
  ph: { min: 6.5, max: 8, unit: 'pH' },
  hco3MmolPerL: { min: 2, max: 60, unit: 'mmol/L' },
  /** PaO2 10–800 over FiO2 0.2–1. */
  pfRatioMmHg: { min: 10, max: 4000, unit: 'mmHg' },
  /** SpO2 20–100 % over FiO2 0.2–1. */
  sfRatio: { min: 20, max: 500, unit: '%/fraction' },
  roxIndex: { min: 0.1, max: 100, unit: 'index' },
  hoursOnHighFlow: { min: 0, max: 720, unit: 'h' },
} as const satisfies Readonly<Record<string, ValidRange>>;

export type PhysiologyInputName = keyof typeof PHYSIOLOGY_VALID_RANGES;

/** Why `value` is outside `range`, or undefined when it is inside. */
export function describeOutOfRange(
  name: string,
  value: number,
  range: ValidRange,
): string | undefined {
  const inside =
    range.exclusive === true
      ? value > range.min && value < range.max
      : value >= range.min && value <= range.max;
  if (Number.isFinite(value) && inside) {
    return undefined;
  }
  const ends = range.exclusive === true ? 'between' : 'from';
  const joiner = range.exclusive === true ? 'and' : 'to';
  return `${name} must be ${ends} ${range.min} ${joiner} ${range.max} ${range.unit}; got ${String(value)}`;
}

/** Throws a RangeError when `value` is not a finite number inside the range for `name`. */
export function assertInRange(
  name: PhysiologyInputName,
  value: number,
  range: ValidRange = PHYSIOLOGY_VALID_RANGES[name],
): void {
  const problem = describeOutOfRange(name, value, range);
  if (problem !== undefined) {
    throw new RangeError(problem);
  }
}

/**
 * Checks named inputs before a plain-number physiology function is called with patient data.
 * Missing values (undefined or NaN) are listed in `missing`; values out of range give the reason.
 *
 * @example
 * const checked = checkPhysiologyInputs({ fio2Fraction: 0.28, paco2MmHg: 52 });
 * if (checked.kind === 'ok') alveolarPo2MmHg({ ...checked.value, barometricPressureMmHg: 760 });
 */
export function checkPhysiologyInputs<K extends PhysiologyInputName>(values: {
  readonly [P in K]: number | undefined;
}): Outcome<{ readonly [P in K]: number }> {
  // One pass, with the lists made only when something is wrong: this runs several times a check.
  let missing: K[] | undefined;
  let problems: string[] | undefined;
  for (const name of Object.keys(values) as K[]) {
    const value = values[name];
    if (value === undefined || Number.isNaN(value)) {
      (missing ??= []).push(name);
    } else if (missing === undefined) {
      const problem = describeOutOfRange(name, value, PHYSIOLOGY_VALID_RANGES[name]);
      if (problem !== undefined) {
        (problems ??= []).push(problem);
      }
    }
  }
  if (missing !== undefined) {
    return { kind: 'unknown', reason: `missing ${missing.join(', ')}`, missing };
  }
  if (problems !== undefined) {
    return { kind: 'unknown', reason: problems.join('; ') };
  }
  return { kind: 'ok', value: values as { readonly [P in K]: number } };
}

/**
 * Rounds a computed ratio to 1e-6 before it is compared with a published integer or two-decimal
 * threshold, so that binary floating point (e.g. 114 / 0.57 = 200.00000000000003) cannot move a value
 * that is exactly on a boundary to the wrong side of it.
 */
export function roundForThreshold(value: number): number {
  return Math.round(value * 1e6) / 1e6;
}
