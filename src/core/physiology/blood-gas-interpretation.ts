import { formatNumber as formatDecimals } from '../assessment/format.js';
import type { Outcome } from '../types.js';
import {
  expectedBicarbonateMmolPerL,
  expectedPaco2WintersMmHg,
  WINTERS_ALLOWANCE_MMHG,
} from './expected-bicarbonate.js';
import { bicarbonateFromPhAndPaco2MmolPerL } from './henderson-hasselbalch.js';
import { describeOutOfRange, PHYSIOLOGY_VALID_RANGES } from './valid-ranges.js';

export type AcidBaseKind =
  | 'normal'
  | 'acute-respiratory-acidosis'
  | 'compensated-respiratory-acidosis'
  | 'respiratory-alkalosis'
  | 'metabolic-acidosis'
  | 'metabolic-alkalosis'
  | 'mixed'
  | 'partly-compensated-respiratory-acidosis';

export interface BloodGasInterpretation {
  readonly hypercapnic: boolean;
  readonly acidBase: AcidBaseKind;
  readonly metabolicComponent: 'none' | 'raised-bicarbonate' | 'low-bicarbonate';
  readonly summary: string;
}

export interface BloodGasValues {
  readonly ph?: number;
  readonly paco2MmHg?: number;
  readonly hco3MmolPerL?: number;
}

/**
 * The policy's thresholds, plus optional normal-range edges that default to RCEM Learning
 * (policy key `rcem-abg`) and the usual bicarbonate range 22–26 mmol/L. RCEM gives 23–28, so a
 * hospital may set the bicarbonate edges (check-values pitfall 6).
 */
export interface BloodGasLimits {
  /** pH below this is acidaemia (RCEM: 7.35). */
  readonly acidosisPhBelow: number;
  /** PaCO2 at or above this is hypercapnia (BTS 2017 clarification: ≥ 6 kPa, 45.0 mmHg). */
  readonly hypercapniaPaco2MmHg: number;
  /** HCO3 above this marks long-standing hypercapnia (BTS 2017 as quoted: > 28 mmol/L). */
  readonly chronicBicarbonateAboveMmolPerL: number;
  /** pH above this is alkalaemia (RCEM: 7.45). */
  readonly alkalosisPhAbove?: number;
  /** PaCO2 below this is hypocapnia (RCEM: 4.67 kPa, 35 mmHg). */
  readonly hypocapniaPaco2BelowMmHg?: number;
  readonly lowBicarbonateBelowMmolPerL?: number;
  readonly highBicarbonateAboveMmolPerL?: number;
}

/**
 * Edges of the normal ranges used when the caller gives none: pH 7.35–7.45 and PaCO2 35–45 mmHg
 * (RCEM Learning, `rcem-abg`); HCO3 22–26 mmol/L (most references; RCEM gives 23–28).
 */
export const BLOOD_GAS_RANGE_DEFAULTS = {
  alkalosisPhAbove: 7.45,
  hypocapniaPaco2BelowMmHg: 35,
  lowBicarbonateBelowMmolPerL: 22,
  highBicarbonateAboveMmolPerL: 26,
} as const;

/** Bicarbonate beyond an expectation by more than this counts as raised (common practice). */
export const COMPENSATION_ALLOWANCE_MMOL_PER_L = 2;

/**
 * A reported HCO3 further than this from the one calculated from pH and PaCO2 points to a unit or
 * entry error (common practice: the Henderson–Hasselbalch consistency check of a gas). The FHIR
 * reader uses the same tolerance to set aside a sample whose pressures are mislabelled.
 */
export const BICARBONATE_CONSISTENCY_TOLERANCE_MMOL_PER_L = 6;
const CONSISTENCY_TOLERANCE_MMOL_PER_L = BICARBONATE_CONSISTENCY_TOLERANCE_MMOL_PER_L;

/** Primary disturbance when pH is in range but both PaCO2 and HCO3 are low (common practice). */
const NEUTRAL_PH = 7.4;

const LABELS: Readonly<Record<AcidBaseKind, string>> = {
  normal: 'No acid–base disturbance',
  'acute-respiratory-acidosis': 'Acute respiratory acidosis',
  'partly-compensated-respiratory-acidosis': 'Partly compensated respiratory acidosis',
  'compensated-respiratory-acidosis': 'Compensated respiratory acidosis',
  'respiratory-alkalosis': 'Respiratory alkalosis',
  'metabolic-acidosis': 'Metabolic acidosis',
  'metabolic-alkalosis': 'Metabolic alkalosis',
  mixed: 'Mixed disturbance',
};

interface Decision {
  readonly acidBase: AcidBaseKind;
  readonly note: string;
}

