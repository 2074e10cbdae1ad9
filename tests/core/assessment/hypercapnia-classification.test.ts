import { describe, expect, it } from 'vitest';
import { pickCurrentValues } from '../../../src/core/assessment/current-values.js';
import { readCompensation } from '../../../src/core/assessment/hypercapnia-classification.js';
import { assessHypercapnicRisk } from '../../../src/core/assessment/hypercapnic-risk.js';
import type { HypercapniaClassification } from '../../../src/core/assessment/types.js';
import type { Policy } from '../../../src/core/policy.js';
import type { BloodGas, ConditionKind, Facts } from '../../../src/core/types.js';
import { BTS, NOW, bloodGas, buildFacts, condition } from '../facts-builder.js';

function classify(facts: Facts, policy: Policy = BTS): HypercapniaClassification {
  return assessHypercapnicRisk(facts, policy, pickCurrentValues(facts, policy, NOW), NOW).classification;
}

/** HCO3 from pH and PCO2 by Henderson–Hasselbalch (pK 6.1, 0.0307 mmol/L per mmHg; from memory). */
function hendersonHasselbalchHco3(ph: number, paco2Kpa: number): number {
  const mmHg = paco2Kpa * 7.50062; // 1 kPa = 7.50062 mmHg (UCUM)
  return 0.0307 * mmHg * 10 ** (ph - 6.1);
}

/** A gas whose reported HCO3 agrees with its pH and PCO2, as an analyser reports it. */
function consistentGas(ph: number, paco2Kpa: number, specimen: BloodGas['specimen'] = 'arterial'): BloodGas {
  const hco3 = Math.round(hendersonHasselbalchHco3(ph, paco2Kpa) * 10) / 10;
  return bloodGas({ ageMinutes: 30, specimen, ph, paco2Kpa, pao2Kpa: 8.5, hco3 });
}

const withConditions = (gas: BloodGas, kinds: readonly ConditionKind[] = []): Facts =>
  buildFacts({ bloodGases: [gas], conditions: kinds.map((k) => condition(k)) });

