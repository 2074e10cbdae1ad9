import {
  BICARBONATE_CONSISTENCY_TOLERANCE_MMOL_PER_L,
  bicarbonateFromPhAndPaco2MmolPerL,
  checkPhysiologyInputs,
} from '../core/physiology/index.js';
import type { BloodGas, SetAsideNote } from '../core/types.js';
import { convertUnit, normaliseUnit } from '../units/convert.js';

/**
 * Checks that a blood gas sample's pressures can be trusted (common practice). The usual error is a
 * PCO2 sent in kPa but labelled mmHg (6.9 kPa read as 6.9 mmHg): used as it stands, a hypercapnic
 * gas looks normal and re-targets a CO2 retainer to the standard range (BTS 2017 Tables 2–4). The
 * sample's PCO2 and PO2, which share the unit, are set aside with a note (pH and HCO3 stay) when:
 * - the PCO2 is below {@link KPA_LIKE_PCO2_BELOW_MMHG}: exceptional in hospital patients (climbers
 *   near the Everest summit reach about 7.5 mmHg, West 1983) and what a kPa value looks like; or
 * - pH, PCO2 and HCO3 disagree: analysers calculate HCO3 from pH and PCO2 (Henderson–Hasselbalch),
 *   so a reported HCO3 more than {@link BICARBONATE_CONSISTENCY_TOLERANCE_MMOL_PER_L} from the
 *   calculated one means a value in the wrong unit or a wrong value.
 * The reader never guesses the right unit: the note only says when the other unit would agree.
 */

/** A PCO2 below this (1.3 kPa) is read as a probable unit error, not a value to act on. */
export const KPA_LIKE_PCO2_BELOW_MMHG = 10;

/** The sample with its pressures set aside when they cannot be trusted, and the note saying why. */
export interface ConsistencyCheck {
  readonly gas: BloodGas;
  readonly note: SetAsideNote | undefined;
}

/** HCO3 calculated from pH and a PCO2 in mmHg, or undefined outside the formula's ranges. */
function calculatedHco3(ph: number, paco2MmHg: number): number | undefined {
  const checked = checkPhysiologyInputs({ ph, paco2MmHg });
  return checked.kind === 'ok'
    ? bicarbonateFromPhAndPaco2MmolPerL(checked.value.ph, checked.value.paco2MmHg)
    : undefined;
}

function agrees(reportedHco3: number, calculated: number | undefined): boolean {
  return (
    calculated !== undefined &&
    Math.abs(reportedHco3 - calculated) <= BICARBONATE_CONSISTENCY_TOLERANCE_MMOL_PER_L
  );
}

/** The PCO2 in mmHg if its reported number were in the other pressure unit (kPa ↔ mmHg). */
function inOtherUnit(reported: { readonly value: number; readonly unit: string }):
  | { readonly mmHg: number; readonly unit: 'kPa' | 'mmHg' }
  | undefined {
  const unit = normaliseUnit(reported.unit);
  const other = unit === 'kPa' ? 'mm[Hg]' : unit === 'mm[Hg]' ? 'kPa' : undefined;
  if (other === undefined) {
    return undefined;
  }
  const converted = convertUnit(reported.value, other, 'mm[Hg]');
  return converted.kind === 'ok' ? { mmHg: converted.value, unit: other === 'kPa' ? 'kPa' : 'mmHg' } : undefined;
}

/** Why the pressures cannot be trusted, or undefined when they can. */
function problemWith(gas: BloodGas, reported: { readonly value: number; readonly unit: string }): string | undefined {
  const { ph, paco2MmHg, hco3MmolPerL } = gas;
  if (paco2MmHg === undefined) {
    return undefined;
  }
  const other = inOtherUnit(reported);
  const shown = `${reported.value} ${normaliseUnit(reported.unit) === 'mm[Hg]' ? 'mmHg' : reported.unit}`;
  if (paco2MmHg < KPA_LIKE_PCO2_BELOW_MMHG) {
    const looksLikeKpa = other?.unit === 'kPa' ? ', as a kPa value labelled mmHg would' : '';
    return `PCO2 ${shown} is below ${KPA_LIKE_PCO2_BELOW_MMHG} mmHg${looksLikeKpa}`;
  }
  if (ph === undefined || hco3MmolPerL === undefined) {
    return undefined;
  }
  const calculated = calculatedHco3(ph, paco2MmHg);
  if (calculated === undefined || agrees(hco3MmolPerL, calculated)) {
    return undefined;
  }
  const otherAgrees = other !== undefined && agrees(hco3MmolPerL, calculatedHco3(ph, other.mmHg));
  return (
    `PCO2 ${shown} does not agree with pH ${ph.toFixed(2)} and HCO3 ${hco3MmolPerL} mmol/L ` +
    `(HCO3 calculated from them: ${calculated.toFixed(1)} mmol/L)` +
    (otherAgrees ? `; it would agree in ${other.unit}, so the unit may be mislabelled` : '')
  );
}

export function checkGasConsistency(gas: BloodGas, reference: string | undefined): ConsistencyCheck {
  const reported = gas.reported['paco2'] ?? { value: gas.paco2MmHg ?? 0, unit: 'mm[Hg]' };
  const problem = problemWith(gas, reported);
  if (problem === undefined) {
    return { gas, note: undefined };
  }
  const { paco2: _pco2, pao2: _po2, ...kept } = gas.reported;
  return {
    gas: { ...gas, paco2MmHg: undefined, pao2MmHg: undefined, reported: kept },
    note: {
      what: 'Blood gas pressures',
      reason: 'implausible',
      detail: `${problem}. The PCO2 and PO2 of this sample were not used.`,
      reference,
    },
  };
}
