import { formatFraction } from '../assessment/format.js';
import type { Outcome } from '../types.js';
import {
  ROOM_AIR_FIO2,
  STANDARD_SEA_LEVEL_PRESSURE_MMHG,
  WATER_VAPOUR_PRESSURE_37C_MMHG,
} from './constants.js';
import { checkPhysiologyInputs, roundForThreshold } from './valid-ranges.js';

export interface HypoxaemiaMechanismInput {
  readonly inspiredPo2MmHg: number;
  readonly aaGradientMmHg: number;
  /** The room-air norm for age (e.g. `expectedAaGradientMmHg`). */
  readonly expectedAaGradientMmHg: number;
  readonly paco2MmHg: number;
  readonly hypercapniaPaco2MmHg: number;
  readonly fio2Fraction: number;
  readonly pao2MmHg: number;
  /** An earlier gas on a lower FiO2, to judge the response to oxygen (same patient, same PaCO2). */
  readonly previous?: { readonly fio2Fraction: number; readonly pao2MmHg: number };
}

export type HypoxaemiaMechanismKind =
  | 'low-inspired-po2'
  | 'hypoventilation'
  | 'vq-mismatch-shunt-or-diffusion'
  | 'shunt-likely'
  | 'hypoventilation-plus-gradient'
  | 'none'
  | 'not-determined';

export interface HypoxaemiaMechanism {
  readonly kind: HypoxaemiaMechanismKind;
  readonly explanation: string;
}

/** Inspired PO2 of room air at sea level: 0.21 × (760 − 47) = 149.7 mmHg. */
export const SEA_LEVEL_AIR_INSPIRED_PO2_MMHG =
  ROOM_AIR_FIO2 * (STANDARD_SEA_LEVEL_PRESSURE_MMHG - WATER_VAPOUR_PRESSURE_37C_MMHG);

/**
 * Inspired PO2 counts as low below 90 % of the sea-level air value (134.8 mmHg; reached on air
 * above about 820 m in the ISA). Our own threshold, chosen so that ordinary lowland sites never
 * trigger it.
 */
export const LOW_INSPIRED_PO2_BELOW_MMHG = 0.9 * SEA_LEVEL_AIR_INSPIRED_PO2_MMHG;

/** FiO2 up to this counts as room air (0.21 with rounding); above it the age norm does not apply. */
export const ROOM_AIR_FIO2_AT_MOST = 0.22;

/**
 * On oxygen the normal A-a gradient widens by about 5–7 mmHg for each 0.10 rise in FiO2 (from
 * memory). The upper figure is used so that a gradient is called raised only when clearly so.
 */
export const AA_ALLOWANCE_MMHG_PER_TENTH_FIO2 = 7;

/**
 * Shunt heuristic (common practice, our criterion): with true shunt, extra oxygen barely reaches
 * the blood, so PaO2 rises by less than 20 % of the rise in alveolar PO2. On the iso-shunt diagram
 * that corresponds roughly to a shunt of a quarter or more (from memory). Judged only when FiO2
 * rose by at least 0.10, since smaller changes are within the error of FiO2 estimates.
 */
export const SHUNT_PAO2_RISE_FRACTION_BELOW = 0.2;
export const SHUNT_MIN_FIO2_RISE = 0.1;

/** A gradient below this is not measurement error: the FiO2, PaCO2 or sample must be wrong. */
const IMPOSSIBLE_GRADIENT_BELOW_MMHG = -10;

/**
 * A hint at why oxygenation is impaired, from the classic causes of hypoxaemia:
 * - raised A-a gradient with poor PaO2 response to more oxygen → 'shunt-likely';
 * - raised gradient and PaCO2 at or above the hypercapnia threshold → 'hypoventilation-plus-gradient';
 * - raised gradient → 'vq-mismatch-shunt-or-diffusion';
 * - PaCO2 raised, gradient normal → 'hypoventilation';
 * - inspired PO2 low (e.g. altitude), gradient and PaCO2 normal → 'low-inspired-po2';
 * - otherwise 'none'.
 *
 * The age norm applies on room air only. On oxygen the gradient is compared with the norm widened
 * by 7 mmHg per 0.10 FiO2 above air, and the explanation says the comparison is less reliable (it
 * also depends on the FiO2 being right, which for variable-performance devices is an estimate).
 * Unknown for missing or out-of-range inputs, or a gradient below −10 mmHg. A hint for the
 * clinician, not a diagnosis.
 */
