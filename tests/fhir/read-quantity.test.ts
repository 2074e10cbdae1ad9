import { describe, expect, it } from 'vitest';
import { readQuantity } from '../../src/fhir/read-quantity.js';

const q = (value: number, unit?: string) => (unit === undefined ? { value } : { value, unit });

describe('readQuantity', () => {
  it.each([
    [q(6.7, 'kPa'), 'mm[Hg]', 50.25, 2], // 1 kPa = 7.50062 mmHg (check-values 3b): 50.25
    [q(1, 'kPa'), 'mm[Hg]', 7.50062, 4], // check-values 3b
    [q(40, 'mmHg'), 'mm[Hg]', 40, 9], // display spelling accepted
    [q(28, '%'), 'fraction', 0.28, 9], // Venturi 28 % (common practice)
    [q(0.28, '1'), 'fraction', 0.28, 9],
    [q(0.94, '1'), 'percent', 94, 9],
    [q(120, 'g/L'), 'g/dL', 12, 9],
    [q(2000, 'mL/min'), 'L/min', 2, 9],
    [q(18, 'breaths/min'), '/min', 18, 9],
    [q(18), '/min', 18, 9],
    [q(7.35, '[pH]'), 'pH', 7.35, 9],
    [q(7.35), 'pH', 7.35, 9],
    [q(29, 'meq/L'), 'mmol/L', 29, 9], // HCO3- is monovalent: meq/L = mmol/L (common practice)
  ] as const)('reads %j in %s', (quantity, to, expected, digits) => {
    const read = readQuantity(quantity, to);
    expect(read.kind).toBe('ok');
    if (read.kind === 'ok') expect(read.value).toBeCloseTo(expected, digits);
  });

  it('keeps the value and unit as reported', () => {
    expect(readQuantity({ value: 6.7, unit: 'kilopascal', system: 'http://unitsofmeasure.org', code: 'kPa' }, 'mm[Hg]')).toMatchObject({
      reported: { value: 6.7, unit: 'kPa' },
    });
  });

  describe('edge cases', () => {
    it('reads a percent or fraction with no unit by its size', () => {
      expect(readQuantity(q(28), 'fraction')).toMatchObject({ kind: 'ok', value: 0.28 });
      expect(readQuantity(q(0.28), 'fraction')).toMatchObject({ kind: 'ok', value: 0.28 });
    });

    it.each([
      [q(6, 'mg'), 'mm[Hg]'],
      [q(6), 'mm[Hg]'],
      [q(2, 'L/min'), 'fraction'],
      [q(7.3, 'mmHg'), 'pH'],
      [q(9, 'mmol/L'), 'g/dL'], // Hb in mmol/L needs a molar mass, not a unit conversion
    ] as const)('says %j cannot be read in %s', (quantity, to) => {
      expect(readQuantity(quantity, to).kind).toBe('unreadable-unit');
    });
  });
});
