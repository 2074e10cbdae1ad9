import { describe, expect, it } from 'vitest';
import { aaGradientMmHg } from '../../../src/core/physiology/aa-gradient.js';
import { alveolarPo2MmHg } from '../../../src/core/physiology/alveolar-gas.js';
import { barometricPressureIsaMmHg } from '../../../src/core/physiology/barometric-pressure.js';
import { expectedAaGradientMmHg } from '../../../src/core/physiology/expected-aa-gradient.js';
import {
  hypoxaemiaMechanism,
  mechanismAcrossFio2Range,
  LOW_INSPIRED_PO2_BELOW_MMHG,
  SEA_LEVEL_AIR_INSPIRED_PO2_MMHG,
  type HypoxaemiaMechanismInput,
} from '../../../src/core/physiology/hypoxaemia-mechanism.js';
import { inspiredPo2MmHg } from '../../../src/core/physiology/inspired-po2.js';
import { convertKnown } from '../../../src/units/convert.js';

// Hypercapnia at or above 6.0 kPa (BTS 2017 clarification), 45.004 mmHg via UCUM.
const hypercapniaPaco2MmHg = convertKnown(6.0, 'kPa', 'mm[Hg]');

/** Builds the input the way the assessment does: PIO2, PAO2 (simplified) and A-a from the gas. */
function scenario(gas: {
  fio2: number;
  pbMmHg: number;
  paco2: number;
  pao2: number;
  age: number;
  previous?: { fio2Fraction: number; pao2MmHg: number };
}): HypoxaemiaMechanismInput {
  const alveolar = alveolarPo2MmHg({
    fio2Fraction: gas.fio2,
    barometricPressureMmHg: gas.pbMmHg,
    paco2MmHg: gas.paco2,
  });
  return {
    inspiredPo2MmHg: inspiredPo2MmHg(gas.fio2, gas.pbMmHg),
    aaGradientMmHg: aaGradientMmHg(alveolar, gas.pao2),
    expectedAaGradientMmHg: expectedAaGradientMmHg(gas.age),
    paco2MmHg: gas.paco2,
    hypercapniaPaco2MmHg,
    fio2Fraction: gas.fio2,
    pao2MmHg: gas.pao2,
    ...(gas.previous === undefined ? {} : { previous: gas.previous }),
  };
}

function kindOf(input: HypoxaemiaMechanismInput): string {
  const result = hypoxaemiaMechanism(input);
  return result.kind === 'ok' ? result.value.kind : `unknown: ${result.reason}`;
}

function explanationOf(input: HypoxaemiaMechanismInput): string {
  const result = hypoxaemiaMechanism(input);
  return result.kind === 'ok' ? result.value.explanation : `unknown: ${result.reason}`;
}

