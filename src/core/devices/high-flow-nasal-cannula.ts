import type { Outcome } from '../types.js';
import { checkDeliveryInput, flowRangeNotes, formatNumber } from './check-input.js';
import type { InputSpec } from './check-input.js';
import { demandNotes, estimateInspiratoryDemand, peakInspiratoryFlowLPerMin } from './inspiratory-demand.js';
import { ESTIMATE_ONLY_NOTE, fio2Range, openSourceFio2 } from './mixing.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel } from './types.js';

/**
 * Adult high-flow nasal cannula total gas flow, L/min: up to 60 (Annual Update in Intensive Care and
 * Emergency Medicine 2017, PMC5359952); the 10 L/min lower bound is from memory.
 */
export const HFNC_FLOW_RANGE_L_PER_MIN = { min: 10, max: 60 } as const;

const SPEC: InputSpec = {
  deviceWords: 'high-flow nasal cannula',
  uses: ['flowLPerMin', 'setFio2Fraction'],
  requires: ['setFio2Fraction', 'flowLPerMin'],
};

/**
 * High-flow nasal cannula: the blender FiO2 at a total flow set by the user. While the flow meets the
 * patient's central peak inspiratory flow the device is fixed-performance and the estimate is the set
 * FiO2; below it room air is drawn in at the peak of each breath ({@link openSourceFio2}). Either way
 * the range reaches down to what the high-demand pattern gives, which is the set FiO2 itself while
 * the flow meets that pattern's peak too.
 */
export function estimateHighFlowNasalCannula(input: DeliveryInput): Outcome<DeliveryEstimate> {
  const checked = checkDeliveryInput(input, SPEC);
  if (checked.kind !== 'ok') {
    return checked;
  }
  const flow = checked.value.flowLPerMin ?? 0;
  const set = checked.value.setFio2Fraction ?? 1;
  const demand = estimateInspiratoryDemand(checked.value.respRatePerMin);
  const peak = demand.peakFlowLPerMin;
  const fixedPerformance = flow >= peak;
  const fio2 = fio2Range(
    openSourceFio2(set, flow, peak),
    openSourceFio2(set, flow, peakInspiratoryFlowLPerMin(demand.highDemand)),
    set,
  );
  const notes: string[] = [];
  if (fixedPerformance) {
    notes.push(
      `Flow ${formatNumber(flow)} L/min meets the estimated peak inspiratory flow of ${formatNumber(peak)} ` +
        'L/min, so the patient breathes the set FiO2 (mixing model).',
    );
  } else {
    notes.push(
      `Flow ${formatNumber(flow)} L/min is below the estimated peak inspiratory flow of ${formatNumber(peak)} ` +
        'L/min: room air is drawn in and the FiO2 may be lower than set (mixing model).',
      ESTIMATE_ONLY_NOTE,
    );
  }
  if (fio2.low < set) {
    notes.push(
      `With larger or faster breaths the FiO2 could be as low as ${formatNumber(fio2.low * 100)} % (mixing model).`,
    );
  }
  notes.push(
    ...demandNotes(demand),
    ...flowRangeNotes(flow, HFNC_FLOW_RANGE_L_PER_MIN, 'high-flow nasal cannula', 'adult devices deliver up to 60 L/min'),
  );
  return {
    kind: 'ok',
    value: {
      fio2,
      fixedPerformance,
      totalFlowLPerMin: flow,
      peakInspiratoryFlowLPerMin: peak,
      entrainmentRatio: undefined,
      minimumFlowLPerMin: undefined,
      notes,
      sourceKeys: ['device-mixing'],
    },
  };
}

export const highFlowNasalCannulaModel: DeviceModel = {
  kind: 'high-flow-nasal-cannula',
  label: 'High-flow nasal cannula',
  flowRangeLPerMin: HFNC_FLOW_RANGE_L_PER_MIN,
  estimate: estimateHighFlowNasalCannula,
};
