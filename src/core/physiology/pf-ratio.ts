import { assertInRange, roundForThreshold } from './valid-ranges.js';

/**
 * PaO2/FiO2 ratio, mmHg. Check value: PaO2 60 mmHg on air (0.21) gives 285.7.
 *
 * When FiO2 is an estimate (variable-performance devices), the ratio is only as good as that
 * estimate; callers should say so.
 *
 * @param pao2MmHg - 10–800 mmHg.
 * @param fio2Fraction - 0.20–1.
 * @throws RangeError outside those ranges.
 */
export function pfRatioMmHg(pao2MmHg: number, fio2Fraction: number): number {
  assertInRange('pao2MmHg', pao2MmHg);
  assertInRange('fio2Fraction', fio2Fraction);
  return pao2MmHg / fio2Fraction;
}

/**
 * The oxygenation band of the Berlin Definition of ARDS (ARDS Definition Task Force, JAMA
 * 307:2526, 2012; policy key `berlin-2012`): mild 200 < P/F ≤ 300, moderate 100 < P/F ≤ 200,
 * severe P/F ≤ 100 mmHg; above 300 is 'none'. So exactly 300 is mild and exactly 200 moderate.
 *
 * This is the oxygenation criterion only. The definition also needs PEEP or CPAP ≥ 5 cmH2O,
 * onset within a week, bilateral opacities and oedema not fully explained by cardiac failure;
 * a band here is not a diagnosis of ARDS.
 *
 * @param pf - P/F ratio in mmHg, 10–4000.
 * @throws RangeError outside that range.
 */
export function classifyPfBerlin(pf: number): 'none' | 'mild' | 'moderate' | 'severe' {
  assertInRange('pfRatioMmHg', pf);
  const ratio = roundForThreshold(pf);
  if (ratio <= 100) {
    return 'severe';
  }
  if (ratio <= 200) {
    return 'moderate';
  }
  if (ratio <= 300) {
    return 'mild';
  }
  return 'none';
}
