import { describe, expect, it } from 'vitest';
import {
  interpretBloodGas,
  type BloodGasLimits,
  type BloodGasValues,
} from '../../../src/core/physiology/blood-gas-interpretation.js';
import { convertKnown } from '../../../src/units/convert.js';

// Policy default (policies/based-on-bts-2017.yaml): hypercapnia at or above 6.0 kPa (BTS 2017 clarification,
// Thorax 72:588), converted with UCUM to 45.004 mmHg; acidosis below pH 7.35 (RCEM Learning);
// HCO3 > 28 mmol/L marks long-standing hypercapnia (BTS 2017 as quoted, check-values 3g, V2).
const hypercapniaMmHg = convertKnown(6.0, 'kPa', 'mm[Hg]');
const limits: BloodGasLimits = {
  acidosisPhBelow: 7.35,
  hypercapniaPaco2MmHg: hypercapniaMmHg,
  chronicBicarbonateAboveMmolPerL: 28,
};

// Each gas below is internally consistent by Henderson–Hasselbalch (HCO3 = 0.0307 × PaCO2 ×
// 10^(pH − 6.1), from memory) to within 0.5 mmol/L, so it could come from a real analyser.
function read(gas: BloodGasValues, custom: BloodGasLimits = limits) {
  const result = interpretBloodGas(gas, custom);
  if (result.kind !== 'ok') {
    throw new Error(`expected an interpretation, got unknown: ${result.reason}`);
  }
  return result.value;
}

