import { describe, expect, it } from 'vitest';
import { readRangeAsTarget, readTargetExtension } from '../../src/fhir/read-order-target.js';
import { quantity } from './helpers/larkspur-bay.js';

const TARGET_URL = 'https://oxygen-order-checker.example.org/fhir/StructureDefinition/target-oxygen-saturation';

describe('readTargetExtension', () => {
  it('reads our extension from the first holder that has it', () => {
    const holders = [
      { extension: [{ url: 'urn:other', valueString: 'x' }] },
      { extension: [{ url: TARGET_URL, valueRange: { low: quantity(88, '%'), high: quantity(92, '%') } }] }, // BTS 2017, Table 4
    ];
    expect(readTargetExtension(holders, 'MedicationRequest/m')).toStrictEqual({ range: { lowPercent: 88, highPercent: 92 }, notes: [] });
  });

  it('reads the extension under the private URN it had before version 0.2, so older drafts keep their target', () => {
    const retired = 'urn:oxygen-order-checker:fhir:StructureDefinition:target-oxygen-saturation';
    const holders = [{ extension: [{ url: retired, valueRange: { low: quantity(88, '%'), high: quantity(92, '%') } }] }]; // BTS 2017, Table 4
    expect(readTargetExtension(holders, 'ServiceRequest/s').range).toStrictEqual({ lowPercent: 88, highPercent: 92 });
  });

  it('names itself with an http(s) canonical URL, as FHIR requires of an extension', () => {
    // FHIR R4 Extension.url and StructureDefinition.url: an absolute canonical URL (FHIR R4, Extensibility).
    expect(new URL(TARGET_URL).protocol).toBe('https:');
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
