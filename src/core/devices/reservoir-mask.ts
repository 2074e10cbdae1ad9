import type { Outcome } from '../types.js';
import { checkDeliveryInput, flowRangeNotes, formatNumber, ignoredInputNotes } from './check-input.js';
import type { InputSpec } from './check-input.js';
import { demandNotes, estimateInspiratoryDemand, minuteVentilationLPerMin } from './inspiratory-demand.js';
import type { BreathingPattern } from './inspiratory-demand.js';
import { envelopeAtFlow, variablePerformanceEstimate } from './delivery-estimate.js';
import type { FlowEnvelopeSpec } from './delivery-estimate.js';
import { ESTIMATE_ONLY_NOTE, ROOM_AIR_O2_FRACTION, fio2Range } from './mixing.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel, Fio2Envelope } from './types.js';

/** Reservoir mask flows, L/min: BTS 2008 gave 10-15; BTS 2017 Table 2 uses 15. */
export const RESERVOIR_MASK_FLOW_RANGE_L_PER_MIN = { min: 10, max: 15 } as const;

/**
 * Share of each breath that is room air drawn past the face seal and through the side ports, with
 * the bag well supplied. This service's calibration, not a measured value: 0.1-0.5 (central 0.3)
 * reproduces the FiO2 of 0.60-0.90 quoted for these masks (check-values 2a, V2).
 */
export const RESERVOIR_MASK_ROOM_AIR_SHARE = { low: 0.1, central: 0.3, high: 0.5 } as const;

/**
 * Reservoir mask FiO2 above 0.60, typically quoted 0.60-0.90, with the bag kept inflated
 * (Therapeutic Guidelines, Australia; teaching pages: V2), ± 0.1, capped at 1. Not split by flow:
 * the sources give one range for the usual 10-15 L/min.
 */
export const RESERVOIR_MASK_PUBLISHED_FIO2 = { low: 0.6, high: 0.9, tolerance: 0.1 } as const;

export const RESERVOIR_MASK_ENVELOPE: FlowEnvelopeSpec = {
  publishedFlowLPerMin: RESERVOIR_MASK_FLOW_RANGE_L_PER_MIN,
  at: () => ({
    low: RESERVOIR_MASK_PUBLISHED_FIO2.low - RESERVOIR_MASK_PUBLISHED_FIO2.tolerance,
    high: RESERVOIR_MASK_PUBLISHED_FIO2.high + RESERVOIR_MASK_PUBLISHED_FIO2.tolerance,
  }),
  basis: 'reservoir mask 0.60-0.90 at 10-15 L/min ± 0.1 (Therapeutic Guidelines)',
};

/** The reservoir mask's published envelope at a flow. */
export function reservoirMaskEnvelope(flowLPerMin: number): Fio2Envelope {
  return envelopeAtFlow(flowLPerMin, RESERVOIR_MASK_ENVELOPE);
}

const SPEC: InputSpec = { deviceWords: 'a reservoir mask', uses: ['flowLPerMin'], requires: ['flowLPerMin'] };

/**
 * Oxygen fills the bag through the whole breathing cycle, so the oxygen available to each breath is
 * Q × Ttot and the share of the breath it can supply is min(1, Q / V̇E) (mass balance). Room air
 * makes up the rest, plus the leak share: FiO2 = 0.21 + 0.79 × min(1, Q/V̇E) × (1 − leak).
 */
export function reservoirMaskFio2(flowLPerMin: number, pattern: BreathingPattern, roomAirShare: number): number {
  const supplied = Math.min(1, flowLPerMin / minuteVentilationLPerMin(pattern));
  return ROOM_AIR_O2_FRACTION + (1 - ROOM_AIR_O2_FRACTION) * supplied * (1 - roomAirShare);
}

/** Reservoir (non-rebreathing) mask: variable performance, the highest FiO2 of the open masks. */
export function estimateReservoirMask(input: DeliveryInput): Outcome<DeliveryEstimate> {
  const checked = checkDeliveryInput(input, SPEC);
  if (checked.kind !== 'ok') {
    return checked;
  }
  const flow = checked.value.flowLPerMin ?? 0;
  const demand = estimateInspiratoryDemand(checked.value.respRatePerMin);
  const share = RESERVOIR_MASK_ROOM_AIR_SHARE;
  const fio2 = fio2Range(
    reservoirMaskFio2(flow, demand.central, share.central),
    reservoirMaskFio2(flow, demand.highDemand, share.high),
    reservoirMaskFio2(flow, demand.lowDemand, share.low),
  );
  const notes = [
    ESTIMATE_ONLY_NOTE,
    'The reservoir bag must stay inflated; a bag that collapses on breathing in means too little flow (BTS 2017).',
    ...demandNotes(demand),
    ...flowRangeNotes(flow, RESERVOIR_MASK_FLOW_RANGE_L_PER_MIN, 'a reservoir mask', 'BTS 2017; BTS 2008'),
    ...ignoredInputNotes(input, SPEC),
  ];
  const ventilation = minuteVentilationLPerMin(demand.central);
  if (flow < ventilation) {
    notes.push(
      `${formatNumber(flow)} L/min is below the estimated minute ventilation of ${formatNumber(ventilation)} ` +
        'L/min, so the bag empties each breath and room air makes up the rest (mixing model).',
    );
  }
  return {
    kind: 'ok',
    value: variablePerformanceEstimate({
      raw: fio2,
      envelope: reservoirMaskEnvelope(flow),
      model: 'reservoir-bag',
      respRatePerMin: checked.value.respRatePerMin,
      peakInspiratoryFlowLPerMin: demand.peakFlowLPerMin,
      notes,
      sourceKeys: ['bts-2017'],
    }),
  };
}

export const reservoirMaskModel: DeviceModel = {
  kind: 'reservoir-mask',
  label: 'Reservoir mask',
  flowRangeLPerMin: RESERVOIR_MASK_FLOW_RANGE_L_PER_MIN,
  estimate: estimateReservoirMask,
};
