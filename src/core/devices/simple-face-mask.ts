import type { Outcome } from '../types.js';
import { checkDeliveryInput, flowRangeNotes, formatNumber, ignoredInputNotes } from './check-input.js';
import type { InputSpec } from './check-input.js';
import { demandNotes, estimateInspiratoryDemand, meanInspiratoryFlowLPerMin } from './inspiratory-demand.js';
import { ESTIMATE_ONLY_NOTE, fio2Range, mixingFio2, variablePerformanceEstimate } from './mixing.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel } from './types.js';

/** Simple face mask flows, L/min (BTS 2017, Table 2). */
export const SIMPLE_FACE_MASK_FLOW_RANGE_L_PER_MIN = { min: 5, max: 10 } as const;

const SPEC: InputSpec = {
  deviceWords: 'a simple face mask',
  uses: ['flowLPerMin'],
  requires: ['flowLPerMin'],
};

/**
 * Simple face mask: variable performance. FiO2 = 0.21 + 0.79 × min(1, Q / V̇insp) at the mean
 * inspiratory flow of the central pattern (check-values 2b); the range takes the low- and
 * high-demand patterns. Below 5 L/min exhaled gas is rebreathed (Jensen 1991).
 */
export function estimateSimpleFaceMask(input: DeliveryInput): Outcome<DeliveryEstimate> {
  const checked = checkDeliveryInput(input, SPEC);
  if (checked.kind !== 'ok') {
    return checked;
  }
  const flow = checked.value.flowLPerMin ?? 0;
  const demand = estimateInspiratoryDemand(checked.value.respRatePerMin);
  const fio2 = fio2Range(
    mixingFio2(flow, meanInspiratoryFlowLPerMin(demand.central)),
    mixingFio2(flow, meanInspiratoryFlowLPerMin(demand.highDemand)),
    mixingFio2(flow, meanInspiratoryFlowLPerMin(demand.lowDemand)),
  );
  const sourceKeys = ['device-mixing', 'bts-2017'];
  const notes = [
    ESTIMATE_ONLY_NOTE,
    ...demandNotes(demand),
    ...flowRangeNotes(flow, SIMPLE_FACE_MASK_FLOW_RANGE_L_PER_MIN, 'a simple face mask', 'BTS 2017'),
    ...ignoredInputNotes(input, SPEC),
  ];
  if (flow < SIMPLE_FACE_MASK_FLOW_RANGE_L_PER_MIN.min) {
    notes.push(
      `Below ${formatNumber(SIMPLE_FACE_MASK_FLOW_RANGE_L_PER_MIN.min)} L/min a face mask is ` +
        'rebreathed: minute ventilation rose to about 140 % at 3 L/min (Jensen 1991).',
    );
    sourceKeys.push('jensen-1991');
  }
  return { kind: 'ok', value: variablePerformanceEstimate(fio2, demand.peakFlowLPerMin, notes, sourceKeys) };
}

export const simpleFaceMaskModel: DeviceModel = {
  kind: 'simple-face-mask',
  label: 'Simple face mask',
  flowRangeLPerMin: SIMPLE_FACE_MASK_FLOW_RANGE_L_PER_MIN,
  estimate: estimateSimpleFaceMask,
};