export function hypoxaemiaMechanism(
  input: HypoxaemiaMechanismInput,
): Outcome<HypoxaemiaMechanism> {
  const judged = judgeMechanism(input);
  if (judged.kind === 'unknown') {
    return judged;
  }
  const j = judged.value;
  const { aaGradientMmHg: gradient, fio2Fraction: fio2, paco2MmHg: paco2 } = input;
  const [gradientShown, allowanceShown] = comparedPair(gradient, j.allowance);
  const gradientWords = j.onAir
    ? `A-a gradient ${gradientShown} mmHg against ${allowanceShown} mmHg expected for age on air`
    : `A-a gradient ${gradientShown} mmHg against ${allowanceShown} mmHg allowed on FiO2 ` +
      `${formatFraction(fio2)} (the age norm applies on air only, so this comparison is less reliable)`;
  const paco2Words = `PaCO2 ${whole(paco2)} mmHg`;
  const inspired = input.inspiredPo2MmHg;
  const alsoInspired = j.lowInspired ? ` Low inspired PO2 (${fmt(inspired)} mmHg) also contributes.` : '';
  const gasExchange = 'V/Q mismatch, shunt or diffusion limitation';

  switch (j.kind) {
    case 'shunt-likely':
      return ok('shunt-likely', `${gradientWords}. ${shuntWords(input, j.shunt)}${alsoInspired}`);
    case 'hypoventilation-plus-gradient': {
      const words = `${paco2Words} (raised: CO2 not cleared) and ${gradientWords}: reduced alveolar ventilation plus`;
      return ok('hypoventilation-plus-gradient', `${words} ${gasExchange}.${alsoInspired}`);
    }
    case 'vq-mismatch-shunt-or-diffusion':
      return ok('vq-mismatch-shunt-or-diffusion', `${gradientWords}: ${gasExchange}.${alsoInspired}`);
    case 'hypoventilation': {
      const words = `${paco2Words} with ${gradientWords}: reduced alveolar ventilation (CO2 not cleared) explains the low PaO2.`;
      return ok('hypoventilation', `${words}${alsoInspired}`);
    }
    case 'low-inspired-po2': {
      const words = `Inspired PO2 ${fmt(inspired)} mmHg is low (e.g. altitude), with ${gradientWords}`;
      return ok('low-inspired-po2', `${words} and ${paco2Words}: the inspired gas explains the PaO2.`);
    }
    case 'none': {
      const words = `${gradientWords}, ${paco2Words} and inspired PO2 ${fmt(inspired)} mmHg`;
      return ok('none', `${words}: no mechanism of hypoxaemia found.`);
    }
  }
}

/**
 * The kind {@link hypoxaemiaMechanism} finds, without its explanation: for the ends of an FiO2 range,
 * where only whether the kind agrees with the estimate's is read (mechanismAcrossFio2Range).
 */
export function hypoxaemiaMechanismKind(
  input: HypoxaemiaMechanismInput,
): Outcome<{ readonly kind: HypoxaemiaMechanismKind }> {
  const judged = judgeMechanism(input);
  return judged.kind === 'unknown' ? judged : { kind: 'ok', value: { kind: judged.value.kind } };
}

/** The earlier FiO2 and the PaO2 and alveolar PO2 rises, when they meet the shunt heuristic. */
interface ShuntRise {
  readonly previousFio2Fraction: number;
  readonly alveolarRise: number;
  readonly arterialRise: number;
}

/** What the mechanism was judged on, shared by the kind and its explanation so they cannot disagree. */
type Judgement = {
  readonly onAir: boolean;
  readonly allowance: number;
  readonly lowInspired: boolean;
} & (
  | { readonly kind: 'shunt-likely'; readonly shunt: ShuntRise }
  | { readonly kind: Exclude<HypoxaemiaMechanismKind, 'not-determined' | 'shunt-likely'> }
);

