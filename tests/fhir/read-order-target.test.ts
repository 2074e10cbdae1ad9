import { describe, expect, it } from 'vitest';
import { readRangeAsTarget, readTargetExtension } from '../../src/fhir/read-order-target.js';
import { quantity } from './helpers/larkspur-bay.js';

const URL = 'urn:oxygen-order-checker:fhir:StructureDefinition:target-oxygen-saturation';

describe('readTargetExtension', () => {
  it('reads our extension from the first holder that has it', () => {
    const holders = [
      { extension: [{ url: 'urn:other', valueString: 'x' }] },
      { extension: [{ url: URL, valueRange: { low: quantity(88, '%'), high: quantity(92, '%') } }] }, // BTS 2017, Table 4
    ];
    expect(readTargetExtension(holders, 'MedicationRequest/m')).toStrictEqual({ range: { lowPercent: 88, highPercent: 92 }, notes: [] });
  });

  it('reads a range given as fractions', () => {
    expect(readRangeAsTarget({ low: quantity(0.94, '1'), high: quantity(0.98, '1') }, 'x', 'r').range).toStrictEqual({ lowPercent: 94, highPercent: 98 });
  });

  describe('edge cases', () => {
    it.each([
      [{ low: quantity(88, '%') }, 'unrecognised'],
      [{ low: quantity(88, 'mm[Hg]'), high: quantity(92, 'mm[Hg]') }, 'unrecognised'],
      [{ low: quantity(92, '%'), high: quantity(88, '%') }, 'implausible'],
      [{ low: quantity(40, '%'), high: quantity(60, '%') }, 'implausible'],
      ['88-92', 'unrecognised'],
    ])('sets aside %j as %s', (range, reason) => {
      const read = readRangeAsTarget(range, 'Target SpO2 extension', 'ServiceRequest/s');
      expect(read.range).toBeUndefined();
      expect(read.notes.map((n) => n.reason)).toStrictEqual([reason]);
    });

    it('finds nothing, and notes nothing, without the extension', () => {
      expect(readTargetExtension([{ extension: 'x' }, {}], 'r')).toStrictEqual({ range: undefined, notes: [] });
    });
  });
});
