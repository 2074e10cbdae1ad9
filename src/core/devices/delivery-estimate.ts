import { ROOM_AIR_O2_FRACTION, fio2Range } from './mixing.js';
import type {
  DeliveryEstimate,
  DeliveryModel,
  DeliveryModelKind,
  Fio2Envelope,
  Fio2Range,
  ThresholdFio2,
} from './types.js';

/**
 * Every device model ends here: its raw model range is kept inside the device's published envelope,
 * and the one point thresholds use is chosen. Policy reference key of the envelopes:
 * `device-fio2-tables`.
 */

export const DEVICE_FIO2_TABLES_KEY = 'device-fio2-tables';

/** The models, named as the card names them (see docs/basis/devices.md). */
export const DELIVERY_MODELS: Readonly<Record<DeliveryModelKind, DeliveryModel>> = Object.freeze({
  'anatomic-reservoir': {
    kind: 'anatomic-reservoir',
    name: 'nasal cannula anatomic-reservoir model, kept within published figures',
    sourceKey: 'anatomic-reservoir',
  },
  'low-flow-mixing': {
    kind: 'low-flow-mixing',
    name: 'low-flow mixing model, kept within published figures',
    sourceKey: 'device-mixing',
  },
  'reservoir-bag': {
    kind: 'reservoir-bag',
    name: 'reservoir-bag mass balance, kept within published figures',
    sourceKey: 'device-mixing',
  },
  'air-entrainment': {
    kind: 'air-entrainment',
    name: 'fixed-performance air-entrainment (Venturi) setting, with its measured accuracy',
    sourceKey: 'air-entrainment',
  },
  'high-flow-set-fio2': {
    kind: 'high-flow-set-fio2',
    name: 'high-flow blender setting',
    sourceKey: 'hfnc-2017',
  },
  'ventilator-set-fio2': {
    kind: 'ventilator-set-fio2',
    name: 'CPAP/NIV FiO2 setting',
    sourceKey: 'bts-ics-2016',
  },
});

/** Published figures at flows within a device's published flow range. */
export interface FlowEnvelopeSpec {
  readonly publishedFlowLPerMin: { readonly min: number; readonly max: number };
  /** Low and high FiO2 at a flow inside the published range (tolerance included). */
  readonly at: (flowLPerMin: number) => { readonly low: number; readonly high: number };
  /** Plain words naming the figures and their source. */
  readonly basis: string;
}

const clampFraction = (x: number): number => Math.min(1, Math.max(ROOM_AIR_O2_FRACTION, x));

/**
 * The envelope at a flow. Inside the published flows, the published figures. Above them, the
 * figures at the top published flow: nothing is published beyond it, and the flow-range check reports
 * the flow. Below them, from room air up to the figures' high end at the lowest published flow:
 * nothing is published there either, and less oxygen flow cannot give more oxygen.
 */
export function envelopeAtFlow(flowLPerMin: number, spec: FlowEnvelopeSpec): Fio2Envelope {
  const { min, max } = spec.publishedFlowLPerMin;
  const inside = spec.at(Math.min(max, Math.max(min, flowLPerMin)));
  const below = flowLPerMin < min;
  return {
    low: below ? ROOM_AIR_O2_FRACTION : clampFraction(inside.low),
    high: clampFraction(inside.high),
    basis: below
      ? `${spec.basis}; below ${String(min)} L/min nothing is published, so from room air up to the figure at ${String(min)} L/min`
      : flowLPerMin > max
        ? `${spec.basis}; above ${String(max)} L/min nothing is published, so the figure at ${String(max)} L/min`
        : spec.basis,
    sourceKey: DEVICE_FIO2_TABLES_KEY,
  };
}

/** Keeps every point of a model range inside the envelope, preserving low ≤ estimate ≤ high. */
export function keepWithinEnvelope(raw: Fio2Range, envelope: Fio2Envelope): Fio2Range {
  const clamp = (x: number): number => Math.min(envelope.high, Math.max(envelope.low, x));
  return fio2Range(clamp(raw.estimate), clamp(raw.low), clamp(raw.high));
}

/**
 * The point thresholds use. A device that delivers its setting is judged by the setting (what the
 * clinician set and reads, and what Roca 2019 used for ROX); a variable-performance device by the low
 * end of its range, so that "FiO2 at or above a threshold" is said only when even the least plausible
 * FiO2 reaches it. The central estimate of these models swings most with the breathing pattern
 * assumed; the low end, bounded below by the published figures, swings least.
 */
export function thresholdFio2For(fio2: Fio2Range, source: 'set' | 'estimated', setFio2: number | undefined): ThresholdFio2 {
  if (source === 'set' && setFio2 !== undefined) {
    return { fraction: Math.min(fio2.high, Math.max(fio2.low, setFio2)), point: 'set' };
  }
  return { fraction: fio2.low, point: 'low-end' };
}