describe('classifyHypercapnia (through assessHypercapnicRisk)', () => {
  describe('tiring patients with no sign of chronic retention are acute', () => {
    it.each<[string, number, number, readonly ConditionKind[]]>([
      // pH < 7.35 acidosis (RCEM); PCO2 >= 6 kPa hypercapnia (BTS 2017 clarification); HCO3 within the
      // acute rise of 1 mmol/L per 10 mmHg (check-values 3g, quoted secondarily)
      ['acute severe asthma', 7.25, 8.0, ['acute-asthma']],
      ['opioid toxicity', 7.22, 8.5, ['sedative-or-opioid-toxicity']],
      ['neuromuscular weakness with no chronic condition on record', 7.31, 6.9, []],
      ['exhaustion in pneumonia', 7.29, 6.6, []],
    ])('%s: pH %s, PCO2 %s kPa', (_, ph, paco2, kinds) => {
      const result = classify(withConditions(consistentGas(ph, paco2), kinds));
      expect(result.kind).toBe('acute');
      expect(result.acidaemic).toBe(true);
      expect(result.chronicEvidence).toStrictEqual([]);
      expect(result.compensation?.raised).toBe(false);
    });

    it('reads very high PCO2 in asthma as acute although HCO3 is above 28', () => {
      // PCO2 10 kPa (75 mmHg): an acute rise alone gives 24 + 3.5 = 27.5 mmol/L (check-values 3g, quoted
      // secondarily), so HCO3 29 is within it (+2, common practice) and is not the BTS "> 28 with normal pH"
      const facts = withConditions(bloodGas({ ageMinutes: 20, ph: 7.2, paco2Kpa: 10, hco3: 29 }), ['acute-asthma']);
      const risk = assessHypercapnicRisk(facts, BTS, pickCurrentValues(facts, BTS, NOW), NOW);
      expect(risk.classification.kind).toBe('acute');
      expect(risk.reasons.map((r) => r.kind)).not.toContain('raised-bicarbonate');
    });

    it('calls hypercapnia with pH still in range and HCO3 within the acute rise acute, not acidaemic', () => {
      // pH 7.36 is within 7.35-7.45 (RCEM); PCO2 6.1 kPa >= 6 kPa (BTS 2017 clarification)
      const result = classify(withConditions(consistentGas(7.36, 6.1)));
      expect(result).toMatchObject({ kind: 'acute', acidaemic: false });
    });
  });

  describe('signs of chronic retention', () => {
    it.each<[string, readonly ConditionKind[]]>([
      ['COPD', ['copd']], // BTS 2017, Table 4
      ['neuromuscular disease', ['neuromuscular-disease']], // BTS 2017, Table 4
      ['previous NIV', ['previous-niv-or-imv']], // BTS 2017, Tables 2-4
      ['chronic hypercapnic failure', ['chronic-hypercapnic-respiratory-failure']],
    ])('make an acidaemic hypercapnic gas acute-on-chronic: %s', (_, kinds) => {
      const result = classify(withConditions(consistentGas(7.25, 8.0), kinds));
      expect(result.kind).toBe('acute-on-chronic');
      expect(result.chronicEvidence.length).toBeGreaterThan(0);
    });

    it('reads COPD with pH 7.30, PCO2 9.0 kPa and HCO3 at the chronic level as acute-on-chronic', () => {
      // Chronic rise 3.5 mmol/L per 10 mmHg (check-values 3g, quoted secondarily): expected about 33.6
      const result = classify(withConditions(consistentGas(7.3, 9.0), ['copd']));
      expect(result.kind).toBe('acute-on-chronic');
      expect(result.compensation?.raised).toBe(true);
    });

    it('reads a raised bicarbonate alone, in a patient with no history, as a sign of chronic retention', () => {
      // An undiagnosed retainer: HCO3 beyond the acute rise is renal compensation (check-values 3g)
      expect(classify(withConditions(consistentGas(7.3, 9.0))).kind).toBe('acute-on-chronic');
    });

    it('reads a normal pH with raised HCO3 as chronic compensated', () => {
      // BTS 2017 pathway as taught (quoted secondarily): pH >= 7.35 with PaCO2 > 6 kPa is compensated
      const result = classify(withConditions(consistentGas(7.38, 7.5), ['copd']));
      expect(result).toMatchObject({ kind: 'chronic-compensated', acidaemic: false });
      expect(classify(withConditions(consistentGas(7.38, 7.5))).kind).toBe('chronic-compensated');
    });

    it('counts an earlier hypercapnic gas as history', () => {
      const facts = buildFacts({
        bloodGases: [consistentGas(7.27, 7.6)],
        historicBloodGases: [bloodGas({ ageMinutes: 400 * 24 * 60, ph: 7.3, paco2Kpa: 7.9 })],
      });
      expect(classify(facts).kind).toBe('acute-on-chronic');
    });
  });

  describe('edge cases', () => {
    it('has nothing to classify without a gas, or below 6 kPa', () => {
      // BTS 2017 clarification: hypercapnia is PaCO2 >= 6 kPa
      expect(classify(buildFacts()).kind).toBe('no-current-gas');
      expect(classify(withConditions(bloodGas({ ageMinutes: 10, ph: 7.3, paco2Kpa: 5.99 }))).kind).toBe('not-hypercapnic');
      expect(classify(withConditions(bloodGas({ ageMinutes: 10, ph: 7.3, paco2Kpa: 6.0, hco3: 22 }))).kind).toBe('acute');
    });

    it('treats pH exactly 7.35 as not acidaemic', () => {
      // RCEM: normal pH 7.35-7.45
      const result = classify(withConditions(bloodGas({ ageMinutes: 10, ph: 7.35, paco2Kpa: 6.2, hco3: 25 })));
      expect(result).toMatchObject({ kind: 'acute', acidaemic: false });
      expect(classify(withConditions(bloodGas({ ageMinutes: 10, ph: 7.34, paco2Kpa: 6.2, hco3: 25 }))).acidaemic).toBe(true);
    });

    it.each([
      // PCO2 60 mmHg: acute expectation 26 mmol/L (check-values 3g), raised above 26 + 2 (common practice)
      [28, false],
      [28.1, true],
    ])('at PCO2 60 mmHg reads HCO3 %s as raised: %s', (hco3, raised) => {
      const gas = bloodGas({ ageMinutes: 10, ph: 7.3, paco2MmHg: 60, hco3 });
      expect(readCompensation(gas)?.raised).toBe(raised);
    });

    it.each([
      // Base excess normal range -2 to +2 mmol/L (RCEM Learning)
      [2, false, 'acute'],
      [2.5, true, 'acute-on-chronic'],
    ])('uses a base excess of %s when no HCO3 is reported (raised: %s)', (be, raised, kind) => {
      const gas: BloodGas = { ...bloodGas({ ageMinutes: 10, ph: 7.3, paco2Kpa: 7 }), baseExcessMmolPerL: be };
      expect(readCompensation(gas)).toMatchObject({ measure: 'base-excess', raised });
      expect(classify(withConditions(gas)).kind).toBe(kind);
    });

    it('calculates HCO3 from pH and PCO2 when neither HCO3 nor base excess is reported', () => {
      const gas = bloodGas({ ageMinutes: 10, ph: 7.25, paco2Kpa: 8 });
      const reading = readCompensation(gas);
      expect(reading?.measure).toBe('calculated-bicarbonate');
      expect(reading?.raised).toBe(false);
    });

    it('cannot tell acute from chronic without a pH', () => {
      const result = classify(withConditions(bloodGas({ ageMinutes: 10, paco2Kpa: 7.5, hco3: 26 })));
      expect(result).toMatchObject({ kind: 'timing-unknown', acidaemic: undefined });
    });

    it('classifies a venous gas the same way', () => {
      expect(classify(withConditions(consistentGas(7.28, 7.4, 'venous'))).kind).toBe('acute');
    });
  });
});
