import {
  bicarbonateFromPhAndPaco2MmolPerL,
  COMPENSATION_ALLOWANCE_MMOL_PER_L,
  describeOutOfRange,
  expectedBicarbonateMmolPerL,
  PHYSIOLOGY_VALID_RANGES,
} from '../physiology/index.js';
import type { Policy } from '../policy.js';
import type { BloodGas } from '../types.js';
import { formatGasValue, formatNumber } from './format.js';
import type { CompensationReading, HypercapniaClassification, RiskReason } from './types.js';

/**
 * Upper edge of the normal base excess, mmol/L (RCEM Learning: −2 to +2). A higher base excess on a
 * hypercapnic gas is a metabolic rise the acute CO2 change does not explain.
 */
export const BASE_EXCESS_UPPER_NORMAL_MMOL_PER_L = 2;

function signed(value: number): string {
  return `${value > 0 ? '+' : ''}${formatNumber(value, 1)}`;
}

/**
 * The metabolic side of a hypercapnic gas: the reported HCO3, else the base excess, else the HCO3
 * calculated from pH and PCO2 (Henderson–Hasselbalch). HCO3 counts as raised above the acute rise
 * (24 + 1 per 10 mmHg above 40, plus 2 mmol/L; physiology teaching as quoted secondarily, check-values
 * §3g). The policy's fixed marker (> 28 mmol/L) is not used here: at a high PCO2 the acute rise alone
 * passes it. Base excess counts as raised above +2 mmol/L (RCEM). Undefined when nothing can be read.
 */
export function readCompensation(gas: BloodGas): CompensationReading | undefined {
  const paco2 = gas.paco2MmHg;
  if (paco2 === undefined || describeOutOfRange('paco2MmHg', paco2, PHYSIOLOGY_VALID_RANGES.paco2MmHg) !== undefined) {
    return undefined;
  }
  const expectedAcute = expectedBicarbonateMmolPerL(paco2, 'acute');
  const limit = expectedAcute + COMPENSATION_ALLOWANCE_MMOL_PER_L;
  const acuteFormula = 'expected HCO3 (acute) = 24 + 1 × (PaCO2 − 40 mmHg) / 10, raised when above it by more than 2';
  const substitutedPco2 = `PaCO2 ${formatNumber(paco2, 1)} mmHg: expected ${formatNumber(expectedAcute, 1)} mmol/L`;
  const fromHco3 = (
    hco3: number,
    measure: 'reported-bicarbonate' | 'calculated-bicarbonate',
  ): CompensationReading => {
    const raised = hco3 > limit;
    const shown = measure === 'reported-bicarbonate'
      ? `HCO3 ${formatGasValue(gas, 'hco3') ?? `${formatNumber(hco3, 1)} mmol/L`}`
      : `HCO3 ${formatNumber(hco3, 1)} mmol/L (calculated from pH and PCO2)`;
    return {
      measure,
      shown,
      raised,
      computation: {
        name: 'Bicarbonate against an acute PCO2 rise',
        formula: acuteFormula,
        substituted: `${substitutedPco2}; ${shown}`,
        result: raised
          ? `raised beyond the acute rise (above ${formatNumber(limit, 1)} mmol/L): a sign of chronic retention`
          : `within the acute rise (${formatNumber(limit, 1)} mmol/L or less): no sign of chronic retention`,
        sourceKey: 'rcem-abg',
      },
    };
  };
  if (gas.hco3MmolPerL !== undefined) {
    return fromHco3(gas.hco3MmolPerL, 'reported-bicarbonate');
  }
  if (gas.baseExcessMmolPerL !== undefined) {
    const be = gas.baseExcessMmolPerL;
    const raised = be > BASE_EXCESS_UPPER_NORMAL_MMOL_PER_L;
    const shown = `base excess ${signed(be)} mmol/L`;
    return {
      measure: 'base-excess',
      shown,
      raised,
      computation: {
        name: 'Base excess against an acute PCO2 rise',
        formula: `an acute PCO2 rise leaves the base excess near normal (−2 to +${BASE_EXCESS_UPPER_NORMAL_MMOL_PER_L} mmol/L)`,
        substituted: shown,
        result: raised ? 'raised: a sign of chronic retention' : 'not raised: no sign of chronic retention',
        sourceKey: 'rcem-abg',
      },
    };
  }
  const ph = gas.ph;
  if (ph === undefined || describeOutOfRange('ph', ph, PHYSIOLOGY_VALID_RANGES.ph) !== undefined) {
    return undefined;
  }
  return fromHco3(bicarbonateFromPhAndPaco2MmolPerL(ph, paco2), 'calculated-bicarbonate');
}

