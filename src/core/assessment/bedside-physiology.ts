import {
  RICE_SF_CUTOFFS,
  classifySfRice,
  interpretBloodGas,
  interpretRox,
  oxygenContentMlPerDl,
  po2FromSaturationMmHg,
  roxIndex,
  saturationFromPo2,
  sfRatio,
} from '../physiology/index.js';
import {
  HUFNER_CLINICAL_ML_PER_G,
  OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG,
} from '../physiology/constants.js';
import { checkPhysiologyInputs, PHYSIOLOGY_VALID_RANGES } from '../physiology/valid-ranges.js';
import type { Policy } from '../policy.js';
import type { BloodGas, Measured, Outcome } from '../types.js';
import { formatFraction, formatNumber, formatRatio } from './format.js';
import { describeFio2Basis } from './gas-physiology.js';
import { ratioOverFio2Range } from './oxygenation-ratio.js';

/** Rice 2007 published S/F cut-offs; each belongs to the band below it, as classifySfRice places it. */
export const RICE_CUTOFFS: readonly number[] = [RICE_SF_CUTOFFS.pf200, RICE_SF_CUTOFFS.pf300];
import type { Fio2InForce, PhysiologyResults } from './types.js';

/** S/F from the current SpO2 and the FiO2 in force when it was read (Rice 2007; not above 97 %). */
export function computeSfRatio(
  spo2: Measured | undefined,
  fio2AtSpo2: Outcome<Fio2InForce>,
): PhysiologyResults['sfRatio'] {
  if (spo2 === undefined) {
    return { kind: 'unknown', reason: 'no current SpO2', missing: ['SpO2'] };
  }
  if (fio2AtSpo2.kind === 'unknown') {
    return { kind: 'unknown', reason: `FiO2 not known: ${fio2AtSpo2.reason}`, missing: ['FiO2'] };
  }
  const checked = checkPhysiologyInputs({
    spo2Percent: spo2.value,
    fio2Fraction: fio2AtSpo2.value.estimate,
  });
  if (checked.kind === 'unknown') {
    return checked;
  }
  const ratio = sfRatio(checked.value.spo2Percent, checked.value.fio2Fraction);
  if (ratio.kind === 'unknown') {
    return ratio;
  }
  const fio2 = fio2AtSpo2.value;
  const { min, max } = PHYSIOLOGY_VALID_RANGES.sfRatio;
  const sf = ratioOverFio2Range({
    numerator: spo2.value,
    fio2,
    compute: (sat, fraction) => sat / fraction,
    // An end of a wide FiO2 range may fall outside what the classifier accepts; the band is judged there.
    classify: (value) => classifySfRice(Math.min(max, Math.max(min, value))),
    cutoffsLowerInclusive: RICE_CUTOFFS,
  });
  return {
    kind: 'ok',
    value: {
      value: { ratio: ratio.value, low: sf.low, high: sf.high, spannedCutoffs: sf.spannedCutoffs, fio2, rice: sf.band },
      computation: {
        name: 'S/F ratio',
        formula: 'S/F = SpO2 (%) / FiO2',
        substituted:
          `${formatNumber(spo2.value, 1)} / ${formatFraction(fio2.estimate)} ` +
          `(${describeFio2Basis(fio2)})`,
        result: formatRatio(sf, RICE_CUTOFFS),
        sourceKey: 'rice-2007',
      },
    },
  };
}

/**
 * ROX index while on high-flow nasal cannula (Roca 2019), interpreted at the hours on high flow when
 * known (from the earliest high-flow order's authoredOn); `onHighFlow` is decided by the caller.
 */
export function computeRox(input: {
  readonly onHighFlow: boolean;
  readonly hoursOnHighFlow: number | undefined;
  readonly spo2: Measured | undefined;
  readonly respRate: Measured | undefined;
  readonly fio2AtSpo2: Outcome<Fio2InForce>;
}): PhysiologyResults['rox'] {
  if (!input.onHighFlow) {
    return { kind: 'unknown', reason: 'ROX applies to high-flow nasal cannula only' };
  }
  if (input.fio2AtSpo2.kind === 'unknown') {
    return { kind: 'unknown', reason: `FiO2 not known: ${input.fio2AtSpo2.reason}`, missing: ['FiO2'] };
  }
  const checked = checkPhysiologyInputs({
    spo2Percent: input.spo2?.value,
    respRatePerMin: input.respRate?.value,
    fio2Fraction: input.fio2AtSpo2.value.estimate,
  });
  if (checked.kind === 'unknown') {
    return checked;
  }
  const { spo2Percent, respRatePerMin, fio2Fraction } = checked.value;
  const index = roxIndex(spo2Percent, fio2Fraction, respRatePerMin);
  const indexInRange = checkPhysiologyInputs({ roxIndex: index });
  if (indexInRange.kind === 'unknown') {
    return indexInRange;
  }
  // Beyond the longest time the interpretation accepts, the 12-h threshold it carries forward applies.
  const hours =
    input.hoursOnHighFlow === undefined
      ? undefined
      : Math.min(input.hoursOnHighFlow, PHYSIOLOGY_VALID_RANGES.hoursOnHighFlow.max);
  return {
    kind: 'ok',
    value: {
      value: {
        index,
        hoursOnHighFlow: hours,
        interpretation: hours === undefined ? 'indeterminate' : interpretRox(index, hours),
      },
      computation: {
        name: 'ROX index',
        formula: 'ROX = (SpO2 / FiO2) / respiratory rate',
        substituted:
          `(${formatNumber(spo2Percent, 1)} / ${formatFraction(fio2Fraction)}) / ` +
          `${formatNumber(respRatePerMin, 0)} (${describeFio2Basis(input.fio2AtSpo2.value)})`,
        result: formatNumber(index, 2),
        sourceKey: 'roca-2019',
      },
    },
  };
}