/** What a device model hands over: the estimate's own fields, with the raw range and model kind. */
export type EstimateParts = Pick<
  DeliveryEstimate,
  | 'envelope'
  | 'fio2Source'
  | 'respRatePerMin'
  | 'fixedPerformance'
  | 'totalFlowLPerMin'
  | 'peakInspiratoryFlowLPerMin'
  | 'entrainmentRatio'
  | 'minimumFlowLPerMin'
  | 'notes'
> & {
  readonly raw: Fio2Range;
  readonly model: DeliveryModelKind;
  readonly setFio2Fraction: number | undefined;
  /** Further references beyond the model's and the envelope's (e.g. 'bts-2017'). */
  readonly sourceKeys: readonly string[];
};

/**
 * Builds a device's estimate. The model's reference comes first in `sourceKeys`, so a card naming
 * "the" source of the figure names the model that made it; a note is added when the envelope moved
 * the model's central estimate.
 */
export function buildDeliveryEstimate(parts: EstimateParts): DeliveryEstimate {
  const model = DELIVERY_MODELS[parts.model];
  // A device that delivers its setting shows the setting as its figure; what fast breathing may take
  // off it stays in the low end of the range and in the notes, so "0.28 set" never reads "0.26 set".
  const raw0 =
    parts.fio2Source === 'set' && parts.setFio2Fraction !== undefined
      ? { estimate: parts.setFio2Fraction, low: parts.raw.low, high: Math.max(parts.raw.high, parts.setFio2Fraction) }
      : parts.raw;
  const fio2 = keepWithinEnvelope(raw0, parts.envelope);
  const raw = fio2Range(parts.raw.estimate, parts.raw.low, parts.raw.high);
  const moved = Math.abs(raw.estimate - fio2.estimate) >= 0.005;
  const setShown = raw0 !== parts.raw;
  const notes = !moved
    ? parts.notes
    : setShown
      ? [
          ...parts.notes,
          `At this breathing the mixing model puts the FiO2 at about ${raw.estimate.toFixed(2)}; the figure ` +
            `shown is the setting, and the range reaches down to ${fio2.low.toFixed(2)} (${parts.envelope.basis}).`,
        ]
      : [
          ...parts.notes,
          `The model alone gave ${raw.estimate.toFixed(2)}; shown within the published ` +
            `${fio2ToText(parts.envelope)} for this device and flow (${parts.envelope.basis}).`,
        ];
  const sourceKeys = [model.sourceKey, ...parts.sourceKeys, parts.envelope.sourceKey].filter(
    (key, index, all) => all.indexOf(key) === index,
  );
  return {
    fio2,
    thresholdFio2: thresholdFio2For(fio2, parts.fio2Source, parts.setFio2Fraction),
    fio2Source: parts.fio2Source,
    model,
    envelope: parts.envelope,
    respRatePerMin: parts.respRatePerMin,
    fixedPerformance: parts.fixedPerformance,
    totalFlowLPerMin: parts.totalFlowLPerMin,
    peakInspiratoryFlowLPerMin: parts.peakInspiratoryFlowLPerMin,
    entrainmentRatio: parts.entrainmentRatio,
    minimumFlowLPerMin: parts.minimumFlowLPerMin,
    notes,
    sourceKeys,
  };
}

function fio2ToText(envelope: Fio2Envelope): string {
  return `${envelope.low.toFixed(2)}–${envelope.high.toFixed(2)}`;
}

/**
 * The estimate of a variable-performance device: no setting, no total or minimum flow of its own, an
 * FiO2 that follows the patient's breathing (shown with the peak inspiratory flow used), and
 * thresholds judged at the low end.
 */
export function variablePerformanceEstimate(parts: {
  readonly raw: Fio2Range;
  readonly envelope: Fio2Envelope;
  readonly model: DeliveryModelKind;
  readonly respRatePerMin: number | undefined;
  readonly peakInspiratoryFlowLPerMin: number;
  readonly notes: readonly string[];
  readonly sourceKeys: readonly string[];
}): DeliveryEstimate {
  // Each part named rather than spread: a spread followed by more fields costs microseconds a call in
  // V8, and an assessment builds an estimate for the order and for each recorded flow it matches.
  return buildDeliveryEstimate({
    raw: parts.raw,
    envelope: parts.envelope,
    model: parts.model,
    respRatePerMin: parts.respRatePerMin,
    peakInspiratoryFlowLPerMin: parts.peakInspiratoryFlowLPerMin,
    notes: parts.notes,
    sourceKeys: parts.sourceKeys,
    fio2Source: 'estimated',
    setFio2Fraction: undefined,
    fixedPerformance: false,
    totalFlowLPerMin: undefined,
    entrainmentRatio: undefined,
    minimumFlowLPerMin: undefined,
  });
}
