import type { Outcome } from '../types.js';
import {
  assertInRange,
  checkPhysiologyInputs,
  roundForThreshold,
  type ValidRange,
} from './valid-ranges.js';

/**
 * Rice 2007 (Chest 132:410; policy key `rice-2007`) excluded SpO2 above 97 %: on the flat top of
 * the dissociation curve a saturation says almost nothing about PaO2.
 */
export const RICE_MAX_SPO2_PERCENT = 97;

/** Rice 2007 regression: S/F = 64 + 0.84 × P/F. */
const RICE = { intercept: 64, slope: 0.84 } as const;

/** The published S/F cut-offs, which Rice reports as matching P/F 200 and 300. */
export const RICE_SF_CUTOFFS = { pf200: 235, pf300: 315 } as const;

/**
 * SpO2/FiO2 ratio, with SpO2 in percent as Rice 2007 used it (e.g. 94 / 0.40 = 235).
 *
 * Unknown when SpO2 is above 97 % (excluded by Rice 2007), or when an input is outside SpO2
 * 20–100 % or FiO2 0.20–1. Pulse oximetry reads within about 4 % of arterial saturation
 * (ISO 80601-2-61) and overestimates more often in darker skin (Sjoding 2020), so an S/F is a
 * screening figure, not a substitute for a blood gas.
 */
export function sfRatio(spo2Percent: number, fio2Fraction: number): Outcome<number> {
  const checked = checkPhysiologyInputs({ spo2Percent, fio2Fraction });
  if (checked.kind === 'unknown') {
    return checked;
  }
  if (spo2Percent > RICE_MAX_SPO2_PERCENT) {
    return {
      kind: 'unknown',
      reason:
        `SpO2 ${spo2Percent} % is above ${RICE_MAX_SPO2_PERCENT} %, ` +
        'where S/F does not track P/F (Rice 2007)',
    };
  }
  return { kind: 'ok', value: spo2Percent / fio2Fraction };
}

/**
 * S/F imputed from P/F with the Rice 2007 regression: S/F = 64 + 0.84 × P/F. It gives 232 at
 * P/F 200 and 316 at P/F 300, not the published cut-offs 235 and 315: use it for imputation only
 * and classify with {@link classifySfRice}. Fitted in patients with ALI/ARDS; valid input P/F
 * 10–4000 mmHg.
 *
 * @throws RangeError outside that range.
 */
export function sfFromPfRice(pf: number): number {
  assertInRange('pfRatioMmHg', pf);
  return RICE.intercept + RICE.slope * pf;
}

/** Below S/F 64 the regression would give a P/F of zero or less. */
const SF_INVERTIBLE: ValidRange = { min: 64, max: 500, unit: '%/fraction', exclusive: true };

/**
 * P/F imputed from S/F by inverting the Rice 2007 regression: P/F = (S/F − 64) / 0.84.
 * Valid input S/F strictly between 64 and 500.
 *
 * @throws RangeError outside that range.
 */
export function pfFromSfRice(sf: number): number {
  assertInRange('sfRatio', sf, SF_INVERTIBLE);
  return (sf - RICE.intercept) / RICE.slope;
}

/**
 * Classifies an S/F ratio with the cut-offs Rice 2007 published: 235 (matching P/F 200) and 315
 * (matching P/F 300), not the regression's 232 and 316. A value exactly on a cut-off falls in the
 * lower band ('below-235' means at or below 235), mirroring the "P/F ≤ 200" and "≤ 300" of the
 * definitions those cut-offs stand in for; this errs towards the more severe band.
 *
 * @param sf - S/F ratio, 20–500.
 * @throws RangeError outside that range.
 */
export function classifySfRice(sf: number): 'none' | 'below-315' | 'below-235' {
  assertInRange('sfRatio', sf);
  const ratio = roundForThreshold(sf);
  if (ratio <= RICE_SF_CUTOFFS.pf200) {
    return 'below-235';
  }
  if (ratio <= RICE_SF_CUTOFFS.pf300) {
    return 'below-315';
  }
  return 'none';
}