describe('hypoxaemiaMechanism', () => {
  it('names low inspired PO2 at altitude with a normal gradient and PaCO2', () => {
    // ISA 2000 m: 596.3 mmHg, PIO2 115.3 (check-values 3a/3b, D); A-a 8.3 < 14 at 40 y (common practice)
    const pbMmHg = barometricPressureIsaMmHg(2000);
    const input = scenario({ fio2: 0.21, pbMmHg, paco2: 36, pao2: 62, age: 40 });
    expect(kindOf(input)).toBe('low-inspired-po2');
    expect(explanationOf(input)).toMatch(/Inspired PO2 115.3 mmHg is low/);
  });

  it('names pure hypoventilation: raised PaCO2 with a normal gradient for age', () => {
    // air at sea level, PaCO2 70: PAO2 62.2 (alveolar gas equation, D); A-a 10.2 < 19 at 60 y
    // (age / 4 + 4, common practice)
    const input = scenario({ fio2: 0.21, pbMmHg: 760, paco2: 70, pao2: 52, age: 60 });
    expect(kindOf(input)).toBe('hypoventilation');
  });

  it('names V/Q mismatch, shunt or diffusion limitation for a raised gradient', () => {
    // air, PaCO2 32, PaO2 58: A-a 51.7 > 14 at 40 y (alveolar gas equation, D; age / 4 + 4,
    // common practice)
    expect(kindOf(scenario({ fio2: 0.21, pbMmHg: 760, paco2: 32, pao2: 58, age: 40 }))).toBe(
      'vq-mismatch-shunt-or-diffusion',
    );
  });

  it('names hypoventilation plus a raised gradient', () => {
    // air, PaCO2 60: PAO2 74.7 (check-values 3a, D); PaO2 45 gives A-a 29.7 > 19 at 60 y
    expect(kindOf(scenario({ fio2: 0.21, pbMmHg: 760, paco2: 60, pao2: 45, age: 60 }))).toBe(
      'hypoventilation-plus-gradient',
    );
  });

  it('names no mechanism when gradient, PaCO2 and inspired PO2 are all normal', () => {
    // check-values 3a: air at sea level, PaCO2 40, PaO2 92 gives A-a 7.7 < 14 at 40 y
    expect(kindOf(scenario({ fio2: 0.21, pbMmHg: 760, paco2: 40, pao2: 92, age: 40 }))).toBe('none');
  });

  it('adds low inspired PO2 as a contributor when the gradient is also raised', () => {
    // ISA 2500 m (ICAO Doc 7488): PIO2 about 108 mmHg; A-a 20.3 > 14
    const pbMmHg = barometricPressureIsaMmHg(2500);
    const input = scenario({ fio2: 0.21, pbMmHg, paco2: 34, pao2: 45, age: 40 });
    expect(kindOf(input)).toBe('vq-mismatch-shunt-or-diffusion');
    expect(explanationOf(input)).toMatch(/Low inspired PO2 \(107.8 mmHg\) also contributes/);
  });

  describe('shunt heuristic', () => {
    // Criterion (common practice, our heuristic): PaO2 rose by less than 20 % of the rise in PAO2
    // after FiO2 rose by at least 0.10. From 0.40 to 0.60 at 760 mmHg PAO2 rises 0.2 × 713 = 142.6.
    const current = { fio2: 0.6, pbMmHg: 760, paco2: 40, age: 50 };

    it('calls a shunt likely when more oxygen barely raised PaO2', () => {
      const input = scenario({ ...current, pao2: 62, previous: { fio2Fraction: 0.4, pao2MmHg: 55 } });
      expect(kindOf(input)).toBe('shunt-likely');
      expect(explanationOf(input)).toMatch(/under 20 % of the 143 mmHg rise in alveolar PO2/);
      expect(explanationOf(input)).toMatch(/heuristic/);
    });

    it('does not call a shunt when PaO2 rose well', () => {
      // PaO2 70 → 140 mmHg: a rise of 70, well over 20 % of 142.6 (28.5 mmHg; our heuristic, common practice)
      const input = scenario({ ...current, pao2: 140, previous: { fio2Fraction: 0.4, pao2MmHg: 70 } });
      expect(kindOf(input)).toBe('vq-mismatch-shunt-or-diffusion');
    });

    it('puts the boundary at 20 % of the alveolar rise', () => {
      // 20 % of 142.6 is 28.52 mmHg
      const below = scenario({ ...current, pao2: 55 + 28.4, previous: { fio2Fraction: 0.4, pao2MmHg: 55 } });
      const above = scenario({ ...current, pao2: 55 + 28.7, previous: { fio2Fraction: 0.4, pao2MmHg: 55 } });
      expect(kindOf(below)).toBe('shunt-likely');
      expect(kindOf(above)).toBe('vq-mismatch-shunt-or-diffusion');
    });

    it('counts a rise from 0.50 to 0.60 as the 0.10 needed, despite floating point', () => {
      // 0.6 − 0.5 is 0.09999999999999998 in IEEE 754 doubles; PAO2 rises 0.1 × 713 = 71.3 mmHg
      // (alveolar gas equation, check-values 3a, derived); PaO2 rose 3 mmHg, under 20 % of 71.3
      const input = scenario({ ...current, pao2: 58, previous: { fio2Fraction: 0.5, pao2MmHg: 55 } });
      expect(kindOf(input)).toBe('shunt-likely');
    });

    it('ignores a previous gas when FiO2 rose by less than 0.10', () => {
      // a 0.10 step is the least our shunt heuristic reads (common practice)
      const input = scenario({ ...current, pao2: 56, previous: { fio2Fraction: 0.55, pao2MmHg: 55 } });
      expect(kindOf(input)).toBe('vq-mismatch-shunt-or-diffusion');
    });

    it('ignores a previous gas on a higher FiO2', () => {
      // the response to oxygen is read only from a rise in FiO2 (common practice)
      const input = scenario({ ...current, pao2: 56, previous: { fio2Fraction: 0.8, pao2MmHg: 58 } });
      expect(kindOf(input)).toBe('vq-mismatch-shunt-or-diffusion');
    });
  });

  describe('on oxygen', () => {
    it('widens the age norm by 7 mmHg per 0.10 FiO2 and says the comparison is less reliable', () => {
      // check-values 3a: age norms do not apply on oxygen; allowance 5–7 mmHg per 10 % FiO2 (from memory).
      // FiO2 0.30, PaCO2 40, PaO2 145: A-a 18.9, above 14 on air but within 14 + 6.3 = 20.3
      const input = scenario({ fio2: 0.3, pbMmHg: 760, paco2: 40, pao2: 145, age: 40 });
      expect(kindOf(input)).toBe('none');
      expect(explanationOf(input)).toMatch(/less reliable/);
    });

    it('still finds a clearly raised gradient on oxygen', () => {
      // check-values 3a: FiO2 0.4, PaCO2 40, PaO2 80 gives A-a 155.2
      const input = scenario({ fio2: 0.4, pbMmHg: 760, paco2: 40, pao2: 80, age: 40 });
      expect(kindOf(input)).toBe('vq-mismatch-shunt-or-diffusion');
      expect(explanationOf(input)).toMatch(
        /A-a gradient 155 mmHg against 27 mmHg allowed on FiO2 0.40/,
      );
    });

    it('uses the room-air norm unchanged up to FiO2 0.22', () => {
      // 0.22 allows for the rounding of room air 0.21 (common practice); age / 4 + 4 norm (common practice)
      const input = scenario({ fio2: 0.22, pbMmHg: 760, paco2: 40, pao2: 92, age: 40 });
      expect(explanationOf(input)).toMatch(/expected for age on air/);
    });
  });

  describe('boundaries', () => {
    const base: HypoxaemiaMechanismInput = {
      inspiredPo2MmHg: SEA_LEVEL_AIR_INSPIRED_PO2_MMHG,
      aaGradientMmHg: 14,
      expectedAaGradientMmHg: 14,
      paco2MmHg: 40,
      hypercapniaPaco2MmHg,
      fio2Fraction: 0.21,
      pao2MmHg: 90,
    };

    it('treats a gradient equal to the expectation as normal', () => {
      // age / 4 + 4 is an upper limit of normal (common practice)
      expect(kindOf(base)).toBe('none');
      expect(kindOf({ ...base, aaGradientMmHg: 14.1 })).toBe('vq-mismatch-shunt-or-diffusion');
    });

    it('treats PaCO2 exactly at 6.0 kPa as hypoventilation', () => {
      // BTS 2017 clarification: hypercapnia is PaCO2 ≥ 6 kPa
      expect(kindOf({ ...base, paco2MmHg: hypercapniaPaco2MmHg })).toBe('hypoventilation');
      expect(kindOf({ ...base, paco2MmHg: 44.9 })).toBe('none');
    });

    it('puts low inspired PO2 below 90 % of the sea-level air value (134.8 mmHg)', () => {
      // 0.9 × 0.21 × (760 − 47) = 134.76 (alveolar gas equation constants, our threshold)
      expect(LOW_INSPIRED_PO2_BELOW_MMHG).toBeCloseTo(134.76, 2);
      expect(kindOf({ ...base, inspiredPo2MmHg: LOW_INSPIRED_PO2_BELOW_MMHG })).toBe('none');
      expect(kindOf({ ...base, inspiredPo2MmHg: 134.7 })).toBe('low-inspired-po2');
    });

    it('reaches low inspired PO2 on air only above about 820 m (ISA)', () => {
      // ICAO Doc 7488 ISA pressures, PIO2 = 0.21 × (PB − 47) (check-values 3a/3b, D)
      const onAirAt = (altitudeM: number) => inspiredPo2MmHg(0.21, barometricPressureIsaMmHg(altitudeM));
      expect(kindOf({ ...base, inspiredPo2MmHg: onAirAt(800) })).toBe('none');
      expect(kindOf({ ...base, inspiredPo2MmHg: onAirAt(850) })).toBe('low-inspired-po2');
    });
  });

  describe('edge cases', () => {
    const valid = scenario({ fio2: 0.21, pbMmHg: 760, paco2: 40, pao2: 92, age: 40 });

    it.each([
      ['inspiredPo2MmHg', 0],
      ['inspiredPo2MmHg', -150],
      ['paco2MmHg', 0],
      ['paco2MmHg', -40],
      ['fio2Fraction', 0],
      ['fio2Fraction', 1.5],
      ['pao2MmHg', 0],
      ['expectedAaGradientMmHg', -1],
      ['hypercapniaPaco2MmHg', 0],
    ] as const)('is unknown when %s is %d', (field, value) => {
      // values no living patient can have (valid-ranges.ts; common practice)
      const result = hypoxaemiaMechanism({ ...valid, [field]: value });
      expect(result.kind).toBe('unknown');
      expect(result.kind === 'unknown' && result.reason).toMatch(field);
    });

    it('is unknown, naming the field, when a value is NaN', () => {
      const result = hypoxaemiaMechanism({ ...valid, pao2MmHg: Number.NaN });
      expect(result).toStrictEqual({ kind: 'unknown', reason: 'missing pao2MmHg', missing: ['pao2MmHg'] });
    });

    it('is unknown for a clearly negative gradient, which no patient can have', () => {
      // PaO2 cannot exceed PAO2; beyond -10 mmHg is not measurement error (our threshold, common practice)
      const result = hypoxaemiaMechanism({ ...valid, aaGradientMmHg: -16 });
      expect(result.kind).toBe('unknown');
      expect(result.kind === 'unknown' && result.reason).toMatch(/check the FiO2/);
    });

    it('keeps a decimal when whole numbers would make the gradient equal to its norm', () => {
      // age/4 + 4 = 14 mmHg at 40 (common practice): 14.4 is above it, so never "14 against 14"
      const input = { ...valid, aaGradientMmHg: 14.4, expectedAaGradientMmHg: 14 };
      expect(kindOf(input)).toBe('vq-mismatch-shunt-or-diffusion');
      expect(hypoxaemiaMechanism(input).kind === 'ok' && explanationOf(input)).toMatch(/A-a gradient 14\.4 mmHg against 14 mmHg/);
    });

    it('accepts a small negative gradient as measurement error', () => {
      // -3 mmHg is within the -10 mmHg measurement allowance (common practice)
      expect(kindOf({ ...valid, aaGradientMmHg: -3 })).toBe('none');
    });

    it('is unknown when the previous gas is impossible', () => {
      // FiO2 0 is below room air 0.21: no patient breathes it (common practice)
      const result = hypoxaemiaMechanism({ ...valid, previous: { fio2Fraction: 0, pao2MmHg: 60 } });
      expect(result.kind === 'unknown' && result.reason).toMatch(/^previous gas: /);
    });
  });

  describe('over an estimated FiO2 range', () => {
    // Nasal cannula 3 L/min: rule of 4 0.32 ± 0.05 (FCCS, C / V2); here 0.28-0.37 around 0.33.
    // Sea level 760 mmHg, PaCO2 40 mmHg, age 60 (age/4 + 4 = 19 mmHg; common practice).
    const across = (pao2: number) =>
      mechanismAcrossFio2Range({
        atLow: hypoxaemiaMechanism(scenario({ fio2: 0.28, pbMmHg: 760, paco2: 40, pao2, age: 60 })),
        atEstimate: hypoxaemiaMechanism(scenario({ fio2: 0.33, pbMmHg: 760, paco2: 40, pao2, age: 60 })),
        atHigh: hypoxaemiaMechanism(scenario({ fio2: 0.37, pbMmHg: 760, paco2: 40, pao2, age: 60 })),
        fio2Low: 0.28,
        fio2High: 0.37,
      });

    it('states no mechanism when the gradient is raised at one end of the range and not at the other', () => {
      // alveolar gas equation (D): A-a at 0.28 is 199.6 − 50 − 150 = −0.4, within 19 + 4.9 allowed;
      // at 0.37 it is 263.8 − 50 − 150 = 63.8, above 19 + 11.2 allowed
      const result = across(150);
      expect(result.kind === 'ok' && result.value.kind).toBe('not-determined');
      expect(result.kind === 'ok' && result.value.explanation).toMatch(/no mechanism is stated/);
      expect(result.kind === 'ok' && result.value.explanation).toMatch(/0\.28–0\.37/);
    });

    it('states the mechanism when it holds at both ends and says so', () => {
      // PaO2 60: A-a 89.6 to 153.8 mmHg over the range, raised throughout (alveolar gas equation, D)
      const result = across(60);
      expect(result.kind === 'ok' && result.value.kind).toBe('vq-mismatch-shunt-or-diffusion');
      expect(result.kind === 'ok' && result.value.explanation).toMatch(/Holds across FiO2 0\.28–0\.37\.$/);
    });

    it('passes on an unknown estimate as unknown', () => {
      const unknown = { kind: 'unknown', reason: 'missing pao2MmHg' } as const;
      expect(mechanismAcrossFio2Range({ atLow: unknown, atEstimate: unknown, atHigh: unknown, fio2Low: 0.28, fio2High: 0.37 })).toStrictEqual(
        unknown,
      );
    });
  });
});
