import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePolicyObject, parsePolicyText } from '../../src/policy/parse-policy.js';
import { parse as parseYaml } from 'yaml';

const btsText = readFileSync(new URL('../../policies/based-on-bts-2017.yaml', import.meta.url), 'utf8');
const tsanzText = readFileSync(new URL('../../policies/based-on-tsanz-2015.yaml', import.meta.url), 'utf8');

describe('parsePolicyText', () => {
  it('accepts the bundled BTS 2017 policy with its published targets', () => {
    const result = parsePolicyText(btsText);
    expect(result.kind).toBe('ok');
    if (result.kind !== 'ok') return;
    // BTS 2017, Tables 1-3 (94-98 %) and Table 4 (88-92 %)
    expect(result.policy.targets.standard).toStrictEqual({ lowPercent: 94, highPercent: 98 });
    expect(result.policy.targets.hypercapnicRisk).toStrictEqual({ lowPercent: 88, highPercent: 92 });
    // BTS 2017, Table 3: paraquat and bleomycin 85-88 % (V2)
    expect(result.policy.targets.oxygenToxicityRisk).toStrictEqual({ lowPercent: 85, highPercent: 88 });
    expect(Object.isFrozen(result.policy.targets.standard)).toBe(true);
  });

  it('accepts the TSANZ 2015 preset with 92-96 % for most patients', () => {
    const result = parsePolicyText(tsanzText);
    expect(result.kind).toBe('ok');
    if (result.kind !== 'ok') return;
    // TSANZ 2015, Respirology 20:1182
    expect(result.policy.targets.standard).toStrictEqual({ lowPercent: 92, highPercent: 96 });
    expect(result.policy.basisKey).toBe('tsanz-2015');
  });

  it('converts the kPa hypercapnia threshold to mmHg with UCUM', () => {
    const result = parsePolicyText(btsText);
    if (result.kind !== 'ok') throw new Error('bundled policy invalid');
    // 6.0 kPa x 7.50062 mmHg/kPa = 45.0 mmHg (check-values 3b conversion factor)
    expect(result.policy.hypercapnicRisk.hypercapniaPaco2.mmHg).toBeCloseTo(45.004, 2);
    expect(result.policy.hypercapnicRisk.hypercapniaPaco2.display).toBe('6 kPa');
  });

  describe('edge cases', () => {
    it('lists every problem with its path, not only the first', () => {
      const raw = parseYaml(btsText) as Record<string, any>;
      raw.targets.standard.lowPercent = 99;
      raw.thresholds.highOxygenFio2AtLeast = 4;
      raw.unexpected = true;
      const result = parsePolicyObject(raw);
      expect(result.kind).toBe('invalid');
      if (result.kind !== 'invalid') return;
      const paths = result.problems.map((p) => p.path);
      expect(paths).toContain('targets.standard');
      expect(paths).toContain('thresholds.highOxygenFio2AtLeast');
      expect(paths).toContain('unexpected');
    });

    it('refuses a basis that names no reference', () => {
      const raw = parseYaml(btsText) as Record<string, any>;
      raw.basis = 'nowhere';
      const result = parsePolicyObject(raw);
      expect(result.kind).toBe('invalid');
      if (result.kind !== 'invalid') return;
      expect(result.problems.map(({ path, message }) => ({ path, message }))).toStrictEqual([
        { path: 'basis', message: "'nowhere' is not a key of references" },
      ]);
      expect(result.problems[0]?.fix).toContain('bts-2017');
    });

    it('reports unreadable YAML as a problem rather than throwing', () => {
      const result = parsePolicyText('targets: [unclosed');
      expect(result.kind).toBe('invalid');
    });
  });
});

describe('policy cautions', () => {
  it('puts the advisory-only and pulse-oximetry lines first on every card', () => {
    const result = parsePolicyText(btsText);
    if (result.kind !== 'ok') throw new Error('bundled policy invalid');
    expect(result.policy.cautions[0]).toMatch(/^Advisory only/);
    // ISO 80601-2-61: Arms <= 4 % over SaO2 70-100 % (check-values 5, from memory for the figure).
    expect(result.policy.cautions[1]).toContain('ISO 80601-2-61');
  });

  it('refuses a policy that drops the pulse-oximetry caution', () => {
    const raw = parseYaml(btsText) as Record<string, any>;
    delete raw.cautions.pulseOximetry;
    const result = parsePolicyObject(raw);
    expect(result.kind).toBe('invalid');
    if (result.kind !== 'invalid') return;
    expect(result.problems.map((p) => p.path)).toContain('cautions.pulseOximetry');
  });
});

describe('docs/policy.md', () => {
  const docs = readFileSync(new URL('../../docs/policy.md', import.meta.url), 'utf8');

  function keyPaths(value: unknown, prefix: string): string[] {
    if (value === null || typeof value !== 'object' || Array.isArray(value)) {
      return [prefix];
    }
    const entries = Object.entries(value as Record<string, unknown>);
    // Pressures and ranges are documented as one key; references and severities are open maps.
    const leafLike = entries.every(([key]) => ['value', 'unit', 'lowPercent', 'highPercent', 'from', 'to'].includes(key));
    if (prefix !== '' && (leafLike || prefix === 'references' || prefix === 'severity')) {
      return [prefix];
    }
    return entries.flatMap(([key, inner]) => keyPaths(inner, prefix === '' ? key : `${prefix}.${key}`));
  }

  it('documents every key of the bundled policy', () => {
    const paths = keyPaths(parseYaml(btsText), '').filter((path) => path !== 'format');
    const undocumented = paths.filter((path) => !docs.includes(`\`${path}\``) && !docs.includes(`${path}\``));
    expect(undocumented).toStrictEqual([]);
  });
});
