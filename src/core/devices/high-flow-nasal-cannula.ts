import type { Outcome } from '../types.js';
import { checkDeliveryInput, flowRangeNotes, formatNumber } from './check-input.js';
import type { InputSpec } from './check-input.js';
import { demandNotes, estimateInspiratoryDemand, peakInspiratoryFlowLPerMin } from './inspiratory-demand.js';
import { buildDeliveryEstimate } from './delivery-estimate.js';
import { fio2Range, openSourceFio2 } from './mixing.js';
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
 * High-flow nasal cannula: the blender FiO2 is the figure (adult devices deliver FiO2 0.21-1.0 as
 * set: Annual Update in Intensive Care and Emergency Medicine 2017, PMC5359952), and Roca 2019 read
 * ROX at the set FiO2. Estimate, range and threshold point are all the set FiO2. When the flow is
 * below the patient's estimated peak inspiratory flow, room air may be drawn in at the peak of each
 * breath ({@link openSourceFio2}); a note gives what the mixing model would then put the FiO2 at,
 * but the figure stays the set FiO2, as clinicians and the published scores use it.
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
  const entrainedLow = Math.min(
    openSourceFio2(set, flow, peak),
    openSourceFio2(set, flow, peakInspiratoryFlowLPerMin(demand.highDemand)),
  );
  const notes: string[] = [];
  if (fixedPerformance) {
    notes.push(
      `Flow ${formatNumber(flow)} L/min meets the estimated peak inspiratory flow of ${formatNumber(peak)} ` +
        'L/min, so the patient breathes the set FiO2.',
    );
  } else {
    notes.push(
      `Flow ${formatNumber(flow)} L/min is below the estimated peak inspiratory flow of ${formatNumber(peak)} ` +
        'L/min: room air may be drawn in at the peak of each breath (mixing model).',
    );
  }
  if (entrainedLow < set - 0.005) {
    notes.push(
      `With larger or faster breaths the mixing model puts the FiO2 as low as ${formatNumber(entrainedLow * 100)} %; ` +
        'the set FiO2 is used for every figure, as for ROX (Roca 2019).',
    );
  }
  notes.push(
    ...demandNotes(demand),
    ...flowRangeNotes(flow, HFNC_FLOW_RANGE_L_PER_MIN, 'high-flow nasal cannula', 'adult devices deliver up to 60 L/min'),
  );
  const fio2 = fio2Range(set, set, set);
  return {
    kind: 'ok',
    value: buildDeliveryEstimate({
      raw: fio2,
      envelope: {
        low: fio2.estimate,
        high: fio2.estimate,
        basis: 'high-flow nasal cannula delivers the FiO2 set on its blender (Annual Update ICEM 2017)',
        sourceKey: 'hfnc-2017',
      },
      model: 'high-flow-set-fio2',
      fio2Source: 'set',
      setFio2Fraction: set,
      respRatePerMin: checked.value.respRatePerMin,
      fixedPerformance,
      totalFlowLPerMin: flow,
      peakInspiratoryFlowLPerMin: peak,
      entrainmentRatio: undefined,
      minimumFlowLPerMin: undefined,
      notes,
      sourceKeys: [],
    }),
  };
}

export const highFlowNasalCannulaModel: DeviceModel = {
  kind: 'high-flow-nasal-cannula',
  label: 'High-flow nasal cannula',
  flowRangeLPerMin: HFNC_FLOW_RANGE_L_PER_MIN,
  estimate: estimateHighFlowNasalCannula,
};
