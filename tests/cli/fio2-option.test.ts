import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { readFio2Text } from '../../src/cli/fio2-option.js';

describe('readFio2Text', () => {
  it('reads a number up to 1 as a fraction and a number above 1 as a percentage', () => {
    // Room air is FiO2 0.21, i.e. 21 % (common practice); 28 % is a Venturi setting (check-values 2a)
    expect(readFio2Text(0.21)).toStrictEqual({ fraction: 0.21 });
    expect(readFio2Text(21)).toStrictEqual({ fraction: 0.21 });
    expect(readFio2Text(28)).toStrictEqual({ fraction: 0.28 });
    expect(readFio2Text(1)).toStrictEqual({ fraction: 1 });
    expect(readFio2Text(100)).toStrictEqual({ fraction: 1 });
  });

  it('gives the same fraction for any FiO2 written either way', () => {
    fc.assert(
      fc.property(fc.integer({ min: 2100, max: 10_000 }), (hundredths) => {
        const percent = hundredths / 100;
        const fraction = hundredths / 10_000;
        expect(readFio2Text(percent)).toStrictEqual(readFio2Text(fraction));
        expect('fraction' in readFio2Text(percent)).toBe(true);
      }),
    );
  });

  it('refuses what is neither form, naming both forms', () => {
    fc.assert(
      fc.property(
        fc.oneof(
          fc.double({ min: 0, max: 0.2099, noNaN: true }),
          fc.double({ min: 1.0001, max: 20.99, noNaN: true }),
          fc.double({ min: 100.01, max: 1e6, noNaN: true }),
        ),
        (value) => {
          const read = readFio2Text(value);
          expect('problem' in read ? read.problem : '').toMatch(/0\.28.*\b28\b/);
        },
      ),
    );
  });
});
