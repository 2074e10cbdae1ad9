import type { Outcome } from '../types.js';
import { checkDeliveryInput, flowRangeNotes, formatNumber } from './check-input.js';
import type { InputSpec } from './check-input.js';
import { demandNotes, estimateInspiratoryDemand, meanInspiratoryFlowLPerMin } from './inspiratory-demand.js';
import { ESTIMATE_ONLY_NOTE, ROOM_AIR_O2_FRACTION, fio2Range, mixingFio2 } from './mixing.js';
import { DEVICE_FIO2_TABLES_KEY, buildDeliveryEstimate } from './delivery-estimate.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel, Fio2Envelope } from './types.js';
import { entrainmentRatio } from './venturi-mask.js';

/** Tracheostomy mask O2 flows, L/min; humidified systems usually run at 10-15 (from memory). */
export const TRACHEOSTOMY_MASK_FLOW_RANGE_L_PER_MIN = { min: 5, max: 15 } as const;

/** The most a tracheostomy mask is expected to deliver: about 0.6, perhaps 0.7 (V2, from memory). */
export const TRACHEOSTOMY_MASK_USUAL_FIO2_CEILING = 0.6;

/**
 * The tracheostomy mask's envelope: from room air up to its usual ceiling at any flow (no figure by
 * flow is published).
 */
export const TRACHEOSTOMY_MASK_ENVELOPE: Fio2Envelope = {
  low: ROOM_AIR_O2_FRACTION,
  high: TRACHEOSTOMY_MASK_USUAL_FIO2_CEILING,
  basis: 'tracheostomy mask up to about 0.6 (tracheostomy care guidance, quoted secondarily; from memory)',
  sourceKey: DEVICE_FIO2_TABLES_KEY,
};

const SPEC: InputSpec = {
  deviceWords: 'a tracheostomy mask',
  uses: ['flowLPerMin', 'setFio2Fraction'],
  requires: ['flowLPerMin'],
};

/**
 * Tracheostomy mask: variable performance, modelled like a face mask,
 * FiO2 = 0.21 + (F_source − 0.21) × min(1, Q_source / V̇insp). Without a set FiO2 the source is the
 * O2 flow; with one, the set FiO2 is read as the setting of an air-entrainment humidifier feeding the
 * mask, so the source is Q × (1 + ratio) at that FiO2. The range spans the low- and high-demand
 * breathing patterns.
 */
export function estimateTracheostomyMask(input: DeliveryInput): Outcome<DeliveryEstimate> {
  const checked = checkDeliveryInput(input, SPEC);
  if (checked.kind !== 'ok') {
    return checked;
  }
  const flow = checked.value.flowLPerMin ?? 0;
  const set = checked.value.setFio2Fraction;
  const sourceFraction = set ?? 1;
  // A setting of 0.21 is humidified air: nothing to mix, and the ratio would divide by zero.
  const entrains = set !== undefined && set > ROOM_AIR_O2_FRACTION && set < 1;
  const sourceFlow = entrains ? flow * (1 + entrainmentRatio(set)) : flow;
  const demand = estimateInspiratoryDemand(checked.value.respRatePerMin);
  const fio2 = fio2Range(
    mixingFio2(sourceFlow, meanInspiratoryFlowLPerMin(demand.central), sourceFraction),
    mixingFio2(sourceFlow, meanInspiratoryFlowLPerMin(demand.highDemand), sourceFraction),
    mixingFio2(sourceFlow, meanInspiratoryFlowLPerMin(demand.lowDemand), sourceFraction),
  );
  const notes = [
    ESTIMATE_ONLY_NOTE,
    `A tracheostomy mask delivers up to about ${formatNumber(TRACHEOSTOMY_MASK_USUAL_FIO2_CEILING * 100)} % ` +
      'and its FiO2 varies; a T-piece is used for higher needs (tracheostomy care guidance).',
    ...demandNotes(demand),
    ...flowRangeNotes(flow, TRACHEOSTOMY_MASK_FLOW_RANGE_L_PER_MIN, 'a tracheostomy mask', 'from memory'),
  ];
  if (entrains) {
    notes.push(
      `The set FiO2 was read as an air-entrainment humidifier setting: ${formatNumber(sourceFlow)} L/min ` +
        `of gas at ${formatNumber(sourceFraction * 100)} %, diluted further by room air (mixing model).`,
    );
  }
  return {
    kind: 'ok',
    value: buildDeliveryEstimate({
      raw: fio2,
      envelope: TRACHEOSTOMY_MASK_ENVELOPE,
      model: 'low-flow-mixing',
      fio2Source: 'estimated',
      setFio2Fraction: undefined,
      respRatePerMin: checked.value.respRatePerMin,
      fixedPerformance: false,
      totalFlowLPerMin: entrains ? sourceFlow : undefined,
      peakInspiratoryFlowLPerMin: demand.peakFlowLPerMin,
      entrainmentRatio: entrains ? entrainmentRatio(set) : undefined,
      minimumFlowLPerMin: undefined,
      notes,
      sourceKeys: [],
    }),
  };
}

export const tracheostomyMaskModel: DeviceModel = {
  kind: 'tracheostomy-mask',
  label: 'Tracheostomy mask',
  flowRangeLPerMin: TRACHEOSTOMY_MASK_FLOW_RANGE_L_PER_MIN,
  estimate: estimateTracheostomyMask,
};
