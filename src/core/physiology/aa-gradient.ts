import { assertInRange } from './valid-ranges.js';

/**
 * Alveolar–arterial oxygen gradient: A-a = PAO2 − PaO2, mmHg (policy key `alveolar-gas`).
 * Check value: air at sea level, PaCO2 40 and PaO2 95 mmHg gives 99.7 − 95 = 4.7 mmHg.
 *
 * The result is not clamped: a small negative value is measurement or rounding error; a clearly
 * negative one means the FiO2 used (often an estimate for a variable-performance device) or the
 * sample is wrong. Compare it with the age norm only on room air (see `expectedAaGradientMmHg`).
 *
 * @param alveolarPo2MmHg - from `alveolarPo2MmHg`, 1–800 mmHg.
 * @param pao2MmHg - measured arterial PO2, 10–800 mmHg.
 * @throws RangeError outside those ranges.
 */
export function aaGradientMmHg(alveolarPo2MmHg: number, pao2MmHg: number): number {
  assertInRange('alveolarPo2MmHg', alveolarPo2MmHg);
  assertInRange('pao2MmHg', pao2MmHg);
  return alveolarPo2MmHg - pao2MmHg;
}
