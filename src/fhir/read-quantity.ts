import { convertUnit, normaliseUnit } from '../units/convert.js';
import { tidyNumber, unitOf, type Quantity } from './json.js';

/**
 * Turns a FHIR Quantity into the unit a field's name promises, converting only through the UCUM
 * library (src/units/convert.ts). The reported value and unit are kept for display.
 */

export type QuantityRead =
  | {
      readonly kind: 'ok';
      readonly value: number;
      readonly reported: { readonly value: number; readonly unit: string };
    }
  | { readonly kind: 'unreadable-unit'; readonly unit: string };

export type TargetUnit =
  | 'percent'
  | 'fraction'
  | 'L/min'
  | '/min'
  | 'mm[Hg]'
  | 'pH'
  | 'mmol/L'
  | 'g/dL'
  | 'kg/m2';

function ok(value: number, quantity: Quantity, unit: string): QuantityRead {
  return { kind: 'ok', value: tidyNumber(value), reported: { value: quantity.value, unit } };
}

/** Percent or fraction: an explicit unit is obeyed; with no unit, a value above 1 is read as percent. */
function readShare(quantity: Quantity, unit: string, to: '%' | '1'): QuantityRead {
  const from = unit === '' ? (quantity.value > 1 ? '%' : '1') : normaliseUnit(unit);
  if (from !== '%' && from !== '1') {
    return { kind: 'unreadable-unit', unit };
  }
  const converted = convertUnit(quantity.value, from, to);
  if (converted.kind !== 'ok') {
    return { kind: 'unreadable-unit', unit };
  }
  return ok(converted.value, quantity, unit === '' ? from : unit);
}

function readConverted(quantity: Quantity, unit: string, to: string, assumeWhenBlank?: string): QuantityRead {
  const from = unit === '' ? assumeWhenBlank : unit;
  if (from === undefined) {
    return { kind: 'unreadable-unit', unit };
  }
  const converted = convertUnit(quantity.value, from, to);
  return converted.kind === 'ok' ? ok(converted.value, quantity, from) : { kind: 'unreadable-unit', unit };
}

/** Reads `quantity` in the unit `to`, or says the unit could not be read. */
export function readQuantity(quantity: Quantity, to: TargetUnit): QuantityRead {
  const unit = unitOf(quantity).trim();
  switch (to) {
    case 'percent':
      return readShare(quantity, unit, '%');
    case 'fraction':
      return readShare(quantity, unit, '1');
    case 'L/min':
      return readConverted(quantity, unit, 'L/min');
    case '/min':
      // A respiratory rate is a count per minute whatever it is labelled; a blank unit means /min.
      return readConverted(quantity, unit, '/min', '/min');
    case 'mm[Hg]':
      return readConverted(quantity, unit, 'mm[Hg]');
    case 'pH':
      // pH has no unit to convert; accept the spellings senders use for "no unit".
      if (!['', '1', '[pH]', 'pH'].includes(unit)) {
        return { kind: 'unreadable-unit', unit };
      }
      return ok(quantity.value, quantity, unit === '' ? '[pH]' : unit);
    case 'mmol/L':
      // HCO3- is monovalent, so its meq/L and mmol/L are the same number; UCUM cannot convert eq to
      // mol without the valence, so this one equivalence is stated here instead of converted.
      if (normaliseUnit(unit) === 'meq/L') {
        return ok(quantity.value, quantity, unit);
      }
      return readConverted(quantity, unit, 'mmol/L');
    case 'g/dL':
      return readConverted(quantity, unit, 'g/dL');
    case 'kg/m2':
      return readConverted(quantity, unit, 'kg/m2', 'kg/m2');
  }
}
