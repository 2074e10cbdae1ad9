import type { SaturationRange, SetAsideNote } from '../core/types.js';
import { isTargetExtensionUrl } from './codes.js';
import { objectAt, objectsAt, quantityOf, stringAt, type JsonObject } from './json.js';
import { PLAUSIBLE, describeRange, isPlausible } from './plausibility.js';
import { readQuantity } from './read-quantity.js';

/**
 * Reads a coded target SpO2 range: our target extension (docs/fhir-input.md) with a `valueRange`
 * in `%` (or fraction `1`), or a DeviceRequest parameter whose code names the target.
 */

export interface StructuredTarget {
  readonly range: SaturationRange | undefined;
  readonly notes: readonly SetAsideNote[];
}

function percentOf(value: unknown): number | undefined {
  const quantity = quantityOf(value);
  if (quantity === undefined) {
    return undefined;
  }
  const read = readQuantity(quantity, 'percent');
  return read.kind === 'ok' ? read.value : undefined;
}

/** Reads a FHIR Range as a saturation range, with a note when it is there but unusable. */
export function readRangeAsTarget(range: unknown, what: string, reference: string): StructuredTarget {
  const low = percentOf(objectAt(range, 'low'));
  const high = percentOf(objectAt(range, 'high'));
  if (low === undefined || high === undefined) {
    return {
      range: undefined,
      notes: [
        { what, reason: 'unrecognised', detail: 'The target range lacks a low or high value in %.', reference },
      ],
    };
  }
  const valid =
    isPlausible(low, PLAUSIBLE.targetPercent) && isPlausible(high, PLAUSIBLE.targetPercent) && low < high;
  if (!valid) {
    return {
      range: undefined,
      notes: [
        {
          what,
          reason: 'implausible',
          detail: `Target ${low}–${high} % is not a range within ${describeRange(PLAUSIBLE.targetPercent)}.`,
          reference,
        },
      ],
    };
  }
  return { range: { lowPercent: low, highPercent: high }, notes: [] };
}

/** The first target extension among `holders` (the resource, then each dosage instruction). */
export function readTargetExtension(holders: readonly JsonObject[], reference: string): StructuredTarget {
  for (const holder of holders) {
    const extension = objectsAt(holder, 'extension').find(
      (e) => isTargetExtensionUrl(stringAt(e, 'url')),
    );
    if (extension !== undefined) {
      return readRangeAsTarget(objectAt(extension, 'valueRange'), 'Target SpO2 extension', reference);
    }
  }
  return { range: undefined, notes: [] };
}
