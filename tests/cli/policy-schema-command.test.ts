import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Ajv from 'ajv';
import { describe, expect, it } from 'vitest';
import { parse as parseYaml } from 'yaml';
import { runCommandLine } from './cli-harness.js';

const presetText = (name: string): string => readFileSync(new URL(`../../policies/${name}`, import.meta.url), 'utf8');
const PRESETS = ['based-on-bts-2017.yaml', 'based-on-tsanz-2015.yaml'];

async function schema(...args: string[]): Promise<Record<string, unknown>> {
  const run = await runCommandLine(['policy', 'schema', ...args]);
  expect(run.code).toBe(0);
  return JSON.parse(run.stdout) as Record<string, unknown>;
}

/**
 * ajv 6 (the devDependency) reads JSON Schema draft-07 and earlier. The draft-07 schema is checked
 * with it directly; the 2020-12 schema is checked to be the same apart from its `$schema`, so the
 * same keywords carry the same meaning in both (it uses none that changed between the drafts).
 */
function validator(json: Record<string, unknown>): (data: unknown) => boolean {
  const ajv = new Ajv({ allErrors: true });
  const check = ajv.compile(json);
  return (data) => check(data) === true;
}

describe('oxygen-order-checker policy schema', () => {
  it('prints a draft 2020-12 schema by default, the same as draft-07 apart from the draft named', async () => {
    const latest = await schema();
    const draft7 = await schema('--draft', '07');
    expect(latest['$schema']).toBe('https://json-schema.org/draft/2020-12/schema');
    expect(draft7['$schema']).toBe('http://json-schema.org/draft-07/schema#');
    const { $schema: _a, ...latestRest } = latest;
    const { $schema: _b, ...draft7Rest } = draft7;
    expect(latestRest).toStrictEqual(draft7Rest);
  });

  it.each(PRESETS)('accepts the preset %s', async (name) => {
    const valid = validator(await schema('--draft', '07'));
    expect(valid(parseYaml(presetText(name)))).toBe(true);
  });

  it('lets keys with a default be left out, as the service does', async () => {
    const valid = validator(await schema('--draft', '07'));
    const policy = parseYaml(presetText('based-on-bts-2017.yaml')) as Record<string, unknown>;
    const { population: _p, specialConditions: _s, titrationReview: _t, severity: _sev, disabledRules: _d, acknowledgements: _a, ...required } = policy;
    expect(valid(required)).toBe(true);
  });

  describe('refuses what the service refuses', () => {
    const cases: readonly [string, (p: Record<string, Record<string, unknown>>) => void][] = [
      ['an unknown top-level key', (p) => void Object.assign(p, { criticalSpo2: 85 })],
      ['an unknown key in a section', (p) => void Object.assign(p['thresholds'] ?? {}, { criticalSpo2Below: 85 })],
      ['a string where a number belongs', (p) => void Object.assign(p['thresholds'] ?? {}, { criticalSpo2BelowPercent: '85' })],
      // ISO 80601-2-61: oximeter accuracy is stated over 70-100 %, the bounds the format allows.
      ['a target bound below 70 %', (p) => void Object.assign(p['targets'] ?? {}, { standard: { lowPercent: 60, highPercent: 98 } })],
      ['a pressure unit it does not know', (p) => void Object.assign(p['thresholds'] ?? {}, { nivPaco2Above: { value: 6.5, unit: 'kpa' } })],
      ['a required key missing', (p) => void delete p['cautions']],
    ];
    it.each(cases)('%s', async (_what, spoil) => {
      const valid = validator(await schema('--draft', '07'));
      const policy = parseYaml(presetText('based-on-bts-2017.yaml')) as Record<string, Record<string, unknown>>;
      expect(valid(policy)).toBe(true);
      spoil(policy);
      expect(valid(policy)).toBe(false);
    });
  });

  it('writes the schema to --out FILE, the same as it prints', async () => {
    const file = join(mkdtempSync(join(tmpdir(), 'oxygen-order-checker-schema-')), 'policy.schema.json');
    const run = await runCommandLine(['policy', 'schema', '--out', file]);
    expect(run.code).toBe(0);
    expect(run.stdout).toBe('');
    expect(JSON.parse(readFileSync(file, 'utf8'))).toStrictEqual(await schema());
  });

  it('refuses an unknown draft and a stray argument with exit 2', async () => {
    const draft = await runCommandLine(['policy', 'schema', '--draft', '04']);
    expect(draft.code).toBe(2);
    expect(draft.stderr).toContain('--draft: must be 2020-12 or 07');
    const stray = await runCommandLine(['policy', 'schema', 'policy.schema.json']);
    expect(stray.code).toBe(2);
    expect(stray.stderr).toContain('use --out FILE');
  });
});
