import { HUFNER_CLINICAL_ML_PER_G, OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG } from './constants.js';
import { assertInRange } from './valid-ranges.js';

/**
 * Oxygen content of blood: CaO2 = 1.34 × Hb × SaO2 + 0.003 × PaO2, mL O2 per dL (policy key
 * `oxygen-content`). Check value: Hb 15 g/dL, SaO2 0.98, PaO2 100 mmHg gives 20.00 mL/dL.
 * Also serves mixed venous blood (SvO2, PvO2). Uses the clinical 1.34 mL/g (not the theoretical
 * 1.39) and 0.003 mL/dL/mmHg (not 0.0031).
 *
 * @param haemoglobinGPerDL - 1–25 g/dL.
 * @param saturationFraction - 0–1 (a measured SaO2 is better than an SpO2).
 * @param po2MmHg - 0–800 mmHg.
 * @throws RangeError outside those ranges.
 */
export function oxygenContentMlPerDl(
  haemoglobinGPerDL: number,
  saturationFraction: number,
  po2MmHg: number,
): number {
  assertInRange('haemoglobinGPerDL', haemoglobinGPerDL);
  assertInRange('saturationFraction', saturationFraction);
  assertInRange('po2MmHg', po2MmHg);
  return (
    HUFNER_CLINICAL_ML_PER_G * haemoglobinGPerDL * saturationFraction +
    OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG * po2MmHg
  );
}