/**
 * Reads the acid–base state of a blood gas for the oxygen checks: hypercapnia (PaCO2 at or above
 * the policy threshold), the disturbance, and whether bicarbonate shows metabolic compensation.
 *
 * Respiratory acidosis (hypercapnia) is read by pH and bicarbonate. Bicarbonate counts as raised
 * when it exceeds what an acute rise explains (24 + 1 per 10 mmHg above 40, plus 2 mmol/L) or the
 * policy's long-standing marker (BTS: > 28). Then:
 * - pH below the acidosis threshold, bicarbonate not raised: acute respiratory acidosis;
 * - pH low, bicarbonate raised: partly compensated (acute-on-chronic when it reaches the chronic
 *   expectation, 24 + 3.5 per 10 mmHg, less 2);
 * - pH in range: compensated respiratory acidosis (the BTS pathway's "compensated hypercapnia");
 * - pH low with low bicarbonate: mixed respiratory and metabolic acidosis;
 * - pH high with raised bicarbonate: metabolic alkalosis, the PaCO2 rise being compensation.
 * Without hypercapnia: metabolic acidosis (mixed when PaCO2 is above the Winters expectation),
 * metabolic or respiratory alkalosis, or normal. Normal ranges: RCEM Learning (`rcem-abg`).
 *
 * Unknown when pH or PaCO2 is missing (named in `missing`), when a value is outside pH 6.5–8.0,
 * PaCO2 5–200 mmHg or HCO3 2–60 mmol/L, or when the reported HCO3 is more than 6 mmol/L from the
 * one calculated from pH and PaCO2 (a sign of a unit or entry error). A missing HCO3 is calculated
 * and the summary says so. Venous gases read PCO2 higher and pH lower; the caller must say which.
 */
export function interpretBloodGas(
  gas: BloodGasValues,
  limits: BloodGasLimits,
): Outcome<BloodGasInterpretation> {
  const missing = (['ph', 'paco2MmHg'] as const).filter((name) => {
    const value = gas[name];
    return value === undefined || Number.isNaN(value);
  });
  if (missing.length > 0) {
    return { kind: 'unknown', reason: `missing ${missing.join(', ')}`, missing };
  }
  const ph = gas.ph as number;
  const paco2 = gas.paco2MmHg as number;
  const reportedHco3 = Number.isNaN(gas.hco3MmolPerL) ? undefined : gas.hco3MmolPerL;
  const ranges = PHYSIOLOGY_VALID_RANGES;
  const problems = [
    describeOutOfRange('ph', ph, ranges.ph),
    describeOutOfRange('paco2MmHg', paco2, ranges.paco2MmHg),
    reportedHco3 === undefined
      ? undefined
      : describeOutOfRange('hco3MmolPerL', reportedHco3, ranges.hco3MmolPerL),
  ].filter((problem): problem is string => problem !== undefined);
  if (problems.length > 0) {
    return { kind: 'unknown', reason: problems.join('; ') };
  }
  const calculatedHco3 = bicarbonateFromPhAndPaco2MmolPerL(ph, paco2);
  if (
    reportedHco3 !== undefined &&
    Math.abs(reportedHco3 - calculatedHco3) > CONSISTENCY_TOLERANCE_MMOL_PER_L
  ) {
    return {
      kind: 'unknown',
      reason:
        `pH ${ph.toFixed(2)}, PaCO2 ${formatNumber(paco2)} mmHg and HCO3 ` +
        `${formatNumber(reportedHco3)} mmol/L do not agree (calculated HCO3 ` +
        `${formatNumber(calculatedHco3)} mmol/L): check the units and the sample`,
    };
  }
  const hco3 = reportedHco3 ?? calculatedHco3;
  const defaults = BLOOD_GAS_RANGE_DEFAULTS;
  const edges = {
    alkalosisPhAbove: limits.alkalosisPhAbove ?? defaults.alkalosisPhAbove,
    hypocapniaBelow: limits.hypocapniaPaco2BelowMmHg ?? defaults.hypocapniaPaco2BelowMmHg,
    lowBelow: limits.lowBicarbonateBelowMmolPerL ?? defaults.lowBicarbonateBelowMmolPerL,
    highAbove: limits.highBicarbonateAboveMmolPerL ?? defaults.highBicarbonateAboveMmolPerL,
  };
  const hypercapnic = paco2 >= limits.hypercapniaPaco2MmHg;
  const acidaemic = ph < limits.acidosisPhBelow;
  const alkalaemic = ph > edges.alkalosisPhAbove;
  const lowBicarbonate = hco3 < edges.lowBelow;
  const raisedBicarbonate = hypercapnic
    ? hco3 > expectedBicarbonateMmolPerL(paco2, 'acute') + COMPENSATION_ALLOWANCE_MMOL_PER_L ||
      hco3 > limits.chronicBicarbonateAboveMmolPerL
    : hco3 > edges.highAbove;
  const reading: Reading = {
    ph,
    paco2,
    hco3,
    acidaemic,
    alkalaemic,
    lowBicarbonate,
    raisedBicarbonate,
    chronicAbove: limits.chronicBicarbonateAboveMmolPerL,
  };
  const decision = hypercapnic
    ? decideHypercapnic(reading)
    : decideNormocapnic(reading, paco2 < edges.hypocapniaBelow);
  const bicarbonateWords = lowBicarbonate
    ? 'low'
    : raisedBicarbonate
      ? 'raised'
      : hypercapnic
        ? 'not raised'
        : 'in range';
  const calculated = reportedHco3 === undefined ? ' (calculated from pH and PaCO2)' : '';
  return {
    kind: 'ok',
    value: {
      hypercapnic,
      acidBase: decision.acidBase,
      metabolicComponent: lowBicarbonate
        ? 'low-bicarbonate'
        : raisedBicarbonate
          ? 'raised-bicarbonate'
          : 'none',
      summary:
        `${LABELS[decision.acidBase]}${decision.note}: pH ${ph.toFixed(2)} with PaCO2 ` +
        `${formatNumber(paco2)} mmHg; bicarbonate ${formatNumber(hco3)} mmol/L${calculated}, ` +
        bicarbonateWords,
    },
  };
}

