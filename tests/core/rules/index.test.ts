import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseCardTemplate, placeholderNames } from '../../../src/cds/card-templates.js';
import { RULES } from '../../../src/core/rules/index.js';
import type { Rule } from '../../../src/core/rules/support/rule-types.js';
import type { Finding } from '../../../src/core/types.js';
import { expectCardRenders } from './card-check.js';

const root = new URL('../../../', import.meta.url);
const ruleFiles = readdirSync(new URL('src/core/rules/', root))
  .filter((name) => name.endsWith('.ts') && name !== 'index.ts')
  .map((name) => name.replace(/\.ts$/, ''))
  .sort();
const ids = RULES.map((r) => r.id);
const basis = readFileSync(new URL('docs/clinical-basis.md', root), 'utf8');
const KEBAB = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;

describe('RULES', () => {
  it('registers every rule file exactly once', () => {
    expect([...ids].sort()).toStrictEqual(ruleFiles);
    expect(new Set(ids).size).toBe(ids.length);
  });

  it.each(ruleFiles)('%s exports a rule whose id is its file name', async (file) => {
    const module = (await import(`../../../src/core/rules/${file}.ts`)) as { rule: Rule };
    expect(module.rule.id).toBe(file);
    expect(RULES).toContain(module.rule);
    expect(file).toMatch(KEBAB);
  });

  it.each(RULES.map((r) => [r.id, r] as const))('%s has a title, a version, hooks and a documented rationale', (id, rule) => {
    expect(rule.title.length).toBeGreaterThan(0);
    expect(Number.isInteger(rule.version) && rule.version >= 1).toBe(true);
    expect(rule.hooks.length).toBeGreaterThan(0);
    const text = readFileSync(new URL(`src/core/rules/${id}.ts`, root), 'utf8');
    expect(text).toMatch(/\/\*\*[\s\S]*?(Source|Sources):[\s\S]*?\*\/\s*export const rule/);
  });

  it('gives order-select only the cheap order-level rules', () => {
    const onSelect = RULES.filter((r) => r.hooks.includes('order-select')).map((r) => r.id).sort();
    expect(onSelect).toStrictEqual([
      'adult-checks-only',
      'carbon-monoxide-oximetry',
      'cluster-headache-oxygen',
      'duplicate-oxygen-order',
      'flow-outside-device-range',
      'lower-range-without-risk',
      'oxygen-toxicity-target',
      'pneumothorax-oxygen',
      'target-above-hypercapnic-range',
      'target-ambiguous',
      'target-differs-from-policy',
      'target-one-sided',
      'target-range-missing',
      'uncontrolled-oxygen-at-risk',
      'venturi-flow-insufficient',
    ]);
    // Every rule but the titration review's own runs at signing.
    const reviewOnly = ['time-below-target', 'time-above-target-on-oxygen', 'ready-to-step-down', 'blood-gas-overdue'];
    expect(RULES.filter((r) => !r.hooks.includes('order-sign')).map((r) => r.id)).toStrictEqual(reviewOnly);
  });

  it('gives patient-view the titration review, the failing-support and rising-need checks and the partial-data card', () => {
    const onView = RULES.filter((r) => r.hooks.includes('patient-view')).map((r) => r.id).sort();
    expect(onView).toStrictEqual([
      'acute-hypercapnic-acidosis',
      'blood-gas-overdue',
      'escalated-support-failing',
      'ready-to-step-down',
      'required-data-unavailable',
      'rising-oxygen-need',
      'time-above-target-on-oxygen',
      'time-below-target',
    ]);
  });

  it.each(ids)('%s has a card template that parses, with kebab-case override codes', (id) => {
    const parsed = parseCardTemplate(readFileSync(new URL(`cards/${id}.yaml`, root), 'utf8'));
    expect(parsed.kind).toBe('ok');
    if (parsed.kind !== 'ok') return;
    expect(parsed.template.overrideReasons.length).toBeGreaterThanOrEqual(1);
    expect(parsed.template.overrideReasons.length).toBeLessThanOrEqual(4);
    expect(parsed.template.overrideReasons.every((r) => KEBAB.test(r.code))).toBe(true);
    expect(placeholderNames(parsed.template.summary).length + placeholderNames(parsed.template.detail).length).toBeGreaterThan(0);
  });

  it('has no card template without a rule', () => {
    const cards = readdirSync(new URL('cards/', root)).filter((n) => n.endsWith('.yaml')).map((n) => n.replace(/\.yaml$/, ''));
    expect(cards.sort()).toStrictEqual([...ids].sort());
  });

  it.each(ids)('%s has a section in docs/clinical-basis.md', (id) => {
    expect(basis).toMatch(new RegExp(`^### \`${id}\`$`, 'm'));
  });

  it.each(ids)('%s has a test file that renders each finding with its card', (id) => {
    const test = readFileSync(new URL(`tests/core/rules/${id}.test.ts`, root), 'utf8');
    expect(test).toContain(`from '../../../src/core/rules/${id}.js'`);
    expect(test).toContain('expectCardRenders(');
  });

  describe('edge cases', () => {
    it('the card check fails a finding that lacks a placeholder value', () => {
      const finding: Finding = {
        ruleId: 'target-range-missing',
        ruleVersion: 1,
        indicator: 'warning',
        orderReference: undefined,
        values: { advisedRange: '94–98 %' },
        computations: [],
        sourceKeys: ['bts-2017'],
        change: undefined,
      };
      expect(() => expectCardRenders(finding)).toThrow();
    });

    it('the card check fails a source key the policy does not define', () => {
      const finding: Finding = {
        ruleId: 'no-recent-spo2',
        ruleVersion: 1,
        indicator: 'info',
        orderReference: undefined,
        values: { freshnessWindow: '4 h', lastSpo2: 'none within the window' },
        computations: [],
        sourceKeys: ['not-a-reference'],
        change: undefined,
      };
      expect(() => expectCardRenders(finding)).toThrow();
    });
  });
});
