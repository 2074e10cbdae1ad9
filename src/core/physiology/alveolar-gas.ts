import type { Outcome } from '../types.js';
import { RESPIRATORY_QUOTIENT_DEFAULT, WATER_VAPOUR_PRESSURE_37C_MMHG } from './constants.js';
import { inspiredPo2MmHg } from './inspired-po2.js';
import { describeOutOfRange, PHYSIOLOGY_VALID_RANGES } from './valid-ranges.js';

export interface AlveolarGasInput {
  readonly fio2Fraction: number;
  readonly barometricPressureMmHg: number;
  /** Arterial PCO2, standing in for alveolar PCO2. */
  readonly paco2MmHg: number;
  /** Respiratory quotient R; 0.8 when not given. */
  readonly respiratoryQuotient?: number;
  /** 'simplified' (the default) or 'full'. */
  readonly form?: 'simplified' | 'full';
  /** Water vapour pressure; 47 mmHg (37 °C) when not given. */
  readonly waterVapourMmHg?: number;
}

/**
 * Ideal alveolar oxygen tension from the alveolar gas equation (policy key `alveolar-gas`).
 *
 * - Simplified form (default, the one clinicians check by hand): PAO2 = FiO2 (PB − PH2O) − PaCO2 / R.
 * - Full form: PAO2 = FiO2 (PB − PH2O) − PaCO2 × [FiO2 + (1 − FiO2) / R]. It is higher than the
 *   simplified form by PaCO2 × FiO2 × (1 − R) / R, about 2 mmHg on air at PaCO2 40 mmHg.
 *
 * R 0.8 and PH2O 47 mmHg (37 °C) by default. Check value: air at 760 mmHg with PaCO2 40 mmHg gives
 * 99.7 mmHg (simplified) and 101.8 mmHg (full).
 *
 * Valid inputs: FiO2 0.20–1, PB 200–800 mmHg, PaCO2 5–200 mmHg, R 0.6–1.2, PH2O 0–80 mmHg, and the
 * combination must leave a PAO2 of at least 1 mmHg (a lower result means the inputs cannot belong
 * to a living patient: usually a PaCO2 entered in the wrong unit).
 *
 * @throws RangeError outside the valid inputs; use {@link alveolarPo2OrUnknown} with patient data.
 */
export function alveolarPo2MmHg(input: AlveolarGasInput): number {
  const result = alveolarPo2OrUnknown(input);
  if (result.kind === 'unknown') {
    throw new RangeError(result.reason);
  }
  return result.value;
}

/** `problems` with why `value` is out of range for `name` added, when it is. */
function withProblem(
  problems: string[] | undefined,
  name: keyof typeof PHYSIOLOGY_VALID_RANGES,
  value: number,
): string[] | undefined {
  const problem = describeOutOfRange(name, value, PHYSIOLOGY_VALID_RANGES[name]);
  if (problem === undefined) {
    return problems;
  }
  return problems === undefined ? [problem] : [...problems, problem];
}

/**
 * The same calculation as {@link alveolarPo2MmHg}, returning `unknown` with the reason instead of
 * throwing when an input is out of range or the inputs give an impossible PAO2.
 */
export function alveolarPo2OrUnknown(input: AlveolarGasInput): Outcome<number> {
  const respiratoryQuotient = input.respiratoryQuotient ?? RESPIRATORY_QUOTIENT_DEFAULT;
  const waterVapourMmHg = input.waterVapourMmHg ?? WATER_VAPOUR_PRESSURE_37C_MMHG;
  // Checked one by one, with a list made only when something is out of range.
  let problems = withProblem(undefined, 'fio2Fraction', input.fio2Fraction);
  problems = withProblem(problems, 'barometricPressureMmHg', input.barometricPressureMmHg);
  problems = withProblem(problems, 'paco2MmHg', input.paco2MmHg);
  problems = withProblem(problems, 'respiratoryQuotient', respiratoryQuotient);
  problems = withProblem(problems, 'waterVapourMmHg', waterVapourMmHg);
  if (problems !== undefined) {
    return { kind: 'unknown', reason: problems.join('; ') };
  }
  const inspired = inspiredPo2MmHg(input.fio2Fraction, input.barometricPressureMmHg, waterVapourMmHg);
  const co2Term =
    input.form === 'full'
      ? input.paco2MmHg * (input.fio2Fraction + (1 - input.fio2Fraction) / respiratoryQuotient)
      : input.paco2MmHg / respiratoryQuotient;
  const alveolar = inspired - co2Term;
  const range = PHYSIOLOGY_VALID_RANGES.alveolarPo2MmHg;
  if (alveolar < range.min) {
    return {
      kind: 'unknown',
      reason:
        `alveolar PO2 would be ${alveolar.toFixed(1)} mmHg: ` +
        'these FiO2, pressure and PaCO2 values cannot all be right',
    };
  }
  return { kind: 'ok', value: alveolar };
}
