import { assertInRange } from './valid-ranges.js';

/** Reference point of the compensation rules: PaCO2 40 mmHg, HCO3 24 mmol/L (common practice). */
export const ACID_BASE_REFERENCE = { paco2MmHg: 40, hco3MmolPerL: 24 } as const;

/**
 * Expected HCO3 rise per 10 mmHg rise in PaCO2: acute 1, chronic 3.5 mmol/L (standard acid–base
 * physiology as quoted by secondary sources; tolerance ± 0.5).
 */
export const BICARBONATE_RISE_PER_10_MMHG = { acute: 1, chronic: 3.5 } as const;

/**
 * Bicarbonate expected from renal and buffer compensation for a PaCO2 above 40 mmHg:
 * acute 24 + 1 × (PaCO2 − 40) / 10; chronic 24 + 3.5 × (PaCO2 − 40) / 10 mmol/L. At or below
 * 40 mmHg it returns 24 (the rule describes hypercapnia only). Check values at PaCO2 60 mmHg:
 * acute 26, chronic 31 mmol/L.
 *
 * @param paco2MmHg - 5–200 mmHg.
 * @throws RangeError outside that range.
 */
export function expectedBicarbonateMmolPerL(paco2MmHg: number, timing: 'acute' | 'chronic'): number {
  assertInRange('paco2MmHg', paco2MmHg);
  const rise = Math.max(0, paco2MmHg - ACID_BASE_REFERENCE.paco2MmHg);
  return ACID_BASE_REFERENCE.hco3MmolPerL + (BICARBONATE_RISE_PER_10_MMHG[timing] * rise) / 10;
}

/**
 * Winters' formula: the PaCO2 expected from respiratory compensation of a metabolic acidosis,
 * 1.5 × HCO3 + 8 (± 2) mmHg (Albert, Dell and Winters, Ann Intern Med 1967; from memory).
 * Check value: HCO3 12 mmol/L gives 26 mmHg.
 *
 * @param hco3MmolPerL - 2–60 mmol/L.
 * @throws RangeError outside that range.
 */
export function expectedPaco2WintersMmHg(hco3MmolPerL: number): number {
  assertInRange('hco3MmolPerL', hco3MmolPerL);
  return 1.5 * hco3MmolPerL + 8;
}

/** The ± 2 mmHg that goes with Winters' formula. */
export const WINTERS_ALLOWANCE_MMHG = 2;
