import type { Outcome } from '../types.js';
import { checkDeliveryInput, flowRangeNotes, formatNumber } from './check-input.js';
import type { InputSpec } from './check-input.js';
import { demandNotes, estimateInspiratoryDemand, meanInspiratoryFlowLPerMin } from './inspiratory-demand.js';
import { DEVICE_FIO2_TABLES_KEY, buildDeliveryEstimate, variablePerformanceEstimate } from './delivery-estimate.js';
import { ESTIMATE_ONLY_NOTE, ROOM_AIR_O2_FRACTION, fio2Range, mixingFio2 } from './mixing.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel, Fio2Envelope } from './types.js';

/** O2 bled into a CPAP or NIV circuit from a wall flowmeter, L/min (from memory). */
export const CPAP_NIV_BLEED_IN_FLOW_RANGE_L_PER_MIN = { min: 1, max: 15 } as const;

/**
 * Intentional leak of a vented NIV mask or circuit, L/min, that the device's flow also supplies and
 * that dilutes bled-in oxygen: none on a non-vented circuit, about 30 typical, 60 at high pressures
 * (from memory).
 */
export const NIV_INTENTIONAL_LEAK_L_PER_MIN = { low: 0, central: 30, high: 60 } as const;

/** No published figure bounds oxygen bled into CPAP or NIV: the envelope is the whole scale. */
export const CPAP_NIV_BLEED_IN_ENVELOPE: Fio2Envelope = {
  low: ROOM_AIR_O2_FRACTION,
  high: 1,
  basis: 'no published figure for oxygen bled into CPAP or NIV; the mixing model range only',
  sourceKey: DEVICE_FIO2_TABLES_KEY,
};

const SPEC: InputSpec = {
  deviceWords: 'CPAP or NIV',
  uses: ['flowLPerMin', 'setFio2Fraction'],
  requires: [],
};

const VENTILATOR_NOTE =
  'NIV is ventilatory support and CPAP is pressure therapy, run under their own protocol (BTS/ICS 2016): ' +
  'use the FiO2 set or displayed on the device.';

function bleedInEstimate(flow: number, respRatePerMin: number | undefined): DeliveryEstimate {
  const demand = estimateInspiratoryDemand(respRatePerMin);
  const leak = NIV_INTENTIONAL_LEAK_L_PER_MIN;
  const fio2 = fio2Range(
    mixingFio2(flow, meanInspiratoryFlowLPerMin(demand.central) + leak.central),
    mixingFio2(flow, meanInspiratoryFlowLPerMin(demand.highDemand) + leak.high),
    mixingFio2(flow, meanInspiratoryFlowLPerMin(demand.lowDemand) + leak.low),
  );
  return variablePerformanceEstimate({
    raw: fio2,
    envelope: CPAP_NIV_BLEED_IN_ENVELOPE,
    model: 'low-flow-mixing',
    respRatePerMin,
    peakInspiratoryFlowLPerMin: demand.peakFlowLPerMin,
    notes: [
      VENTILATOR_NOTE,
      ESTIMATE_ONLY_NOTE,
      `Oxygen bled in at ${formatNumber(flow)} L/min is diluted by the device's own flow, including mask ` +
        `leak of up to ${formatNumber(leak.high)} L/min (mixing model; leak from memory).`,
      ...demandNotes(demand),
      ...flowRangeNotes(flow, CPAP_NIV_BLEED_IN_FLOW_RANGE_L_PER_MIN, 'oxygen bled into CPAP or NIV', 'from memory'),
    ],
    sourceKeys: ['bts-ics-2016'],
  });
}

/**
 * CPAP or NIV. With a set (blender or entrained) FiO2 that is the estimate, with no spread: the
 * device delivers it to a sealed interface. With only an O2 bleed-in flow the FiO2 comes from the
 * mixing model against the patient's breathing plus the intentional leak, with a wide range.
 */
export function estimateCpapNiv(input: DeliveryInput): Outcome<DeliveryEstimate> {
  const checked = checkDeliveryInput(input, SPEC);
  if (checked.kind !== 'ok') {
    return checked;
  }
  const { flowLPerMin, setFio2Fraction, respRatePerMin } = checked.value;
  if (setFio2Fraction !== undefined) {
    const notes = [VENTILATOR_NOTE];
    if (flowLPerMin !== undefined) {
      notes.push('The O2 flow was not used: the set FiO2 describes what the device delivers.');
    }
    const set = fio2Range(setFio2Fraction, setFio2Fraction, setFio2Fraction);
    return {
      kind: 'ok',
      value: buildDeliveryEstimate({
        raw: set,
        envelope: {
          low: set.estimate,
          high: set.estimate,
          basis: 'the FiO2 set on the device',
          sourceKey: 'bts-ics-2016',
        },
        model: 'ventilator-set-fio2',
        fio2Source: 'set',
        setFio2Fraction,
        respRatePerMin,
        fixedPerformance: true,
        totalFlowLPerMin: undefined,
        peakInspiratoryFlowLPerMin: undefined,
        entrainmentRatio: undefined,
        minimumFlowLPerMin: undefined,
        notes,
        sourceKeys: [],
      }),
    };
  }
  if (flowLPerMin === undefined) {
    return {
      kind: 'unknown',
      reason: 'The FiO2 of CPAP or NIV cannot be estimated without the set FiO2 or the O2 bleed-in flow.',
      missing: ['setFio2Fraction', 'flowLPerMin'],
    };
  }
  return { kind: 'ok', value: bleedInEstimate(flowLPerMin, respRatePerMin) };
}

export const cpapNivModel: DeviceModel = {
  kind: 'cpap-niv',
  label: 'CPAP or NIV',
  flowRangeLPerMin: CPAP_NIV_BLEED_IN_FLOW_RANGE_L_PER_MIN,
  estimate: estimateCpapNiv,
};
