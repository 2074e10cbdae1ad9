import type { Outcome } from '../types.js';
import { ROOM_AIR_O2_FRACTION } from './mixing.js';
import type { DeliveryInput } from './types.js';

/** The input fields a device model may read. */
export type DeliveryField = 'flowLPerMin' | 'setFio2Fraction';

export interface CheckedInput {
  readonly flowLPerMin: number | undefined;
  readonly setFio2Fraction: number | undefined;
  readonly respRatePerMin: number | undefined;
}

export interface InputSpec {
  /** Lower-case device name for sentences, e.g. "a nasal cannula". */
  readonly deviceWords: string;
  readonly uses: readonly DeliveryField[];
  readonly requires: readonly DeliveryField[];
}

const FIELD_WORDS: Readonly<Record<DeliveryField, string>> = {
  flowLPerMin: 'the flow (L/min)',
  setFio2Fraction: 'the set FiO2',
};

/**
 * Checks the fields a model uses. Impossible values (negative or non-finite flow, FiO2 outside
 * 0.21–1, a non-positive respiratory rate) and absent required fields both give `unknown`; fields
 * the model does not use are dropped, and {@link ignoredInputNotes} says so.
 */
export function checkDeliveryInput(input: DeliveryInput, spec: InputSpec): Outcome<CheckedInput> {
  const rr = input.respRatePerMin;
  if (rr !== undefined && !(Number.isFinite(rr) && rr > 0)) {
    return { kind: 'unknown', reason: `A respiratory rate of ${String(rr)}/min is not possible.` };
  }
  const uses = (field: DeliveryField): boolean => spec.uses.includes(field);
  const flow = uses('flowLPerMin') ? input.flowLPerMin : undefined;
  const fio2 = uses('setFio2Fraction') ? input.setFio2Fraction : undefined;
  if (flow !== undefined && !(Number.isFinite(flow) && flow >= 0)) {
    return { kind: 'unknown', reason: `A flow of ${String(flow)} L/min is not possible.` };
  }
  if (fio2 !== undefined && !(Number.isFinite(fio2) && fio2 >= ROOM_AIR_O2_FRACTION && fio2 <= 1)) {
    return {
      kind: 'unknown',
      reason: `A set FiO2 of ${String(fio2)} is not possible: it must be a fraction from 0.21 to 1.`,
    };
  }
  const given: Readonly<Record<DeliveryField, number | undefined>> = {
    flowLPerMin: flow,
    setFio2Fraction: fio2,
  };
  const missing = spec.requires.filter((field) => given[field] === undefined);
  if (missing.length > 0) {
    return {
      kind: 'unknown',
      reason: `The delivered FiO2 of ${spec.deviceWords} cannot be estimated without ${missing
        .map((field) => FIELD_WORDS[field])
        .join(' and ')}.`,
      missing,
    };
  }
  return { kind: 'ok', value: { flowLPerMin: flow, setFio2Fraction: fio2, respRatePerMin: rr } };
}

/** Notes for inputs the model was given but does not use. */
export function ignoredInputNotes(input: DeliveryInput, spec: InputSpec): readonly string[] {
  if (input.setFio2Fraction !== undefined && !spec.uses.includes('setFio2Fraction')) {
    return [`A set FiO2 was given, but ${spec.deviceWords} has no FiO2 setting: the estimate uses the flow.`];
  }
  return [];
}

/** A number for a sentence: at most one decimal place, no trailing zero. */
export function formatNumber(value: number): string {
  return String(Math.round(value * 10) / 10);
}

/** The note for a flow outside the device's usual range; the rules layer reports it. */
export function flowRangeNotes(
  flowLPerMin: number,
  range: { readonly min: number; readonly max: number },
  deviceWords: string,
  basis: string,
): readonly string[] {
  if (flowLPerMin >= range.min && flowLPerMin <= range.max) {
    return [];
  }
  const side = flowLPerMin < range.min ? 'below' : 'above';
  return [
    `${formatNumber(flowLPerMin)} L/min is ${side} the usual ${formatNumber(range.min)}-${formatNumber(
      range.max,
    )} L/min for ${deviceWords} (${basis}); estimated anyway.`,
  ];
}
