import { assertInRange } from './valid-ranges.js';

/**
 * Henderson–Hasselbalch for plasma at 37 °C: pK 6.1 and CO2 solubility 0.0307 mmol/L per mmHg
 * (standard acid–base physiology; from memory). Blood gas analysers report bicarbonate this way.
 */
const HENDERSON_HASSELBALCH = { pK: 6.1, co2SolubilityMmolPerLPerMmHg: 0.0307 } as const;

/**
 * Bicarbonate calculated from pH and PaCO2: HCO3 = 0.0307 × PaCO2 × 10^(pH − 6.1), mmol/L.
 * Check value: pH 7.40 with PaCO2 40 mmHg gives 24.5 mmol/L.
 *
 * @param ph - 6.5–8.0.
 * @param paco2MmHg - 5–200 mmHg.
 * @throws RangeError outside those ranges.
 */
export function bicarbonateFromPhAndPaco2MmolPerL(ph: number, paco2MmHg: number): number {
  assertInRange('ph', ph);
  assertInRange('paco2MmHg', paco2MmHg);
  const { co2SolubilityMmolPerLPerMmHg, pK } = HENDERSON_HASSELBALCH;
  return co2SolubilityMmolPerLPerMmHg * paco2MmHg * 10 ** (ph - pK);
}
