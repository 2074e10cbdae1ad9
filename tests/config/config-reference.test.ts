import { readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { z } from 'zod';
import { describe, expect, it } from 'vitest';
import { buildConfigReference, renderConfigReference, SERVICE_SOURCES, type ReferenceSources } from '../../src/config/config-reference.js';
import { ENV_DEFAULTS, KNOWN_VARIABLES, parseEnvConfig } from '../../src/config/env-config.js';

const ROOT = resolve(import.meta.dirname, '../..');

function serviceReference() {
  const reference = buildConfigReference();
  if (reference.kind !== 'ok') {
    // The problems name each variable and the file to fill in, so the failure says what to do.
    throw new Error(`the configuration reference is incomplete:\n${reference.problems.join('\n')}`);
  }
  return reference.variables;
}

describe('the configuration reference', () => {
  it('describes every variable the service reads (a new one needs its entry in src/config/variable-docs.ts)', () => {
    const reference = buildConfigReference();
    expect(reference.kind === 'incomplete' ? reference.problems : []).toStrictEqual([]);
  });

  it('lists every known variable, and every default of ENV_DEFAULTS, exactly once', () => {
    const names = serviceReference().map((v) => v.name);
    expect(new Set(names).size).toBe(names.length);
    for (const name of [...KNOWN_VARIABLES, ...Object.keys(ENV_DEFAULTS)]) {
      expect(names).toContain(name);
    }
  });

  it('docs/configuration.md is the generated reference (run `npm run docs:config` after changing a variable)', () => {
    const onDisk = readFileSync(join(ROOT, 'docs', 'configuration.md'), 'utf8');
    expect(onDisk).toBe(renderConfigReference(serviceReference()));
  });

  it('gives the defaults the parser really applies to an empty environment', () => {
    const parsed = parseEnvConfig({}, ROOT);
    expect(parsed.kind).toBe('ok');
    const byName = new Map(serviceReference().map((v) => [v.name, v]));
    // The documented default of each variable, read back through the parser, is what an unset one gives.
    const expected: Record<string, unknown> = {
      PORT: parsed.kind === 'ok' ? parsed.config.port : undefined,
      OXYGEN_CHECKER_MAX_CONCURRENT: parsed.kind === 'ok' ? parsed.config.maxConcurrentEvaluations : undefined,
      OXYGEN_CHECKER_FHIR_BUDGET_MS: parsed.kind === 'ok' ? parsed.config.fhir.budgetMs : undefined,
      OXYGEN_CHECKER_BEHIND_TLS: parsed.kind === 'ok' ? parsed.config.behindTls : undefined,
    };
    for (const [name, value] of Object.entries(expected)) {
      expect(byName.get(name)?.meta?.default, name).toBe(value);
    }
  });

  it('marks the secret files, and gives every duration, size and period a unit', () => {
    const variables = serviceReference();
    expect(variables.filter((v) => v.secret !== undefined).map((v) => v.name).sort()).toStrictEqual([
      'DATABASE_URL',
      'OXYGEN_CHECKER_PATIENT_KEY_FILE',
      'OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE',
    ]);
    for (const v of variables.filter((item) => /_(MS|S|BYTES|DAYS|MIN)$/.test(item.name))) {
      expect(v.unit, v.name).not.toBe('');
    }
  });

  describe('a variable added to the parser later', () => {
    const base: ReferenceSources = {
      schemaShape: { PORT: SERVICE_SOURCES.schemaShape['PORT'] ?? z.string() },
      otherVariables: [],
      defaults: {},
      docs: { PORT: { group: 'Service', description: 'The port.' } },
      packageRoot: ROOT,
    };
    const added = z.string().optional().meta({ kind: 'integer', default: 7, min: 1, max: 9 });

    it('is refused, by name and with the file to fill in, until it has a description', () => {
      const reference = buildConfigReference({ ...base, schemaShape: { ...base.schemaShape, OXYGEN_CHECKER_NEW_THING_MS: added } });
      expect(reference).toStrictEqual({
        kind: 'incomplete',
        problems: [
          'OXYGEN_CHECKER_NEW_THING_MS has no description: add an entry for it to VARIABLE_DOCS in src/config/variable-docs.ts, then run npm run docs:config',
        ],
      });
    });

    it('is listed with its type, default and unit from the parser once it has one', () => {
      const reference = buildConfigReference({
        ...base,
        schemaShape: { ...base.schemaShape, OXYGEN_CHECKER_NEW_THING_MS: added },
        docs: { ...base.docs, OXYGEN_CHECKER_NEW_THING_MS: { group: 'Service', description: 'A new wait.' } },
      });
      expect(reference.kind).toBe('ok');
      const row = reference.kind === 'ok' ? reference.variables.find((v) => v.name === 'OXYGEN_CHECKER_NEW_THING_MS') : undefined;
      expect(row).toMatchObject({ type: 'whole number 1–9', defaultText: '`7`', unit: 'milliseconds', description: 'A new wait.' });
      expect(renderConfigReference(reference.kind === 'ok' ? reference.variables : [])).toContain(
        '| `OXYGEN_CHECKER_NEW_THING_MS` | whole number 1–9 | `7` | milliseconds |  | A new wait. |',
      );
    });

    it('offers the _FILE form for a secret value', () => {
      const reference = buildConfigReference({
        ...base,
        schemaShape: { ...base.schemaShape, DATABASE_URL: z.string().optional().meta({ kind: 'text', default: '' }) },
        docs: { ...base.docs, DATABASE_URL: { group: 'Store', description: 'The database.', secret: 'value' } },
      });
      expect(renderConfigReference(reference.kind === 'ok' ? reference.variables : [])).toContain('secret; or `DATABASE_URL_FILE`');
    });

    it('is refused when only its description is left after the parser dropped it', () => {
      const reference = buildConfigReference({ ...base, docs: { ...base.docs, OXYGEN_CHECKER_GONE: { group: 'Store', description: 'Old.' } } });
      expect(reference.kind === 'incomplete' ? reference.problems : []).toStrictEqual([
        'OXYGEN_CHECKER_GONE is described in src/config/variable-docs.ts but no parser reads it: remove its entry',
      ]);
    });
  });
});
