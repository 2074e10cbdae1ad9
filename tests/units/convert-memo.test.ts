import ucum from '@lhncbc/ucum-lhc';
import { describe, expect, it } from 'vitest';
import { convertUnit, normaliseUnit } from '../../src/units/convert.js';

/**
 * Unit answers are remembered per unit string (src/units/convert.ts, UnitMemo). These tests check the
 * remembered answers against the UCUM library asked directly, for every unit the FHIR readers accept
 * and some they refuse. The values converted are sample numbers, not clinical check values.
 */

const library = ucum.UcumLhcUtils.getInstance();

/** UCUM codes the readers accept (src/fhir/read-quantity.ts and read-observation-values.ts). */
const UCUM_CODES = ['%', '1', 'L/min', 'mL/min', '/min', 'mm[Hg]', 'kPa', 'mmol/L', 'meq/L', 'g/dL', 'g/L', 'kg/m2', '[pH]', 'L', 'g', 'mg', '{pill}', 'min-1'];
/** Display spellings mapped before UCUM sees them, with the code each stands for. */
const ALIASES: readonly (readonly [string, string])[] = [
  ['mmHg', 'mm[Hg]'],
  ['mm Hg', 'mm[Hg]'],
  ['torr', 'mm[Hg]'],
  ['KPA', 'kPa'],
  ['l/min', 'L/min'],
  ['LPM', 'L/min'],
  ['breaths/min', '/min'],
  ['{breaths}/min', '/min'],
  ['percent', '%'],
  ['', '1'],
  ['  %  ', '%'],
];
const NOT_UNITS = ['L/mn', 'sats', 'mmHgg', '%%', 'constructor', '__proto__', 'toString'];
const VALUES = [0, 0.21, 1, 2, 7.2, 28, 88.5, 95, 100, 1e6];

/** The library's own answer to "is this a unit", quietly (it logs what it cannot parse). */
function libraryCode(unit: string): string | undefined {
  const log = console.log;
  console.log = () => undefined;
  try {
    const check = library.validateUnitString(unit.trim());
    return check.status === 'valid' ? (check.ucumCode ?? unit.trim()) : undefined;
  } catch {
    return undefined;
  } finally {
    console.log = log;
  }
}

describe('remembered unit answers', () => {
  it('give each UCUM code the library gives it, the first time and every time after', () => {
    const asked = UCUM_CODES.map((unit) => [unit, normaliseUnit(unit), normaliseUnit(unit), normaliseUnit(` ${unit} `)]);
    expect(asked).toStrictEqual(UCUM_CODES.map((unit) => [unit, libraryCode(unit), libraryCode(unit), libraryCode(unit)]));
    expect(asked.every(([, code]) => code !== undefined)).toBe(true);
  });

  it('give each display alias its UCUM code and refuse what is no unit, every time', () => {
    for (let round = 0; round < 3; round += 1) {
      expect(ALIASES.map(([unit]) => normaliseUnit(unit))).toStrictEqual(ALIASES.map(([, code]) => code));
      expect(NOT_UNITS.map((unit) => normaliseUnit(unit))).toStrictEqual(NOT_UNITS.map(() => undefined));
    }
  });

  it('convert every pair of accepted units to exactly the number the library gives, or fail where it fails', () => {
    const mismatches: string[] = [];
    let converted = 0;
    for (let round = 0; round < 2; round += 1) {
      for (const from of UCUM_CODES) {
        for (const to of UCUM_CODES) {
          for (const value of VALUES) {
            const ours = convertUnit(value, from, to);
            const direct = from === to ? { status: 'succeeded', toVal: value } : library.convertUnitTo(from, value, to);
            const expected = direct.status === 'succeeded' && direct.toVal !== null && Number.isFinite(direct.toVal) ? direct.toVal : undefined;
            const actual = ours.kind === 'ok' ? ours.value : undefined;
            if (!Object.is(actual, expected)) {
              mismatches.push(`${value} ${from} → ${to}: ${String(actual)} vs ${String(expected)}`);
            }
            converted += actual === undefined ? 0 : 1;
          }
        }
      }
    }
    expect(mismatches).toStrictEqual([]);
    // Enough pairs convert for the comparison to mean something (kPa ↔ mm[Hg], % ↔ 1, L/min ↔ mL/min …).
    expect(converted).toBeGreaterThan(UCUM_CODES.length * VALUES.length * 2);
  });

  describe('edge cases', () => {
    it('does not let a failed conversion of a value that is not a number stand for the pair', () => {
      expect(convertUnit(Number.NaN, 'mL/min', 'L/min').kind).toBe('failed');
      const after = convertUnit(500, 'mL/min', 'L/min');
      expect(after).toStrictEqual({ kind: 'ok', value: library.convertUnitTo('mL/min', 500, 'L/min').toVal });
    });

    it('converts a pair on an offset scale alike the first time and after, as the library does', () => {
      // Celsius to Fahrenheit is not a plain ratio: 37 Cel is 98.6 [degF] (common practice).
      const values = [37, -40, 0, 100, 41.5];
      const first = values.map((value) => convertUnit(value, 'Cel', '[degF]'));
      const again = values.map((value) => convertUnit(value, 'Cel', '[degF]'));
      const direct = values.map((value) => ({ kind: 'ok', value: library.convertUnitTo('Cel', value, '[degF]').toVal }));
      expect(first).toStrictEqual(direct);
      expect(again).toStrictEqual(direct);
      expect(first[0]?.kind === 'ok' ? first[0].value : undefined).toBeCloseTo(98.6, 6); // common practice
      expect(first[1]?.kind === 'ok' ? first[1].value : undefined).toBeCloseTo(-40, 6); // common practice: -40 °C is -40 °F
    });

    it('answers alike once more unit strings have been sent than it remembers', () => {
      const before = ['mm[Hg]', 'kPa', 'L/min', 'mmHg'].map((unit) => normaliseUnit(unit));
      for (let i = 0; i < 2500; i += 1) {
        normaliseUnit(`x${i}`);
      }
      expect(['mm[Hg]', 'kPa', 'L/min', 'mmHg'].map((unit) => normaliseUnit(unit))).toStrictEqual(before);
      expect(convertUnit(1, 'kPa', 'mm[Hg]')).toStrictEqual({ kind: 'ok', value: library.convertUnitTo('kPa', 1, 'mm[Hg]').toVal });
    });
  });
});
