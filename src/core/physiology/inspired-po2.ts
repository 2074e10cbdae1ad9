import { WATER_VAPOUR_PRESSURE_37C_MMHG } from './constants.js';
import { assertInRange } from './valid-ranges.js';

/**
 * Inspired oxygen tension once the gas is warmed to 37 °C and saturated with water vapour in the
 * airways.
 *
 * Formula: PIO2 = FiO2 × (PB − PH2O), mmHg (the first term of the alveolar gas equation; policy key
 * `alveolar-gas`). Check value: 0.21 × (760 − 47) = 149.7 mmHg.
 *
 * @param fio2Fraction - inspired oxygen fraction, 0.20–1.
 * @param barometricPressureMmHg - 200–800 mmHg.
 * @param waterVapourMmHg - 0–80 mmHg; 47 mmHg at 37 °C.
 * @throws RangeError outside those ranges (check patient data first with `checkPhysiologyInputs`).
 */
export function inspiredPo2MmHg(
  fio2Fraction: number,
  barometricPressureMmHg: number,
  waterVapourMmHg: number = WATER_VAPOUR_PRESSURE_37C_MMHG,
): number {
  assertInRange('fio2Fraction', fio2Fraction);
  assertInRange('barometricPressureMmHg', barometricPressureMmHg);
  assertInRange('waterVapourMmHg', waterVapourMmHg);
  return fio2Fraction * (barometricPressureMmHg - waterVapourMmHg);
}