/**
 * Arterial oxygen content (1.34 × Hb × SaO2 + 0.003 × PaO2). SaO2 is the current SpO2, else derived
 * from PaO2 (Severinghaus 1979); PaO2 is the arterial value, else derived from SpO2 (Ellis 1989).
 */
export function computeOxygenContent(input: {
  readonly haemoglobin: Measured | undefined;
  readonly spo2: Measured | undefined;
  readonly arterialGas: BloodGas | undefined;
}): PhysiologyResults['oxygenContent'] {
  if (input.haemoglobin === undefined) {
    return { kind: 'unknown', reason: 'no recent haemoglobin', missing: ['haemoglobin'] };
  }
  const checked = checkPhysiologyInputs({ haemoglobinGPerDL: input.haemoglobin.value });
  if (checked.kind === 'unknown') {
    return checked;
  }
  const hb = checked.value.haemoglobinGPerDL;
  const spo2Percent = input.spo2?.value;
  const pao2 = input.arterialGas?.pao2MmHg;
  if (spo2Percent === undefined && pao2 === undefined) {
    return { kind: 'unknown', reason: 'needs an SpO2 or an arterial PaO2', missing: ['SpO2', 'PaO2'] };
  }
  const ranges = [
    spo2Percent === undefined ? undefined : checkPhysiologyInputs({ spo2Percent }),
    pao2 === undefined ? undefined : checkPhysiologyInputs({ pao2MmHg: pao2 }),
  ].find((o) => o?.kind === 'unknown');
  if (ranges?.kind === 'unknown') {
    return ranges;
  }
  // The Ellis inversion has no finite answer at 100 %: without a PaO2 the dissolved term is unknown.
  if (pao2 === undefined && spo2Percent !== undefined && spo2Percent >= 100) {
    return { kind: 'unknown', reason: 'PaO2 cannot be derived from an SpO2 of 100 %', missing: ['PaO2'] };
  }
  const saFraction = spo2Percent !== undefined ? spo2Percent / 100 : saturationFromPo2(pao2 ?? 0);
  const po2MmHg = pao2 ?? po2FromSaturationMmHg(saFraction);
  const content = oxygenContentMlPerDl(hb, saFraction, po2MmHg);
  const saNote = spo2Percent !== undefined ? 'SpO2 used for SaO2' : 'SaO2 from PaO2 (Severinghaus 1979)';
  const poNote = pao2 !== undefined ? 'arterial PaO2' : 'PaO2 from SpO2 (Ellis 1989)';
  return {
    kind: 'ok',
    value: {
      value: content,
      computation: {
        name: 'Arterial oxygen content',
        formula: `CaO2 = ${HUFNER_CLINICAL_ML_PER_G} × Hb × SaO2 + ${OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG} × PaO2`,
        substituted:
          `${HUFNER_CLINICAL_ML_PER_G} × ${formatNumber(hb, 1)} × ${saFraction.toFixed(2)} + ` +
          `${OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG} × ${formatNumber(po2MmHg, 1)} (${saNote}; ${poNote})`,
        result: `${formatNumber(content, 1)} mL/dL`,
        sourceKey: 'oxygen-content',
      },
    },
  };
}

/** Acid-base reading of the current gas (any specimen) against the policy limits. */
export function computeGasInterpretation(
  gas: BloodGas | undefined,
  policy: Policy,
): PhysiologyResults['gasInterpretation'] {
  if (gas === undefined) {
    return { kind: 'unknown', reason: 'no current blood gas', missing: ['blood gas'] };
  }
  return interpretBloodGas(
    {
      ...(gas.ph === undefined ? {} : { ph: gas.ph }),
      ...(gas.paco2MmHg === undefined ? {} : { paco2MmHg: gas.paco2MmHg }),
      ...(gas.hco3MmolPerL === undefined ? {} : { hco3MmolPerL: gas.hco3MmolPerL }),
    },
    {
      acidosisPhBelow: policy.thresholds.acidosisPhBelow,
      hypercapniaPaco2MmHg: policy.hypercapnicRisk.hypercapniaPaco2.mmHg,
      chronicBicarbonateAboveMmolPerL: policy.hypercapnicRisk.chronicBicarbonateAboveMmolPerL,
    },
  );
}
