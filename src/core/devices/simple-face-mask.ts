import type { Outcome } from '../types.js';
import { checkDeliveryInput, flowRangeNotes, formatNumber, ignoredInputNotes } from './check-input.js';
import type { InputSpec } from './check-input.js';
import { demandNotes, estimateInspiratoryDemand, meanInspiratoryFlowLPerMin } from './inspiratory-demand.js';
import { envelopeAtFlow, variablePerformanceEstimate } from './delivery-estimate.js';
import type { FlowEnvelopeSpec } from './delivery-estimate.js';
import { ESTIMATE_ONLY_NOTE, fio2Range, mixingFio2 } from './mixing.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel, Fio2Envelope } from './types.js';

/** Simple face mask flows, L/min (BTS 2017, Table 2). */
export const SIMPLE_FACE_MASK_FLOW_RANGE_L_PER_MIN = { min: 5, max: 10 } as const;

/**
 * Simple face mask FiO2 0.35-0.60 over 5-10 L/min (Therapeutic Guidelines, Australia; common
 * teaching gives 0.40-0.60), ± 0.05. Read as rising linearly with flow across the range, as the
 * usual flow-by-flow tables do (our reading: the sources give the range, not each flow).
 */
export const SIMPLE_FACE_MASK_PUBLISHED_FIO2 = { atMinFlow: 0.35, atMaxFlow: 0.6, tolerance: 0.05 } as const;

export const SIMPLE_FACE_MASK_ENVELOPE: FlowEnvelopeSpec = {
  publishedFlowLPerMin: SIMPLE_FACE_MASK_FLOW_RANGE_L_PER_MIN,
  at: (q) => {
    const { min, max } = SIMPLE_FACE_MASK_FLOW_RANGE_L_PER_MIN;
    const f = SIMPLE_FACE_MASK_PUBLISHED_FIO2;
    const nominal = f.atMinFlow + ((f.atMaxFlow - f.atMinFlow) * (q - min)) / (max - min);
    return { low: nominal - f.tolerance, high: nominal + f.tolerance };
  },
  basis: 'simple face mask 0.35-0.60 over 5-10 L/min ± 0.05 (Therapeutic Guidelines)',
};

/** The simple face mask's published envelope at a flow. */
export function simpleFaceMaskEnvelope(flowLPerMin: number): Fio2Envelope {
  return envelopeAtFlow(flowLPerMin, SIMPLE_FACE_MASK_ENVELOPE);
}

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
  const sourceKeys = ['bts-2017'];
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
  return {
    kind: 'ok',
    value: variablePerformanceEstimate({
      raw: fio2,
      envelope: simpleFaceMaskEnvelope(flow),
      model: 'low-flow-mixing',
      respRatePerMin: checked.value.respRatePerMin,
      peakInspiratoryFlowLPerMin: demand.peakFlowLPerMin,
      notes,
      sourceKeys,
    }),
  };
}

export const simpleFaceMaskModel: DeviceModel = {
  kind: 'simple-face-mask',
  label: 'Simple face mask',
  flowRangeLPerMin: SIMPLE_FACE_MASK_FLOW_RANGE_L_PER_MIN,
  estimate: estimateSimpleFaceMask,
};
