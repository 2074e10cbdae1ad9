import { describe, expect, it } from 'vitest';
import { convertUnit, normaliseUnit } from '../../src/units/convert.js';

describe('convertUnit', () => {
  it.each([
    // check-values.md: 1 kPa = 7.50062 mmHg (status V); UCUM defines mm[Hg] as 133.322 Pa, giving
    // 7.50064, so the tolerance is 5e-5
    [1, 'kPa', 'mm[Hg]', 7.50062, 4],
    // check-values.md: 1 mmHg = 0.133322 kPa (status V)
    [1, 'mm[Hg]', 'kPa', 0.133322, 6],
    // UCUM: % is 1/100 of the unity 1 (common practice: FiO2 28 % = 0.28)
    [28, '%', '1', 0.28, 9],
  ] as const)('converts %d %s to %s', (value, from, to, expected, digits) => {
    const result = convertUnit(value, from, to);
    expect(result.kind).toBe('ok');
    expect(result.kind === 'ok' && result.value).toBeCloseTo(expected, digits);
  });

  describe('edge cases', () => {
    // Found by the HTTP fuzz suite (tests/http/fuzz*.test.ts): a Quantity.code of `constructor`
    // reached Object.prototype through the alias table, and the UCUM library threw on the result
    // and on strings such as `toString`, which became a 500.
    it.each(['constructor', '__proto__', 'toString', 'hasOwnProperty', 'valueOf', 'isPrototypeOf'])(
      'reads the unit %s as no unit at all, without throwing',
      (unit) => {
        expect(normaliseUnit(unit)).toBeUndefined();
        expect(convertUnit(95, unit, '%')).toStrictEqual({ kind: 'failed', reason: `'${unit}' is not a UCUM unit` });
        expect(convertUnit(95, '%', unit)).toStrictEqual({ kind: 'failed', reason: `'${unit}' is not a UCUM unit` });
      },
    );

    // The UCUM library prints a unit string it fails to parse with console.log; tests/setup.ts fails
    // any test that writes to the console, so this also checks nothing of the request reaches stdout.
    it.each(['| a | b |\n|---|---|', '()', 'mm()Hg', '4()2~'])('reads %j as no unit, printing nothing', (unit) => {
      expect(normaliseUnit(unit)).toBeUndefined();
      expect(convertUnit(95, unit, '%').kind).toBe('failed');
    });

    it('still knows its own aliases', () => {
      expect(normaliseUnit('mmHg')).toBe('mm[Hg]'); // UCUM spells it mm[Hg] (toolchain.md)
      expect(normaliseUnit('LPM')).toBe('L/min');
    });
  });
});