interface Reading {
  readonly ph: number;
  readonly paco2: number;
  readonly hco3: number;
  readonly acidaemic: boolean;
  readonly alkalaemic: boolean;
  readonly lowBicarbonate: boolean;
  readonly raisedBicarbonate: boolean;
  /** The policy's marker of long-standing hypercapnia (BTS: HCO3 > 28 mmol/L). */
  readonly chronicAbove: number;
}

function decideHypercapnic(r: Reading): Decision {
  if (r.acidaemic) {
    if (r.lowBicarbonate) {
      return { acidBase: 'mixed', note: ' (respiratory and metabolic acidosis)' };
    }
    if (!r.raisedBicarbonate) {
      return { acidBase: 'acute-respiratory-acidosis', note: '' };
    }
    const chronicReached =
      r.hco3 >=
      expectedBicarbonateMmolPerL(r.paco2, 'chronic') - COMPENSATION_ALLOWANCE_MMOL_PER_L;
    return {
      acidBase: 'partly-compensated-respiratory-acidosis',
      note: chronicReached ? ' (bicarbonate at the chronic level: acute-on-chronic)' : '',
    };
  }
  if (r.alkalaemic) {
    return r.raisedBicarbonate
      ? { acidBase: 'metabolic-alkalosis', note: ' (raised PaCO2 as compensation)' }
      : { acidBase: 'mixed', note: ' (alkalaemia with hypercapnia)' };
  }
  if (!r.raisedBicarbonate) {
    return {
      acidBase: 'compensated-respiratory-acidosis',
      note: ' (pH in range; hypercapnia may be recent)',
    };
  }
  if (r.ph > NEUTRAL_PH) {
    return {
      acidBase: 'compensated-respiratory-acidosis',
      note: ' (or metabolic alkalosis with compensation)',
    };
  }
  return {
    acidBase: 'compensated-respiratory-acidosis',
    note: r.hco3 > r.chronicAbove ? ' (bicarbonate suggests long-standing hypercapnia)' : '',
  };
}

function decideNormocapnic(r: Reading, hypocapnic: boolean): Decision {
  if (r.acidaemic) {
    if (!r.lowBicarbonate) {
      return { acidBase: 'mixed', note: ' (acidaemia with PaCO2 and bicarbonate in range)' };
    }
    const expectedPaco2 = expectedPaco2WintersMmHg(r.hco3);
    if (r.paco2 > expectedPaco2 + WINTERS_ALLOWANCE_MMHG) {
      const expected = formatNumber(expectedPaco2);
      return {
        acidBase: 'mixed',
        note: ` (metabolic acidosis with PaCO2 above the expected ${expected} ± 2 mmHg)`,
      };
    }
    return { acidBase: 'metabolic-acidosis', note: '' };
  }
  if (r.alkalaemic) {
    if (hypocapnic && r.raisedBicarbonate) {
      return { acidBase: 'mixed', note: ' (respiratory and metabolic alkalosis)' };
    }
    if (hypocapnic) {
      return { acidBase: 'respiratory-alkalosis', note: '' };
    }
    if (r.raisedBicarbonate) {
      return { acidBase: 'metabolic-alkalosis', note: '' };
    }
    return { acidBase: 'mixed', note: ' (alkalaemia with PaCO2 and bicarbonate in range)' };
  }
  if (hypocapnic && r.lowBicarbonate) {
    return r.ph < NEUTRAL_PH
      ? { acidBase: 'metabolic-acidosis', note: ' (compensated)' }
      : { acidBase: 'respiratory-alkalosis', note: ' (compensated)' };
  }
  if (r.hco3 > r.chronicAbove) {
    return { acidBase: 'normal', note: ' (bicarbonate suggests long-standing hypercapnia)' };
  }
  return { acidBase: 'normal', note: '' };
}

/**
 * One decimal place at most, without a trailing zero: 45.004 → "45", 26.27 → "26.3". The shared
 * formatter writes the digits `toFixed(1)` would, without running its exact algorithm and parsing the
 * text back; every value shown here has passed the range checks, so none is a negative that rounds
 * to "-0".
 */
function formatNumber(value: number): string {
  return formatDecimals(value, 1);
}