/** The checks and comparisons behind the mechanism: unknown with the reason, or what was found. */
function judgeMechanism(input: HypoxaemiaMechanismInput): Outcome<Judgement> {
  const checked = checkPhysiologyInputs({
    inspiredPo2MmHg: input.inspiredPo2MmHg,
    aaGradientMmHg: input.aaGradientMmHg,
    expectedAaGradientMmHg: input.expectedAaGradientMmHg,
    paco2MmHg: input.paco2MmHg,
    hypercapniaPaco2MmHg: input.hypercapniaPaco2MmHg,
    fio2Fraction: input.fio2Fraction,
    pao2MmHg: input.pao2MmHg,
  });
  if (checked.kind === 'unknown') {
    return checked;
  }
  if (input.previous !== undefined) {
    const previous = checkPhysiologyInputs(input.previous);
    if (previous.kind === 'unknown') {
      return { kind: 'unknown', reason: `previous gas: ${previous.reason}` };
    }
  }
  const { aaGradientMmHg: gradient, fio2Fraction: fio2, paco2MmHg: paco2 } = input;
  if (gradient < IMPOSSIBLE_GRADIENT_BELOW_MMHG) {
    return {
      kind: 'unknown',
      reason: `A-a gradient ${fmt(gradient)} mmHg is impossible: check the FiO2, PaCO2 and sample`,
    };
  }

  const onAir = fio2 <= ROOM_AIR_FIO2_AT_MOST;
  const oxygenAllowance = (AA_ALLOWANCE_MMHG_PER_TENTH_FIO2 * (fio2 - ROOM_AIR_FIO2)) / 0.1;
  const allowance = input.expectedAaGradientMmHg + (onAir ? 0 : oxygenAllowance);
  const gradientRaised = gradient > allowance;
  const hypoventilation = paco2 >= input.hypercapniaPaco2MmHg;
  const lowInspired = input.inspiredPo2MmHg < LOW_INSPIRED_PO2_BELOW_MMHG;
  const shunt = gradientRaised ? shuntRise(input) : undefined;
  if (shunt !== undefined) {
    return { kind: 'ok', value: { kind: 'shunt-likely', shunt, onAir, allowance, lowInspired } };
  }
  const kind = gradientRaised
    ? hypoventilation
      ? 'hypoventilation-plus-gradient'
      : 'vq-mismatch-shunt-or-diffusion'
    : hypoventilation
      ? 'hypoventilation'
      : lowInspired
        ? 'low-inspired-po2'
        : 'none';
  return { kind: 'ok', value: { kind, onAir, allowance, lowInspired } };
}

/** The rises when the response to a rise in FiO2 meets the shunt heuristic, else undefined. */
function shuntRise(input: HypoxaemiaMechanismInput): ShuntRise | undefined {
  const previous = input.previous;
  // Rounded so that 0.60 − 0.50 (0.09999999999999998 in floating point) counts as a rise of 0.10.
  const fio2Rise =
    previous === undefined ? 0 : roundForThreshold(input.fio2Fraction - previous.fio2Fraction);
  if (previous === undefined || fio2Rise < SHUNT_MIN_FIO2_RISE) {
    return undefined;
  }
  // PB − PH2O from the current inspired PO2; PaCO2 is taken as unchanged, so PAO2 moves with PIO2.
  const dryPressureMmHg = input.inspiredPo2MmHg / input.fio2Fraction;
  const alveolarRise = fio2Rise * dryPressureMmHg;
  const arterialRise = input.pao2MmHg - previous.pao2MmHg;
  if (arterialRise >= SHUNT_PAO2_RISE_FRACTION_BELOW * alveolarRise) {
    return undefined;
  }
  return { previousFio2Fraction: previous.fio2Fraction, alveolarRise, arterialRise };
}

