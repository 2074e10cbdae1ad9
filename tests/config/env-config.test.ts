import { describe, expect, it } from 'vitest';
import { bundledPath } from '../../src/config/package-root.js';
import { ENV_DEFAULTS, formatEnvProblems, parseEnvConfig } from '../../src/config/env-config.js';

describe('parseEnvConfig', () => {
  it('gives the documented defaults when nothing is set', () => {
    const result = parseEnvConfig({}, '/srv/o2check');
    expect(result).toStrictEqual({
      kind: 'ok',
      config: {
        host: '127.0.0.1', // project default: loopback only
        port: 8080, // project default
        policyPath: bundledPath('policies', 'bts-2017.yaml'),
        cardsDir: bundledPath('cards'),
        logLevel: 'info',
        bodyLimitBytes: 1_048_576, // project default: 1 MiB
        corsOrigins: '*', // CDS Hooks 2.0 §Security › CORS: credential-free demo only
        fhir: { callTimeoutMs: 1500, budgetMs: 2500, maxResponseBytes: 2_097_152, maxPages: 5 },
      },
    });
  });

  it('resolves the bundled defaults to files that ship with the package', () => {
    expect(ENV_DEFAULTS.O2CHECK_POLICY.endsWith('/policies/bts-2017.yaml')).toBe(true);
    expect(ENV_DEFAULTS.O2CHECK_CARDS_DIR.endsWith('/cards')).toBe(true);
  });

  it('reads every variable it knows', () => {
    const result = parseEnvConfig(
      {
        HOST: '0.0.0.0',
        PORT: '9090',
        O2CHECK_POLICY: 'local/larkspur-bay.yaml',
        O2CHECK_CARDS_DIR: '/etc/o2check/cards',
        LOG_LEVEL: 'warn',
        O2CHECK_BODY_LIMIT_BYTES: '65536',
        O2CHECK_CORS_ORIGINS: 'https://ehr.larkspur-bay.example, https://test.larkspur-bay.example:8443',
        O2CHECK_FHIR_CALL_TIMEOUT_MS: '400',
        O2CHECK_FHIR_BUDGET_MS: '900',
        O2CHECK_FHIR_MAX_RESPONSE_BYTES: '4096',
        O2CHECK_FHIR_MAX_PAGES: '2',
      },
      '/srv/o2check',
    );
    expect(result).toStrictEqual({
      kind: 'ok',
      config: {
        host: '0.0.0.0',
        port: 9090,
        policyPath: '/srv/o2check/local/larkspur-bay.yaml',
        cardsDir: '/etc/o2check/cards',
        logLevel: 'warn',
        bodyLimitBytes: 65_536,
        corsOrigins: ['https://ehr.larkspur-bay.example', 'https://test.larkspur-bay.example:8443'],
        fhir: { callTimeoutMs: 400, budgetMs: 900, maxResponseBytes: 4096, maxPages: 2 },
      },
    });
  });

  it('freezes the result, nested objects included', () => {
    const result = parseEnvConfig({ O2CHECK_CORS_ORIGINS: 'https://ehr.larkspur-bay.example' }, '/');
    if (result.kind !== 'ok') throw new Error('expected ok');
    expect(Object.isFrozen(result.config)).toBe(true);
    expect(Object.isFrozen(result.config.fhir)).toBe(true);
    expect(Object.isFrozen(result.config.corsOrigins)).toBe(true);
  });

  it('lists every problem, each under its variable name', () => {
    const result = parseEnvConfig(
      {
        PORT: '80x',
        LOG_LEVEL: 'loud',
        O2CHECK_FHIR_MAX_PAGES: '0',
        O2CHECK_CORS_ORIGINS: 'https://ehr.larkspur-bay.example/path',
      },
      '/',
    );
    expect(result).toStrictEqual({
      kind: 'invalid',
      problems: [
        { variable: 'PORT', message: 'must be a whole number from 0 to 65535' },
        {
          variable: 'LOG_LEVEL',
          message: 'must be one of fatal, error, warn, info, debug, trace, silent',
        },
        {
          variable: 'O2CHECK_CORS_ORIGINS',
          message:
            "'https://ehr.larkspur-bay.example/path' is not an origin (scheme://host[:port], no path or trailing slash)",
        },
        { variable: 'O2CHECK_FHIR_MAX_PAGES', message: 'must be a whole number from 1 to 100' },
      ],
    });
  });

  describe('edge cases', () => {
    it('treats an empty variable as unset', () => {
      const result = parseEnvConfig({ PORT: '', HOST: '  ' }, '/');
      if (result.kind !== 'ok') throw new Error('expected ok');
      expect(result.config.port).toBe(8080);
      expect(result.config.host).toBe('127.0.0.1');
    });

    it('accepts port 0, which asks the system for a free port', () => {
      const result = parseEnvConfig({ PORT: '0' }, '/');
      if (result.kind !== 'ok') throw new Error('expected ok');
      expect(result.config.port).toBe(0);
    });

    it.each(['-1', '65536', '8080.5', '1e3'])('refuses PORT=%s', (port) => {
      const result = parseEnvConfig({ PORT: port }, '/');
      expect(result.kind).toBe('invalid');
    });

    it('refuses an overall FHIR budget shorter than one call', () => {
      const result = parseEnvConfig(
        { O2CHECK_FHIR_CALL_TIMEOUT_MS: '2000', O2CHECK_FHIR_BUDGET_MS: '1000' },
        '/',
      );
      expect(result).toStrictEqual({
        kind: 'invalid',
        problems: [
          { variable: 'O2CHECK_FHIR_BUDGET_MS', message: 'must not be below O2CHECK_FHIR_CALL_TIMEOUT_MS' },
        ],
      });
    });

    it('formats problems one a line', () => {
      expect(
        formatEnvProblems([
          { variable: 'PORT', message: 'must be a whole number from 0 to 65535' },
          { variable: 'LOG_LEVEL', message: 'must be one of fatal' },
        ]),
      ).toBe('PORT: must be a whole number from 0 to 65535\nLOG_LEVEL: must be one of fatal');
    });
  });
});