const KIND_WORDS = {
  acuteAcidaemic: 'acute hypercapnic acidosis with no sign of chronic CO2 retention',
  acuteInRange: 'hypercapnia with pH not yet below the acidosis threshold and no sign of chronic CO2 retention',
  acuteOnChronic: 'acute-on-chronic hypercapnic acidosis',
  chronicCompensated: 'chronic hypercapnia with pH not acidaemic (compensated)',
  timingUnknown: 'hypercapnia without a pH: acute and chronic cannot be told apart',
} as const;

/**
 * Classifies the current gas's hypercapnia (PCO2 at or above `hypercapnicRisk.hypercapniaPaco2`) by
 * its pH (`thresholds.acidosisPhBelow`) and by the signs of long-standing CO2 retention: the risk
 * reasons other than the current gas itself (a BTS 2017 Table 4 condition, previous NIV or IMV,
 * previous hypercapnic failure, an earlier hypercapnic gas, a raised bicarbonate, a raised BMI) and a
 * bicarbonate or base excess beyond what an acute rise explains (`readCompensation`).
 *
 * - acidaemic, no sign of chronic retention: `acute` (the tiring patient: acute severe asthma,
 *   exhaustion, sedation or opioids, neuromuscular weakness; BTS/SIGN asthma guideline, from memory);
 * - acidaemic with a sign: `acute-on-chronic` (BTS/ICS 2016);
 * - pH not acidaemic with a sign: `chronic-compensated` (BTS 2017 pathway as taught, quoted secondarily);
 * - pH not acidaemic, no sign: `acute`, pH still in range;
 * - no pH: `timing-unknown`.
 */
export function classifyHypercapnia(
  gas: BloodGas | undefined,
  otherReasons: readonly RiskReason[],
  policy: Policy,
): HypercapniaClassification {
  if (gas === undefined || gas.paco2MmHg === undefined) {
    return {
      kind: 'no-current-gas',
      acidaemic: undefined,
      compensation: undefined,
      chronicEvidence: [],
      summary: 'no current blood gas with a PCO2',
    };
  }
  const acidaemic = gas.ph === undefined ? undefined : gas.ph < policy.thresholds.acidosisPhBelow;
  if (gas.paco2MmHg < policy.hypercapnicRisk.hypercapniaPaco2.mmHg) {
    return {
      kind: 'not-hypercapnic',
      acidaemic,
      compensation: undefined,
      chronicEvidence: [],
      summary: `PCO2 below ${policy.hypercapnicRisk.hypercapniaPaco2.display} on the current gas`,
    };
  }
  const compensation = readCompensation(gas);
  const history = otherReasons.map((r) => r.evidence);
  const bicarbonateAlreadyListed = otherReasons.some((r) => r.kind === 'raised-bicarbonate');
  const chronicEvidence =
    compensation?.raised === true && !bicarbonateAlreadyListed
      ? [...history, `${compensation.shown}, beyond an acute rise`]
      : history;
  const chronic = chronicEvidence.length > 0;
  const kind: HypercapniaClassification['kind'] =
    acidaemic === undefined
      ? 'timing-unknown'
      : chronic
        ? acidaemic
          ? 'acute-on-chronic'
          : 'chronic-compensated'
        : 'acute';
  const summary =
    kind === 'timing-unknown'
      ? KIND_WORDS.timingUnknown
      : kind === 'acute-on-chronic'
        ? KIND_WORDS.acuteOnChronic
        : kind === 'chronic-compensated'
          ? KIND_WORDS.chronicCompensated
          : acidaemic === true
            ? KIND_WORDS.acuteAcidaemic
            : KIND_WORDS.acuteInRange;
  return { kind, acidaemic, compensation, chronicEvidence, summary };
}