/** The shunt sentence for rises that met the heuristic. */
function shuntWords(input: HypoxaemiaMechanismInput, rise: ShuntRise): string {
  const { previousFio2Fraction, alveolarRise, arterialRise } = rise;
  return (
    `FiO2 rose from ${formatFraction(previousFio2Fraction)} to ${formatFraction(input.fio2Fraction)} ` +
    `but PaO2 changed by ${whole(arterialRise)} mmHg, under 20 % of the ${whole(alveolarRise)} mmHg ` +
    'rise in alveolar PO2: a shunt is likely (a heuristic, common practice).'
  );
}

const KIND_WORDS: Readonly<Record<HypoxaemiaMechanismKind, string>> = {
  'low-inspired-po2': 'low inspired PO2',
  hypoventilation: 'reduced alveolar ventilation',
  'vq-mismatch-shunt-or-diffusion': 'V/Q mismatch, shunt or diffusion limitation',
  'shunt-likely': 'likely shunt',
  'hypoventilation-plus-gradient': 'reduced alveolar ventilation plus V/Q mismatch, shunt or diffusion limitation',
  none: 'no mechanism of hypoxaemia',
  'not-determined': 'no mechanism stated',
};

/**
 * The mechanism when the FiO2 is only known as a range (a variable-performance device): the hint
 * worked out at both ends of the range and at the estimate. Stated only when all three agree; when
 * they differ the margin is smaller than the FiO2's uncertainty, and the answer is 'not-determined'
 * with both readings named, never one of them as fact.
 */
export function mechanismAcrossFio2Range(input: {
  readonly atLow: Outcome<{ readonly kind: HypoxaemiaMechanismKind }>;
  readonly atEstimate: Outcome<HypoxaemiaMechanism>;
  readonly atHigh: Outcome<{ readonly kind: HypoxaemiaMechanismKind }>;
  readonly fio2Low: number;
  readonly fio2High: number;
}): Outcome<HypoxaemiaMechanism> {
  const { atLow, atEstimate, atHigh } = input;
  if (atEstimate.kind === 'unknown') {
    return atEstimate;
  }
  const range = `${formatFraction(input.fio2Low)}–${formatFraction(input.fio2High)}`;
  if (atLow.kind === 'unknown' || atHigh.kind === 'unknown') {
    const reason = atLow.kind === 'unknown' ? atLow.reason : atHigh.kind === 'unknown' ? atHigh.reason : '';
    return ok(
      'not-determined',
      `The FiO2 is only known as ${range}, and at one end of that range the gas cannot be read (${reason}): ` +
        'no mechanism is stated.',
    );
  }
  if (atLow.value.kind === atEstimate.value.kind && atHigh.value.kind === atEstimate.value.kind) {
    return ok(
      atEstimate.value.kind,
      `${atEstimate.value.explanation} Holds across FiO2 ${range}.`,
    );
  }
  return ok(
    'not-determined',
    `The FiO2 is only known as ${range}: at ${formatFraction(input.fio2Low)} the gas reads as ` +
      `${KIND_WORDS[atLow.value.kind]}, at ${formatFraction(input.fio2High)} as ${KIND_WORDS[atHigh.value.kind]}. ` +
      'The margin is smaller than the FiO2 uncertainty, so no mechanism is stated; a gas taken on a known ' +
      'FiO2 (recorded, or a fixed-performance device) would settle it.',
  );
}

function ok(kind: HypoxaemiaMechanismKind, explanation: string): Outcome<HypoxaemiaMechanism> {
  return { kind: 'ok', value: { kind, explanation } };
}

/** Whole mmHg, as pressures are read at the bedside. */
function whole(value: number): string {
  return String(Math.round(value));
}

/**
 * The gradient and the figure it is compared with, in whole mmHg unless rounding would make them
 * equal or swap their order; then one decimal, so the words never contradict the comparison.
 */
function comparedPair(gradient: number, allowance: number): readonly [string, string] {
  const g = Math.round(gradient);
  const a = Math.round(allowance);
  return g === a || g > a !== gradient > allowance ? [fmt(gradient), fmt(allowance)] : [String(g), String(a)];
}

/** One decimal, for figures compared with a threshold that has one (inspired PO2 134.8 mmHg). */
function fmt(value: number): string {
  return String(Number(value.toFixed(1)));
}
