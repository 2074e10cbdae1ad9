import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { RULES } from '../../src/core/rules/index.js';
import {
  defaultIndicatorOf,
  nearest,
  registeredRuleIds,
  RETIRED_RULE_IDS,
  SOMETIMES_CRITICAL_RULE_IDS,
} from '../../src/policy/rule-ids.js';

const basis = readFileSync(new URL('../../docs/clinical-basis.md', import.meta.url), 'utf8');

/** The rows of the "Retired rule ids" table: id and the rule that replaced it. */
function retiredInDocs(): Record<string, string> {
  const section = basis.split('## Retired rule ids')[1]?.split('\n## ')[0] ?? '';
  const rows = [...section.matchAll(/^\| `([a-z0-9-]+)` \|[^|]*\| `([a-z0-9-]+)`/gm)];
  return Object.fromEntries(rows.map((m) => [m[1] ?? '', m[2] ?? '']));
}

describe('rule ids a policy may name', () => {
  it('are the registry ids, each with its default indicator', () => {
    expect(registeredRuleIds()).toStrictEqual(RULES.map((r) => r.id));
    for (const rule of RULES) expect(defaultIndicatorOf(rule.id)).toBe(rule.defaultIndicator);
    expect(defaultIndicatorOf('pregnancy-oxygen')).toBeUndefined();
  });

  it('know the same retired ids as docs/clinical-basis.md, each replaced by a registered rule', () => {
    const docs = retiredInDocs();
    expect(Object.keys(docs).length).toBeGreaterThan(0);
    expect(Object.fromEntries(Object.entries(RETIRED_RULE_IDS).map(([id, r]) => [id, r.replacedBy]))).toStrictEqual(docs);
    for (const [id, { replacedBy }] of Object.entries(RETIRED_RULE_IDS)) {
      expect(registeredRuleIds()).not.toContain(id);
      expect(registeredRuleIds()).toContain(replacedBy);
    }
  });
});

describe('rules that are sometimes critical', () => {
  it('are exactly the rules, not critical by default, whose source writes a critical indicator', () => {
    const writesCritical = RULES.filter((rule) => {
      const text = readFileSync(new URL(`../../src/core/rules/${rule.id}.ts`, import.meta.url), 'utf8');
      return /indicator:[^,\n]*'critical'/.test(text) && rule.defaultIndicator !== 'critical';
    }).map((rule) => rule.id);
    expect([...SOMETIMES_CRITICAL_RULE_IDS].sort()).toStrictEqual(writesCritical.sort());
  });
});

describe('nearest', () => {
  const ids = RULES.map((r) => r.id);

  it('finds the id a slip of one or two keystrokes was meant to be', () => {
    expect(nearest('news2-scale2', ids)).toBe('news2-scale-2');
    expect(nearest('spo2-below-targt', ids)).toBe('spo2-below-target');
    expect(nearest('acute-hypercapnic-acidoss', ids)).toBe('acute-hypercapnic-acidosis');
  });

  it('finds the one candidate that contains a shortened name', () => {
    expect(nearest('criticalSpo2Below', ['criticalSpo2BelowPercent', 'criticalPointsBelowTarget'])).toBe('criticalSpo2BelowPercent');
  });

  it('suggests nothing for a word far from every candidate', () => {
    expect(nearest('ventilator-alarm', ids)).toBeUndefined();
    expect(nearest('x', ids)).toBeUndefined();
  });
});
