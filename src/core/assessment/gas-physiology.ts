import {
  aaGradientMmHg,
  alveolarPo2MmHg,
  classifyPfBerlin,
  expectedAaGradientMmHg,
  hypoxaemiaMechanism,
  hypoxaemiaMechanismKind,
  type HypoxaemiaMechanismInput,
  type HypoxaemiaMechanismKind,
  inspiredPo2MmHg,
  mechanismAcrossFio2Range,
  pfRatioMmHg,
} from '../physiology/index.js';
import { RESPIRATORY_QUOTIENT_DEFAULT, WATER_VAPOUR_PRESSURE_37C_MMHG } from '../physiology/constants.js';
import { PHYSIOLOGY_VALID_RANGES, checkPhysiologyInputs } from '../physiology/valid-ranges.js';

/** Keeps a ratio at an end of a wide FiO2 range inside the range the Berlin classifier accepts. */
function withinPfRange(ratio: number): number {
  const { min, max } = PHYSIOLOGY_VALID_RANGES.pfRatioMmHg;
  return Math.min(max, Math.max(min, ratio));
}
import type { Policy } from '../policy.js';
import type { BloodGas, Outcome } from '../types.js';
import { formatFraction, formatMmHg, formatNumber, formatRatio } from './format.js';
import { ratioOverFio2Range } from './oxygenation-ratio.js';
import type { Calculated, Fio2InForce, MechanismHint, PhysiologyResults } from './types.js';

/** Berlin 2012 cut-offs in mmHg; each belongs to the band below it (P/F ≤ 100, ≤ 200, ≤ 300). */
export const BERLIN_CUTOFFS_MMHG = [100, 200, 300] as const;

type GasResults = Pick<
  PhysiologyResults,
  'inspiredPo2' | 'alveolarPo2' | 'aaGradient' | 'expectedAaGradient' | 'pfRatio' | 'mechanism'
>;

type Unknown = { readonly kind: 'unknown'; readonly reason: string; readonly missing?: readonly string[] };

function unknown(reason: string, missing?: readonly string[]): Unknown {
  return missing === undefined ? { kind: 'unknown', reason } : { kind: 'unknown', reason, missing };
}

function allUnknown(none: Unknown): GasResults {
  return {
    inspiredPo2: none,
    alveolarPo2: none,
    aaGradient: none,
    expectedAaGradient: none,
    pfRatio: none,
    mechanism: none,
  };
}

/** How the FiO2 was known, for the substituted line of a computation. */
export function describeFio2Basis(fio2: Fio2InForce): string {
  switch (fio2.basis) {
    case 'recorded-fio2':
      return 'FiO2 as recorded nearest the measurement';
    case 'recorded-flow':
      return fio2.onAir
        ? 'on air, as recorded nearest the measurement'
        : fio2.source === 'set'
          ? 'FiO2 set on the ordered device at the recorded O2 flow'
          : 'FiO2 estimated from the recorded O2 flow on the ordered device';
    case 'order-estimate':
      return fio2.source === 'set'
        ? 'FiO2 set in the order, assuming it was in use at the measurement'
        : 'FiO2 estimated from the order, assuming it was in use at the measurement';
  }
}

/** True when the FiO2 is a range rather than one value at two decimals. */
export function fio2IsUncertain(fio2: Fio2InForce): boolean {
  return formatFraction(fio2.low) !== formatFraction(fio2.high);
}

const mm = (value: number): string => formatNumber(value, 1);

/** " / 0.8": the respiratory quotient as the alveolar working divides by it, written once. */
const DIVIDED_BY_QUOTIENT = ` / ${RESPIRATORY_QUOTIENT_DEFAULT}`;

/**
 * The PaO2-based numbers for the current arterial gas, at the FiO2 in force when it was taken and
 * the site's barometric pressure: inspired PO2, PAO2 (simplified alveolar gas equation, R 0.8,
 * PH2O 47 mmHg), A-a gradient, the age-expected A-a (on air only), P/F with its Berlin class, and the
 * mechanism hint. Each is `unknown` with a reason when an input is missing or out of range.
 */
