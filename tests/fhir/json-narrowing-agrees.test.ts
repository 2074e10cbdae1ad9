import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { asFhirResource, FhirResourceSchema } from '../../src/fhir/gathered-data.js';
import { codingsOf, quantityOf } from '../../src/fhir/json.js';

/**
 * The hand-written narrowing of quantities, codings and resources reads every value as the zod
 * schemas it replaced did (the schemas are restated here as they were). Shapes only: the numbers are
 * not clinical check values.
 */

const optionalString = z.string().optional().catch(undefined);
const FormerCodingSchema = z.looseObject({ system: optionalString, code: optionalString, display: optionalString });
const FormerQuantitySchema = z.looseObject({ value: z.number(), unit: optionalString, system: optionalString, code: optionalString });

/** What a reader sees of a narrowed value: the fields it reads (absent and undefined read alike). */
function readFields(value: Record<string, unknown> | undefined, keys: readonly string[]): unknown {
  return value === undefined ? undefined : Object.fromEntries(keys.map((key) => [key, value[key]]));
}

const FIELD_VALUES: readonly unknown[] = [undefined, null, 'kPa', '', ' %', 7, true, {}, ['x']];
const NUMBERS: readonly unknown[] = [95, 0, -1.5, 0.21, Number.NaN, Number.POSITIVE_INFINITY, '95', null, undefined, [95]];

function quantities(): unknown[] {
  const out: unknown[] = [null, undefined, 'L/min', 2, [], [{ value: 2 }], {}];
  for (const value of NUMBERS) {
    for (const unit of FIELD_VALUES) {
      out.push({ value, unit, code: unit, extra: 'kept aside' });
      out.push({ value, system: unit });
    }
  }
  return out;
}

function codings(): unknown[] {
  const out: unknown[] = [null, 'code', 3, [], [{ code: 'x' }]];
  for (const system of FIELD_VALUES) {
    for (const code of FIELD_VALUES) {
      out.push({ system, code, display: code });
    }
  }
  return out;
}

describe('hand-written narrowing agrees with the schemas it replaced', () => {
  it('reads every quantity shape as the Quantity schema did', () => {
    const cases = quantities();
    const wrong = cases.filter((value) => {
      const former = FormerQuantitySchema.safeParse(value);
      const expected = former.success ? readFields(former.data, ['value', 'unit', 'system', 'code']) : undefined;
      const actual = readFields(quantityOf(value) as Record<string, unknown> | undefined, ['value', 'unit', 'system', 'code']);
      return JSON.stringify(expected) !== JSON.stringify(actual) || (expected === undefined) !== (actual === undefined);
    });
    expect(cases.length).toBeGreaterThan(150);
    expect(wrong).toStrictEqual([]);
  });

  it('reads every coding shape as the Coding schema did', () => {
    const cases = codings();
    const concept = { coding: cases };
    const expected = cases.flatMap((raw) => {
      const former = FormerCodingSchema.safeParse(raw);
      return former.success ? [readFields(former.data, ['system', 'code', 'display'])] : [];
    });
    const actual = codingsOf(concept).map((c) => readFields({ ...c }, ['system', 'code', 'display']));
    expect(actual).toStrictEqual(expected);
    expect(actual.length).toBeGreaterThan(50);
  });

  it('takes as a resource exactly what the resource schema takes, and returns it as sent', () => {
    const values: unknown[] = [null, 'Patient', [], [{ resourceType: 'Patient' }], {}];
    for (const resourceType of ['Patient', 'P', 'patient', 'Pa', `P${'a'.repeat(63)}`, `P${'a'.repeat(64)}`, 'Obs1', 7, undefined]) {
      for (const id of [undefined, '', 'a', 'x'.repeat(64), 'x'.repeat(65), 5, null]) {
        values.push({ resourceType, id, other: 1 });
      }
    }
    const wrong = values.filter((value) => {
      const accepted = FhirResourceSchema.safeParse(value).success;
      const result = asFhirResource(value);
      return accepted ? result !== value : result !== undefined;
    });
    expect(values.filter((value) => asFhirResource(value) !== undefined).length).toBeGreaterThan(5);
    expect(wrong).toStrictEqual([]);
  });
});