describe('interpretBloodGas', () => {
  it('reads a normal gas as normal', () => {
    // RCEM Learning normal ranges: pH 7.35–7.45, PaCO2 35–45 mmHg, HCO3 22–26 (check-values 3g, V)
    expect(read({ ph: 7.4, paco2MmHg: 40, hco3MmolPerL: 24 })).toStrictEqual({
      hypercapnic: false,
      acidBase: 'normal',
      metabolicComponent: 'none',
      summary: 'No acid–base disturbance: pH 7.40 with PaCO2 40 mmHg; bicarbonate 24 mmol/L, in range',
    });
  });

  it('reads acute respiratory acidosis: low pH, hypercapnia, bicarbonate not raised', () => {
    // BTS 2017 pathway: pH < 7.35 with PaCO2 > 6.0 kPa (check-values 3g, V2); acute rise expected
    // 24 + 1 per 10 mmHg = 26.2 at 62 mmHg (check-values 3g, V2)
    expect(read({ ph: 7.24, paco2MmHg: 62, hco3MmolPerL: 26 })).toStrictEqual({
      hypercapnic: true,
      acidBase: 'acute-respiratory-acidosis',
      metabolicComponent: 'none',
      summary: 'Acute respiratory acidosis: pH 7.24 with PaCO2 62 mmHg; bicarbonate 26 mmol/L, not raised',
    });
  });

  it('reads partly compensated respiratory acidosis: low pH, bicarbonate raised', () => {
    // acute expectation at 70 mmHg 27 mmol/L (+2 allowance, common practice); 32.5 is beyond it
    // and within 2 of the chronic expectation 34.5 (+3.5 per 10 mmHg, check-values 3g, V2)
    const value = read({ ph: 7.28, paco2MmHg: 70, hco3MmolPerL: 32.5 });
    expect(value.acidBase).toBe('partly-compensated-respiratory-acidosis');
    expect(value.metabolicComponent).toBe('raised-bicarbonate');
    expect(value.hypercapnic).toBe(true);
    expect(value.summary).toBe(
      'Partly compensated respiratory acidosis (bicarbonate at the chronic level: acute-on-chronic): ' +
        'pH 7.28 with PaCO2 70 mmHg; bicarbonate 32.5 mmol/L, raised',
    );
  });

  it('reads partial compensation below the chronic level without calling it acute-on-chronic', () => {
    // PaCO2 80: acute 28, chronic 38 mmol/L (check-values 3g, V2); 30.5 lies between them
    const value = read({ ph: 7.2, paco2MmHg: 80, hco3MmolPerL: 30.5 });
    expect(value.acidBase).toBe('partly-compensated-respiratory-acidosis');
    expect(value.summary).not.toMatch(/acute-on-chronic/);
  });

  it('reads compensated respiratory acidosis: pH in range with hypercapnia and raised bicarbonate', () => {
    // BTS 2017 pathway "compensated hypercapnia": pH ≥ 7.35 with PaCO2 > 6.0 kPa (check-values 3g, V2);
    // HCO3 > 28 with normal pH: long-standing hypercapnia (check-values 3g, V2)
    expect(read({ ph: 7.36, paco2MmHg: 60, hco3MmolPerL: 33.5 })).toStrictEqual({
      hypercapnic: true,
      acidBase: 'compensated-respiratory-acidosis',
      metabolicComponent: 'raised-bicarbonate',
      summary:
        'Compensated respiratory acidosis (bicarbonate suggests long-standing hypercapnia): ' +
        'pH 7.36 with PaCO2 60 mmHg; bicarbonate 33.5 mmol/L, raised',
    });
  });

  it('treats pH exactly 7.35 as not acidaemic', () => {
    // RCEM Learning: normal pH 7.35–7.45 (check-values 3g, V), boundary exact
    expect(read({ ph: 7.35, paco2MmHg: 60, hco3MmolPerL: 33 }).acidBase).toBe(
      'compensated-respiratory-acidosis',
    );
    expect(read({ ph: 7.34, paco2MmHg: 60, hco3MmolPerL: 32.2 }).acidBase).toBe(
      'partly-compensated-respiratory-acidosis',
    );
  });

  it('says when hypercapnia with a pH in range has no raised bicarbonate yet', () => {
    // BTS 2017 pathway: pH ≥ 7.35 with hypercapnia is "compensated"; acute expectation 24.6 + 2
    const value = read({ ph: 7.36, paco2MmHg: 46, hco3MmolPerL: 25.7 });
    expect(value.acidBase).toBe('compensated-respiratory-acidosis');
    expect(value.metabolicComponent).toBe('none');
    expect(value.summary).toMatch(/hypercapnia may be recent/);
  });

  it('notes a possible metabolic alkalosis when hypercapnia comes with pH above 7.40', () => {
    // pH on the alkaline side of 7.40 points to a metabolic primary (common practice)
    const value = read({ ph: 7.43, paco2MmHg: 60, hco3MmolPerL: 39 });
    expect(value.acidBase).toBe('compensated-respiratory-acidosis');
    expect(value.summary).toMatch(/or metabolic alkalosis/);
  });

  it('reads metabolic acidosis with appropriate respiratory compensation', () => {
    // Winters' formula (from memory): expected PaCO2 1.5 × 11.7 + 8 = 25.6 ± 2 mmHg
    expect(read({ ph: 7.25, paco2MmHg: 27, hco3MmolPerL: 11.7 })).toStrictEqual({
      hypercapnic: false,
      acidBase: 'metabolic-acidosis',
      metabolicComponent: 'low-bicarbonate',
      summary: 'Metabolic acidosis: pH 7.25 with PaCO2 27 mmHg; bicarbonate 11.7 mmol/L, low',
    });
  });

  it('reads metabolic acidosis with a PaCO2 above the Winters expectation as mixed', () => {
    // Winters' formula (from memory): expected 1.5 × 15.5 + 8 = 31.3 ± 2; PaCO2 40 is above it
    const value = read({ ph: 7.2, paco2MmHg: 40, hco3MmolPerL: 15.5 });
    expect(value.acidBase).toBe('mixed');
    expect(value.summary).toMatch(/above the expected 31.3 ± 2 mmHg/);
  });

  it('reads hypercapnia with low bicarbonate and low pH as mixed acidosis', () => {
    // RCEM Learning: HCO3 below 22 is low (check-values 3g, V)
    const value = read({ ph: 7.1, paco2MmHg: 50, hco3MmolPerL: 15 });
    expect(value).toMatchObject({
      hypercapnic: true,
      acidBase: 'mixed',
      metabolicComponent: 'low-bicarbonate',
    });
    expect(value.summary).toMatch(/respiratory and metabolic acidosis/);
  });

  it('reads metabolic alkalosis, with hypercapnia as its compensation', () => {
    // RCEM Learning: pH above 7.45 is alkalaemia, HCO3 above 26 raised (check-values 3g, V)
    const value = read({ ph: 7.5, paco2MmHg: 46, hco3MmolPerL: 35 });
    expect(value).toMatchObject({
      hypercapnic: true,
      acidBase: 'metabolic-alkalosis',
      metabolicComponent: 'raised-bicarbonate',
    });
    expect(read({ ph: 7.5, paco2MmHg: 40, hco3MmolPerL: 30.8 }).acidBase).toBe('metabolic-alkalosis');
  });

  it('reads respiratory alkalosis', () => {
    // RCEM Learning: PaCO2 below 35 mmHg (4.67 kPa) is hypocapnia (check-values 3g, V)
    expect(read({ ph: 7.5, paco2MmHg: 30, hco3MmolPerL: 23 })).toStrictEqual({
      hypercapnic: false,
      acidBase: 'respiratory-alkalosis',
      metabolicComponent: 'none',
      summary: 'Respiratory alkalosis: pH 7.50 with PaCO2 30 mmHg; bicarbonate 23 mmol/L, in range',
    });
  });

  it('reads low PaCO2 and high bicarbonate with alkalaemia as mixed alkalosis', () => {
    // RCEM Learning ranges (check-values 3g, V)
    expect(read({ ph: 7.55, paco2MmHg: 30, hco3MmolPerL: 26.2 }).acidBase).toBe('mixed');
  });

  it('splits a fully compensated low-PaCO2, low-bicarbonate gas at pH 7.40', () => {
    // common practice: the side of 7.40 the pH lies on names the primary process
    expect(read({ ph: 7.37, paco2MmHg: 30, hco3MmolPerL: 17 }).acidBase).toBe('metabolic-acidosis');
    expect(read({ ph: 7.44, paco2MmHg: 30, hco3MmolPerL: 20 }).acidBase).toBe('respiratory-alkalosis');
  });

  it('flags a normal gas with bicarbonate above 28 as suggesting long-standing hypercapnia', () => {
    // HCO3 > 28 mmol/L with normal pH (BTS 2017 as quoted, check-values 3g, V2)
    const value = read({ ph: 7.42, paco2MmHg: 44, hco3MmolPerL: 28.5 });
    expect(value.acidBase).toBe('normal');
    expect(value.metabolicComponent).toBe('raised-bicarbonate');
    expect(value.summary).toMatch(/long-standing hypercapnia/);
  });

  it('calculates a missing bicarbonate from pH and PaCO2 and says so', () => {
    // Henderson–Hasselbalch (from memory): 0.0307 × 62 × 10^(7.24 − 6.1) = 26.3 mmol/L
    const value = read({ ph: 7.24, paco2MmHg: 62 });
    expect(value.acidBase).toBe('acute-respiratory-acidosis');
    expect(value.summary).toBe(
      'Acute respiratory acidosis: pH 7.24 with PaCO2 62 mmHg; bicarbonate 26.3 mmol/L ' +
        '(calculated from pH and PaCO2), not raised',
    );
  });

  describe('hypercapnia threshold', () => {
    it('counts PaCO2 exactly at 6.0 kPa (45.004 mmHg via UCUM) as hypercapnia', () => {
      // BTS 2017 clarification, Thorax 72:588: hypercapnia is PaCO2 ≥ 6 kPa (check-values 7, pitfall 7);
      // 6.0 kPa × 7.50062 = 45.004 mmHg (check-values 3b conversion)
      expect(hypercapniaMmHg).toBeCloseTo(45.004, 3);
      const value = read({ ph: 7.34, paco2MmHg: hypercapniaMmHg, hco3MmolPerL: 24 });
      expect(value.hypercapnic).toBe(true);
      expect(value.acidBase).toBe('acute-respiratory-acidosis');
    });

    it('does not count PaCO2 just below 6.0 kPa as hypercapnia', () => {
      // BTS 2017 clarification: at or above 6 kPa; 5.99 kPa is below
      const justBelow = convertKnown(5.99, 'kPa', 'mm[Hg]');
      const value = read({ ph: 7.34, paco2MmHg: justBelow, hco3MmolPerL: 23.9 });
      expect(value.hypercapnic).toBe(false);
      expect(value.acidBase).toBe('mixed');
    });

    it('follows a policy that sets a strict "> 6.0 kPa" threshold a little higher', () => {
      // check-values 7, pitfall 7: "> 6.0 kPa" wording; a policy may choose 45.1 mmHg
      const strict = { ...limits, hypercapniaPaco2MmHg: 45.1 };
      const gas = { ph: 7.34, paco2MmHg: hypercapniaMmHg, hco3MmolPerL: 24 };
      expect(read(gas, strict).hypercapnic).toBe(false);
    });
  });

  describe('configurable bicarbonate range', () => {
    it('uses 22–26 mmol/L by default and accepts the RCEM 23–28 range', () => {
      // check-values 7, pitfall 6: 22–26 in most references, 23–28 in RCEM Learning
      const gas = { ph: 7.32, paco2MmHg: 34, hco3MmolPerL: 17.3 };
      expect(read(gas).metabolicComponent).toBe('low-bicarbonate');
      const borderline = { ph: 7.4, paco2MmHg: 37, hco3MmolPerL: 22.5 };
      expect(read(borderline).metabolicComponent).toBe('none');
      const rcem = { ...limits, lowBicarbonateBelowMmolPerL: 23, highBicarbonateAboveMmolPerL: 28 };
      expect(read(borderline, rcem).metabolicComponent).toBe('low-bicarbonate');
      const high = { ph: 7.45, paco2MmHg: 40, hco3MmolPerL: 27.4 };
      expect(read(high).metabolicComponent).toBe('raised-bicarbonate');
      expect(read(high, rcem).metabolicComponent).toBe('none');
    });
  });

  describe('edge cases', () => {
    it('is unknown with missing pH', () => {
      expect(interpretBloodGas({ paco2MmHg: 40, hco3MmolPerL: 24 }, limits)).toStrictEqual({
        kind: 'unknown',
        reason: 'missing ph',
        missing: ['ph'],
      });
    });

    it('is unknown with missing PaCO2 and pH, naming both', () => {
      expect(interpretBloodGas({ hco3MmolPerL: 24 }, limits)).toStrictEqual({
        kind: 'unknown',
        reason: 'missing ph, paco2MmHg',
        missing: ['ph', 'paco2MmHg'],
      });
    });

    it('treats NaN as missing', () => {
      const result = interpretBloodGas({ ph: Number.NaN, paco2MmHg: 40 }, limits);
      expect(result.kind === 'unknown' && result.missing).toStrictEqual(['ph']);
    });

    it.each([
      [{ ph: 0, paco2MmHg: 40, hco3MmolPerL: 24 }],
      [{ ph: -7.4, paco2MmHg: 40, hco3MmolPerL: 24 }],
      [{ ph: 8.5, paco2MmHg: 40, hco3MmolPerL: 24 }],
      [{ ph: 7.4, paco2MmHg: 0, hco3MmolPerL: 24 }],
      [{ ph: 7.4, paco2MmHg: -40, hco3MmolPerL: 24 }],
      [{ ph: 7.4, paco2MmHg: 40, hco3MmolPerL: 0 }],
      [{ ph: 7.4, paco2MmHg: 40, hco3MmolPerL: -24 }],
    ])('is unknown for impossible values %o', (gas) => {
      const result = interpretBloodGas(gas, limits);
      expect(result.kind).toBe('unknown');
      expect(result.kind === 'unknown' && result.reason).toMatch(/must be from/);
    });

    it('is unknown when a kPa PaCO2 was passed as mmHg and the values disagree', () => {
      // Henderson–Hasselbalch (from memory): pH 7.30 with "6.5 mmHg" implies HCO3 3.2, not 30
      const result = interpretBloodGas({ ph: 7.3, paco2MmHg: 6.5, hco3MmolPerL: 30 }, limits);
      expect(result.kind).toBe('unknown');
      expect(result.kind === 'unknown' && result.reason).toMatch(/do not agree/);
    });
  });

  it('writes PaCO2 to one decimal place at most, as toFixed(1) rounds it, near ties included', () => {
    // The summary's figures are display text: toFixed(1) without a trailing zero (ECMA-262,
    // Number.prototype.toFixed). pH 7.40 keeps each gas in range; the bicarbonate is calculated.
    for (let tenths = 350; tenths <= 800; tenths += 1) {
      for (const paco2 of [tenths / 10, tenths / 10 + 0.05, tenths / 10 + 0.04999]) {
        const { summary } = read({ ph: 7.4, paco2MmHg: paco2 });
        expect(summary).toContain(`PaCO2 ${String(Number(paco2.toFixed(1)))} mmHg`);
      }
    }
  });
});