export function computeGasPhysiology(input: {
  readonly arterialGas: BloodGas | undefined;
  readonly fio2AtGas: Outcome<Fio2InForce>;
  readonly barometricPressureMmHg: number;
  readonly ageYears: number | undefined;
  readonly previous: { readonly fio2Fraction: number; readonly pao2MmHg: number } | undefined;
  readonly policy: Policy;
}): GasResults {
  const { arterialGas: gas, fio2AtGas, barometricPressureMmHg: pb, ageYears } = input;
  const age = ageYears === undefined
    ? unknown('age not known', ['age'])
    : checkPhysiologyInputs({ ageYears });
  const expectedOnAir: Outcome<number> =
    age.kind === 'ok' ? { kind: 'ok', value: expectedAaGradientMmHg(age.value.ageYears) } : age;

  if (gas === undefined) {
    return allUnknown(unknown('no current arterial gas', ['arterial blood gas']));
  }
  if (fio2AtGas.kind === 'unknown') {
    return allUnknown(unknown(`FiO2 at the time of the gas not known: ${fio2AtGas.reason}`, ['FiO2']));
  }
  const fio2 = fio2AtGas.value;
  const basis = describeFio2Basis(fio2);
  const setting = checkPhysiologyInputs({ fio2Fraction: fio2.estimate, barometricPressureMmHg: pb });
  if (setting.kind === 'unknown') {
    return allUnknown(unknown(setting.reason, setting.missing));
  }
  const checked = checkPhysiologyInputs({ paco2MmHg: gas.paco2MmHg, pao2MmHg: gas.pao2MmHg });
  const pio2Value = inspiredPo2MmHg(fio2.estimate, pb, WATER_VAPOUR_PRESSURE_37C_MMHG);
  // The texts the workings share, each formatted once: "0.28 × (760 − 47" and " (FiO2 as recorded …)".
  const fio2Text = formatFraction(fio2.estimate);
  const inspiredText = `${fio2Text} × (${mm(pb)} − ${WATER_VAPOUR_PRESSURE_37C_MMHG}`;
  const basisText = ` (${basis})`;
  const inspiredPo2: Outcome<Calculated<number>> = {
    kind: 'ok',
    value: {
      value: pio2Value,
      computation: {
        name: 'Inspired PO2',
        formula: 'PIO2 = FiO2 × (PB − PH2O)',
        substituted: `${inspiredText})${basisText}`,
        result: formatMmHg(pio2Value),
        sourceKey: 'alveolar-gas',
      },
    },
  };
  if (checked.kind === 'unknown') {
    return {
      ...allUnknown(unknown(`blood gas incomplete: ${checked.reason}`, checked.missing)),
      inspiredPo2,
    };
  }
  const { paco2MmHg, pao2MmHg } = checked.value;
  const pao2Alveolar = alveolarPo2MmHg({
    fio2Fraction: fio2.estimate,
    barometricPressureMmHg: pb,
    paco2MmHg,
    respiratoryQuotient: RESPIRATORY_QUOTIENT_DEFAULT,
    form: 'simplified',
  });
  const gradient = aaGradientMmHg(pao2Alveolar, pao2MmHg);
  const pao2Text = mm(pao2MmHg);
  const alveolarAt = (fraction: number): number =>
    alveolarPo2MmHg({
      fio2Fraction: fraction,
      barometricPressureMmHg: pb,
      paco2MmHg,
      respiratoryQuotient: RESPIRATORY_QUOTIENT_DEFAULT,
      form: 'simplified',
    });
  const uncertain = fio2IsUncertain(fio2);
  // PAO2 and the A-a gradient rise with FiO2, so the ends of the FiO2 range give the ends of theirs.
  // Each worked out once: the ranges and the mechanism at each end of the FiO2 range read them all.
  const alveolarLow = uncertain ? alveolarAt(fio2.low) : pao2Alveolar;
  const alveolarHigh = uncertain ? alveolarAt(fio2.high) : pao2Alveolar;
  const alveolarRange = uncertain ? { range: { low: alveolarLow, high: alveolarHigh } } : {};
  const gradientRange = uncertain
    ? { range: { low: alveolarLow - pao2MmHg, high: alveolarHigh - pao2MmHg } }
    : {};
  const pf = ratioOverFio2Range({
    numerator: pao2MmHg,
    fio2,
    compute: pfRatioMmHg,
    classify: (ratio) => classifyPfBerlin(withinPfRange(ratio)),
    cutoffsLowerInclusive: BERLIN_CUTOFFS_MMHG,
  });
  const expectedAaGradient: Outcome<Calculated<number>> = !fio2.onAir
    ? unknown('the age-expected A-a gradient applies on air only')
    : expectedOnAir.kind === 'ok'
      ? {
          kind: 'ok',
          value: {
            value: expectedOnAir.value,
            computation: {
              name: 'Expected A-a gradient for age (on air)',
              formula: 'expected A-a = age / 4 + 4',
              substituted: `${formatNumber(ageYears ?? 0, 0)} / 4 + 4`,
              result: formatMmHg(expectedOnAir.value),
              sourceKey: 'aa-gradient-age',
            },
          },
        }
      : expectedOnAir;
  const mechanismInput = (
    expected: number,
    fraction: number,
    inspired: number,
    alveolar: number,
  ): HypoxaemiaMechanismInput => ({
    inspiredPo2MmHg: inspired,
    aaGradientMmHg: alveolar - pao2MmHg,
    expectedAaGradientMmHg: expected,
    paco2MmHg,
    hypercapniaPaco2MmHg: input.policy.hypercapnicRisk.hypercapniaPaco2.mmHg,
    fio2Fraction: fraction,
    pao2MmHg,
    ...(input.previous === undefined ? {} : { previous: input.previous }),
  });
  // At the ends of the FiO2 range only whether the kind agrees is read, so no explanation is written.
  const kindAt = (expected: number, fraction: number, alveolar: number): Outcome<{ readonly kind: HypoxaemiaMechanismKind }> =>
    hypoxaemiaMechanismKind(
      mechanismInput(expected, fraction, inspiredPo2MmHg(fraction, pb, WATER_VAPOUR_PRESSURE_37C_MMHG), alveolar),
    );
  const atEstimate: Outcome<MechanismHint> =
    expectedOnAir.kind === 'ok'
      ? hypoxaemiaMechanism(mechanismInput(expectedOnAir.value, fio2.estimate, pio2Value, pao2Alveolar))
      : unknown(`mechanism needs the age-expected A-a gradient: ${expectedOnAir.reason}`, expectedOnAir.missing);
  // A mechanism is stated only when it holds at both ends of the FiO2 range as well as at the estimate.
  const mechanism: Outcome<MechanismHint> =
    uncertain && expectedOnAir.kind === 'ok' && atEstimate.kind === 'ok'
      ? mechanismAcrossFio2Range({
          atLow: kindAt(expectedOnAir.value, fio2.low, alveolarLow),
          atEstimate,
          atHigh: kindAt(expectedOnAir.value, fio2.high, alveolarHigh),
          fio2Low: fio2.low,
          fio2High: fio2.high,
        })
      : atEstimate;
  return {
    inspiredPo2,
    alveolarPo2: {
      kind: 'ok',
      value: {
        value: pao2Alveolar,
        computation: {
          name: 'Alveolar PO2 (alveolar gas equation)',
          formula: 'PAO2 = FiO2 × (PB − PH2O) − PaCO2 / R',
          substituted: `${inspiredText}) − ${mm(paco2MmHg)}${DIVIDED_BY_QUOTIENT}${basisText}`,
          result: formatMmHg(pao2Alveolar),
          sourceKey: 'alveolar-gas',
        },
        ...alveolarRange,
      },
    },
    aaGradient: {
      kind: 'ok',
      value: {
        value: gradient,
        computation: {
          name: 'A-a gradient',
          formula: 'A-a = PAO2 − PaO2',
          substituted: `${mm(pao2Alveolar)} − ${pao2Text}`,
          result: formatMmHg(gradient),
          sourceKey: 'alveolar-gas',
        },
        ...gradientRange,
      },
    },
    expectedAaGradient,
    pfRatio: {
      kind: 'ok',
      value: {
        value: { ratio: pf.ratio, low: pf.low, high: pf.high, spannedCutoffs: pf.spannedCutoffs, fio2, berlin: pf.band },
        computation: {
          name: 'P/F ratio',
          formula: 'P/F = PaO2 / FiO2',
          substituted: `${pao2Text} / ${fio2Text}${basisText}`,
          result: `${formatRatio(pf, BERLIN_CUTOFFS_MMHG)} mmHg`,
          sourceKey: 'berlin-2012',
        },
      },
    },
    mechanism,
  };
}
