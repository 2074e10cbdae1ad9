import { assertInRange, type ValidRange } from './valid-ranges.js';

/**
 * Severinghaus 1979 (J Appl Physiol 46:599; policy key `severinghaus-1979`) constants:
 * S = 1 / (23400 / (PO2³ + 150·PO2) + 1), for standard human blood at 37 °C, pH 7.40, PCO2 40 mmHg.
 */
const SEVERINGHAUS = { k: 23400, linear: 150 } as const;

/** The Ellis inversion solves PO2³ + 150·PO2 = 2A by Cardano's formula; (150 / 3)³ = 50³. */
const CARDANO_P_CUBED = (SEVERINGHAUS.linear / 3) ** 3;

/** The curve reaches 0 and 1 only at PO2 0 and infinity, so the inversion needs 0 < S < 1. */
const INVERTIBLE_SATURATION: ValidRange = { min: 0, max: 1, unit: 'fraction', exclusive: true };

/**
 * Oxygen saturation for a PO2 on the standard dissociation curve, by the Severinghaus 1979
 * equation: S = 1 / (23400 / (PO2³ + 150·PO2) + 1). Check values: 0.7495 at 40 mmHg, 0.9058 at
 * 60 mmHg, 0.9775 at 100 mmHg; P50 26.86 mmHg.
 *
 * The equation, not the paper's Table 1, is the reference here: the equation is what Severinghaus
 * offered for computation, and it is exactly invertible (Ellis 1989). The two differ by up to about
 * 0.55 percentage points, mostly above 100 mmHg, where the equation overshoots the table.
 *
 * Standard conditions only (37 °C, pH 7.40, PCO2 40): no temperature, pH or 2,3-DPG correction.
 *
 * @param po2MmHg - 0–800 mmHg.
 * @returns saturation as a fraction (0–1).
 * @throws RangeError outside that range.
 */
export function saturationFromPo2(po2MmHg: number): number {
  assertInRange('po2MmHg', po2MmHg);
  if (po2MmHg === 0) {
    return 0;
  }
  return 1 / (SEVERINGHAUS.k / (po2MmHg ** 3 + SEVERINGHAUS.linear * po2MmHg) + 1);
}

/**
 * PO2 on the standard curve for a saturation: the Ellis 1989 inversion of the Severinghaus equation
 * (J Appl Physiol 67:902; policy key `ellis-1989`). With A = 11700 / (1/S − 1) and
 * B = √(50³ + A²): PO2 = ∛(A + B) − ∛(B − A). Check values: 0.88 → 54.67, 0.90 → 58.66,
 * 0.94 → 70.87 mmHg. B − A is computed as 50³ / (A + B), the same quantity without cancellation.
 *
 * Caution: above about 97 % the curve is flat and a 1 % change in saturation moves PO2 by tens of
 * mmHg, so a PO2 inferred from SpO2 there means little. Standard conditions only.
 *
 * @param saturationFraction - strictly between 0 and 1.
 * @throws RangeError outside that range.
 */
export function po2FromSaturationMmHg(saturationFraction: number): number {
  assertInRange('saturationFraction', saturationFraction, INVERTIBLE_SATURATION);
  const a = SEVERINGHAUS.k / 2 / (1 / saturationFraction - 1);
  const b = Math.sqrt(CARDANO_P_CUBED + a * a);
  return Math.cbrt(a + b) - Math.cbrt(CARDANO_P_CUBED / (a + b));
}
