import type { Outcome } from '../types.js';
import { checkDeliveryInput, flowRangeNotes, formatNumber, ignoredInputNotes } from './check-input.js';
import type { InputSpec } from './check-input.js';
import {
  demandNotes,
  estimateInspiratoryDemand,
  expiratoryTimeS,
  inspiratoryTimeS,
} from './inspiratory-demand.js';
import type { BreathingPattern } from './inspiratory-demand.js';
import { envelopeAtFlow, variablePerformanceEstimate } from './delivery-estimate.js';
import type { FlowEnvelopeSpec } from './delivery-estimate.js';
import { ESTIMATE_ONLY_NOTE, anatomicReservoirFio2, fio2Range } from './mixing.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel, Fio2Envelope } from './types.js';

/** Adult nasal cannula flows, L/min (BTS 2017, Tables 2 and 4). */
export const NASAL_CANNULA_FLOW_RANGE_L_PER_MIN = { min: 1, max: 6 } as const;

/** Above this flow nasal cannulae are often poorly tolerated, L/min (BTS 2017). */
export const NASAL_CANNULA_COMFORTABLE_UP_TO_L_PER_MIN = 4;

/**
 * Share of expiration spent in the end-expiratory pause, when the cannula's oxygen collects in the
 * anatomic reservoir undisturbed (0.5 s at 20/min). This is this service's calibration, not a
 * measured value: with it the model reproduces the rule-of-4 table at rest within 0.01 and Shapiro's
 * 6 L/min example exactly; Shapiro's own assumption (the reservoir fills over all of expiration)
 * reads about 0.05-0.06 above the table at 1-3 L/min and is used for the top of the range.
 */
export const END_EXPIRATORY_PAUSE_FRACTION = 0.25;

/**
 * The "rule of 4": FiO2 ≈ 0.20 + 0.04 × L/min over 1-6 L/min with a normal breathing pattern, ± 0.05
 * (FCCS, SCCM 2016, as cited by fpnotebook; Egan-type tables: common practice).
 */
export const NASAL_CANNULA_RULE_OF_4 = { atNoFlow: 0.2, perLPerMin: 0.04, tolerance: 0.05 } as const;

/** Measured tracheal FiO2 rises about 2.5-3.8 % per L/min above air (check-values pitfall 9, V2). */
export const NASAL_CANNULA_MEASURED_RISE_PER_L_PER_MIN = { low: 0.025, high: 0.038 } as const;

/**
 * The published envelope: the union of the rule of 4 ± 0.05 and the measured 2.5-3.8 % per L/min,
 * so no source is contradicted (at 6 L/min the measured low, 0.36, is below the rule's 0.39).
 * Therapeutic Guidelines' 0.24-0.35 over 1-4 L/min lies inside it.
 */
export const NASAL_CANNULA_ENVELOPE: FlowEnvelopeSpec = {
  publishedFlowLPerMin: { min: 1, max: 6 },
  at: (q) => {
    const rule = NASAL_CANNULA_RULE_OF_4.atNoFlow + NASAL_CANNULA_RULE_OF_4.perLPerMin * q;
    const rise = NASAL_CANNULA_MEASURED_RISE_PER_L_PER_MIN;
    return {
      low: Math.min(rule - NASAL_CANNULA_RULE_OF_4.tolerance, 0.21 + rise.low * q),
      high: Math.max(rule + NASAL_CANNULA_RULE_OF_4.tolerance, 0.21 + rise.high * q),
    };
  },
  basis: 'nasal cannula "rule of 4" ± 0.05 (FCCS) and measured 2.5-3.8 % per L/min',
};

/** The nasal cannula's published envelope at a flow. */
export function nasalCannulaEnvelope(flowLPerMin: number): Fio2Envelope {
  return envelopeAtFlow(flowLPerMin, NASAL_CANNULA_ENVELOPE);
}

const SPEC: InputSpec = { deviceWords: 'a nasal cannula', uses: ['flowLPerMin'], requires: ['flowLPerMin'] };

function fio2For(flowLPerMin: number, pattern: BreathingPattern, reservoirFillTimeS: number): number {
  return anatomicReservoirFio2({
    o2FlowLPerMin: flowLPerMin,
    tidalVolumeL: pattern.tidalVolumeL,
    inspiratoryTimeS: inspiratoryTimeS(pattern),
    reservoirFillTimeS,
  });
}

/**
 * Nasal cannula: variable performance. The estimate is the anatomic-reservoir model at the central
 * breathing pattern; the top of the range takes small breaths with the reservoir full, the bottom
 * large breaths with no reservoir (mouth breathing). Faster breathing shortens inspiration and the
 * pause, so every bound falls with tachypnoea (check-values pitfall 9).
 */
export function estimateNasalCannula(input: DeliveryInput): Outcome<DeliveryEstimate> {
  const checked = checkDeliveryInput(input, SPEC);
  if (checked.kind !== 'ok') {
    return checked;
  }
  const flow = checked.value.flowLPerMin ?? 0;
  const demand = estimateInspiratoryDemand(checked.value.respRatePerMin);
  const { central, lowDemand, highDemand } = demand;
  const fio2 = fio2Range(
    fio2For(flow, central, expiratoryTimeS(central) * END_EXPIRATORY_PAUSE_FRACTION),
    fio2For(flow, highDemand, 0),
    fio2For(flow, lowDemand, expiratoryTimeS(lowDemand)),
  );
  const notes = [
    ESTIMATE_ONLY_NOTE,
    ...demandNotes(demand),
    ...flowRangeNotes(flow, NASAL_CANNULA_FLOW_RANGE_L_PER_MIN, 'a nasal cannula', 'BTS 2017'),
    ...ignoredInputNotes(input, SPEC),
  ];
  if (flow > NASAL_CANNULA_COMFORTABLE_UP_TO_L_PER_MIN) {
    notes.push(
      `Nasal cannulae above about ${formatNumber(NASAL_CANNULA_COMFORTABLE_UP_TO_L_PER_MIN)} L/min ` +
        'are often poorly tolerated (BTS 2017).',
    );
  }
  return {
    kind: 'ok',
    value: variablePerformanceEstimate({
      raw: fio2,
      envelope: nasalCannulaEnvelope(flow),
      model: 'anatomic-reservoir',
      respRatePerMin: checked.value.respRatePerMin,
      peakInspiratoryFlowLPerMin: demand.peakFlowLPerMin,
      notes,
      sourceKeys: ['bts-2017'],
    }),
  };
}

export const nasalCannulaModel: DeviceModel = {
  kind: 'nasal-cannula',
  label: 'Nasal cannula',
  flowRangeLPerMin: NASAL_CANNULA_FLOW_RANGE_L_PER_MIN,
  estimate: estimateNasalCannula,
};
