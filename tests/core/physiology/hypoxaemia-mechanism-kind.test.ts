import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  hypoxaemiaMechanism,
  hypoxaemiaMechanismKind,
  type HypoxaemiaMechanismInput,
  type HypoxaemiaMechanismKind,
} from '../../../src/core/physiology/hypoxaemia-mechanism.js';

/**
 * The kind alone is read at the ends of an FiO2 range (gas-physiology.ts), so it must be the kind the
 * full mechanism names, or the same "can't tell" with the same reason, for any input: in range, out
 * of range, missing, with or without an earlier gas. An invariant, no check values.
 */
const input: fc.Arbitrary<HypoxaemiaMechanismInput> = fc.record(
  {
    // Ranges reach past the physiology's valid inputs at both ends so the unknowns are covered too.
    inspiredPo2MmHg: fc.oneof(fc.double({ min: 10, max: 700, noNaN: true }), fc.constant(Number.NaN)),
    aaGradientMmHg: fc.double({ min: -30, max: 600, noNaN: true }),
    expectedAaGradientMmHg: fc.double({ min: 0, max: 40, noNaN: true }),
    paco2MmHg: fc.double({ min: 2, max: 150, noNaN: true }),
    hypercapniaPaco2MmHg: fc.constantFrom(45, 45.004),
    fio2Fraction: fc.double({ min: 0.15, max: 1, noNaN: true }),
    pao2MmHg: fc.double({ min: 5, max: 500, noNaN: true }),
    previous: fc.record({
      fio2Fraction: fc.double({ min: 0.15, max: 1, noNaN: true }),
      pao2MmHg: fc.double({ min: 5, max: 500, noNaN: true }),
    }),
  },
  { requiredKeys: ['inspiredPo2MmHg', 'aaGradientMmHg', 'expectedAaGradientMmHg', 'paco2MmHg', 'hypercapniaPaco2MmHg', 'fio2Fraction', 'pao2MmHg'] },
);

/**
 * One input of each kind, checked before the generated ones: most generated inputs fall outside the
 * physiology's valid ranges, and a kind as narrow as shunt-likely can go unreached in a run of 3,000,
 * so these keep every kind checked whatever the seed. Air at sea level (FiO2 0.21, PIO2 about
 * 150 mmHg), hypercapnia from 45 mmHg (BTS 2017, common practice); the rest are inputs chosen to land
 * in each branch, not check values.
 */
const AIR: HypoxaemiaMechanismInput = {
  inspiredPo2MmHg: 150,
  aaGradientMmHg: 5,
  expectedAaGradientMmHg: 10,
  paco2MmHg: 40,
  hypercapniaPaco2MmHg: 45,
  fio2Fraction: 0.21,
  pao2MmHg: 95,
};
const ONE_OF_EACH_KIND: readonly HypoxaemiaMechanismInput[] = [
  AIR, // none
  { ...AIR, paco2MmHg: 60, pao2MmHg: 70 }, // hypoventilation
  { ...AIR, aaGradientMmHg: 40, pao2MmHg: 60 }, // vq-mismatch-shunt-or-diffusion
  { ...AIR, aaGradientMmHg: 40, paco2MmHg: 60, pao2MmHg: 45 }, // hypoventilation-plus-gradient
  { ...AIR, inspiredPo2MmHg: 110, paco2MmHg: 35, pao2MmHg: 60 }, // low-inspired-po2
  // shunt-likely: FiO2 0.4 → 0.6 raised PaO2 by 5 mmHg, under 20 % of the alveolar rise
  { ...AIR, fio2Fraction: 0.6, inspiredPo2MmHg: 428, aaGradientMmHg: 300, pao2MmHg: 70, previous: { fio2Fraction: 0.4, pao2MmHg: 65 } },
  { ...AIR, inspiredPo2MmHg: Number.NaN }, // unknown
];

describe('hypoxaemiaMechanismKind', () => {
  it('names the kind the full mechanism names, or the same unknown, for any input', () => {
    const seen = new Set<HypoxaemiaMechanismKind | 'unknown'>();
    fc.assert(
      fc.property(input, (given) => {
        const full = hypoxaemiaMechanism(given);
        const kindOnly = hypoxaemiaMechanismKind(given);
        if (full.kind === 'unknown') {
          expect(kindOnly).toEqual(full);
          seen.add('unknown');
        } else {
          expect(kindOnly).toEqual({ kind: 'ok', value: { kind: full.value.kind } });
          seen.add(full.value.kind);
        }
      }),
      { numRuns: 3000, examples: ONE_OF_EACH_KIND.map((given) => [given]) },
    );
    // The generated inputs reach every kind the judgement can give, so none went unchecked.
    for (const kind of [
      'unknown',
      'low-inspired-po2',
      'hypoventilation',
      'vq-mismatch-shunt-or-diffusion',
      'shunt-likely',
      'hypoventilation-plus-gradient',
      'none',
    ] as const) {
      expect(seen.has(kind), kind).toBe(true);
    }
  });
});
