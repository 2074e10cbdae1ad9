import { describe, expect, it } from 'vitest';
import { sameFinding } from '../../src/core/same-finding.js';
import type { Finding, OrderChange } from '../../src/core/types.js';

/**
 * The engine keeps a finding once when two subject orders' runs make it twice. These findings are
 * shapes only: their values are display strings, not clinical check values.
 */

function finding(overrides: Partial<Finding> = {}): Finding {
  return {
    ruleId: 'target-above-hypercapnic-range',
    ruleVersion: 1,
    indicator: 'critical',
    orderReference: 'MedicationRequest/o2-draft-1',
    values: { orderedRange: '94–98 %', advisedRange: '88–92 %' },
    computations: [],
    sourceKeys: ['bts2017'],
    change: { kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } },
    ...overrides,
  };
}

const CHANGES: readonly (OrderChange | undefined)[] = [
  undefined,
  { kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } },
  { kind: 'set-target', range: { lowPercent: 88, highPercent: 93 } },
  { kind: 'set-target', range: { lowPercent: 94, highPercent: 98 } },
  { kind: 'set-flow', flowLPerMin: 2 },
  { kind: 'set-flow', flowLPerMin: 4 },
  { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4 },
  { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 },
  { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 6, setFio2Fraction: 0.28 },
  { kind: 'set-device', device: 'nasal-cannula', flowLPerMin: 4 },
  { kind: 'stop-oxygen' },
];
const VALUES: readonly Readonly<Record<string, string>>[] = [
  {},
  { orderedRange: '94–98 %' },
  { orderedRange: '94–98 %', advisedRange: '88–92 %' },
  { orderedRange: '94–98 %', advisedRange: '88–93 %' },
  { orderedRange: '94–98 %', other: '88–92 %' },
];
const RULE_IDS = ['target-above-hypercapnic-range', 'spo2-below-target'];
const REFERENCES = [undefined, 'MedicationRequest/o2-draft-1', 'MedicationRequest/o2-draft-2'];

/** Every combination of rule, order, values and change, built twice over so no two share objects. */
function everyFinding(): Finding[] {
  return RULE_IDS.flatMap((ruleId) =>
    REFERENCES.flatMap((orderReference) =>
      VALUES.flatMap((values) =>
        CHANGES.map((change) =>
          finding({ ruleId, orderReference, values: { ...values }, change: change === undefined ? undefined : structuredClone(change) }),
        ),
      ),
    ),
  );
}

/** The key the engine used before: equal strings meant the same finding. */
function stringKey(f: Finding): string {
  return JSON.stringify([f.ruleId, f.orderReference, f.values, f.change ?? null]);
}

describe('sameFinding', () => {
  it('treats findings with the same rule, order, values and change as the same, whatever objects hold them', () => {
    const a = everyFinding();
    const b = everyFinding();
    a.forEach((f, i) => expect(sameFinding(f, b[i] as Finding)).toBe(true));
  });

  it('tells apart findings that differ in rule, order, any value or any part of the change', () => {
    const all = everyFinding();
    const wrong = all.flatMap((a, i) => all.flatMap((b, j) => (sameFinding(a, b) === (i === j) ? [] : [[i, j]])));
    expect(all.length).toBe(RULE_IDS.length * REFERENCES.length * VALUES.length * CHANGES.length);
    expect(wrong).toStrictEqual([]);
  });

  it('agrees with the serialised key it replaces on every pair', () => {
    const all = everyFinding();
    const wrong = all.flatMap((a, i) => all.flatMap((b, j) => (sameFinding(a, b) === (stringKey(a) === stringKey(b)) ? [] : [[i, j]])));
    expect(wrong).toStrictEqual([]);
  });

  it('does not tell findings apart by version, indicator, workings or sources', () => {
    const other = finding({
      ruleVersion: 2,
      indicator: 'warning',
      computations: [{ name: 'n', formula: 'f', substituted: 's', result: 'r', sourceKey: 'bts2017' }],
      sourceKeys: [],
    });
    expect(sameFinding(finding(), other)).toBe(true);
  });

  describe('edge cases', () => {
    it('treats values listed in another order as the same values', () => {
      const reordered = finding({ values: { advisedRange: '88–92 %', orderedRange: '94–98 %' } });
      expect(sameFinding(finding(), reordered)).toBe(true);
    });

    it('tells a change with a set FiO2 from one without', () => {
      const without = finding({ change: { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4 } });
      const withFio2 = finding({ change: { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 } });
      expect(sameFinding(without, withFio2)).toBe(false);
      expect(sameFinding(withFio2, without)).toBe(false);
    });
  });
});
