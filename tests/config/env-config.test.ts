import { describe, expect, it } from 'vitest';
import { bundledPath } from '../../src/config/package-root.js';
import { ENV_DEFAULTS, formatEnvProblems, KNOWN_VARIABLES, parseEnvConfig } from '../../src/config/env-config.js';
import { REVIEW_VARIABLES } from '../../src/config/review-config.js';

const PRODUCTION = {
  OXYGEN_CHECKER_MODE: 'production',
  OXYGEN_CHECKER_TRUST: '/etc/oxygen-order-checker/trust.yaml',
  OXYGEN_CHECKER_PUBLIC_URL: 'https://cds.larkspur-bay.example',
};

describe('parseEnvConfig', () => {
  it('gives the documented defaults when nothing is set', () => {
    const result = parseEnvConfig({}, '/srv/oxygen-order-checker');
    expect(result).toStrictEqual({
      kind: 'ok',
      config: {
        host: '127.0.0.1', // project default: loopback only
        port: 8080, // project default
        policyPath: bundledPath('policies', 'based-on-bts-2017.yaml'),
        cardsDir: bundledPath('cards'),
        policyWatch: false, // project default: reload on SIGHUP only
        logLevel: 'info',
        bodyLimitBytes: 1_048_576, // project default: 1 MiB
        corsOrigins: '*', // CDS Hooks 2.0 §Security › CORS: credential-free demo only
        fhir: { callTimeoutMs: 1500, budgetMs: 2000, maxResponseBytes: 2_097_152, maxPages: 5 },
        maxConcurrentEvaluations: 16, // project default (docs/api.md, Robustness)
        maxConcurrentPerClient: 8, // project default: half the shared cap (docs/api.md, Robustness)
        // project default: a fifth of the "on the order of 500 ms" of CDS Hooks 2.0 (docs/api.md, Robustness)
        maxLoopDelayMs: 100,
        // project default: half the "on the order of 500 ms" of CDS Hooks 2.0, the rest for the call's own work
        maxWaitMs: 250,
        shutdownGraceMs: 10_000, // project default
        // project defaults: CDS Hooks 2.0 asks for answers "on the order of 500 ms"; Node's 300 s is far too long
        timeouts: { requestTimeoutMs: 10_000, headersTimeoutMs: 5_000, keepAliveTimeoutMs: 5_000, socketIdleTimeoutMs: 30_000 },
        behindTls: false, // project default: no HSTS until HTTPS is known to be in front
        security: { mode: 'demo' }, // project default: demo mode, authentication off, loopback only
        store: {
          dataDir: '/srv/oxygen-order-checker/data', // project default: ./data under the working directory
          patientKeyFile: undefined, // project default: the secret is created in the data directory
          auditRetentionDays: 400, // project default: a year of review plus margin; local records policy decides
          purgeIntervalMin: 60, // project default
        },
        feedback: { maxItemsPerRequest: 50, maxRecordsPerClientPerDay: 20_000 }, // project defaults
        metrics: true, // demo mode serves /metrics, on loopback only (docs/security.md)
        workers: 1, // one process, no cluster primary (docs/deployment.md)
      },
    });
  });

  it('resolves the bundled defaults to files that ship with the package', () => {
    expect(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY.endsWith('/policies/based-on-bts-2017.yaml')).toBe(true);
    expect(ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR.endsWith('/cards')).toBe(true);
  });

  it('reads every variable it knows', () => {
    const result = parseEnvConfig(
      {
        HOST: '0.0.0.0',
        PORT: '9090',
        OXYGEN_CHECKER_POLICY: 'local/larkspur-bay.yaml',
        OXYGEN_CHECKER_CARDS_DIR: '/etc/oxygen-order-checker/cards',
        OXYGEN_CHECKER_POLICY_WATCH: 'true',
        LOG_LEVEL: 'warn',
        OXYGEN_CHECKER_BODY_LIMIT_BYTES: '65536',
        OXYGEN_CHECKER_CORS_ORIGINS: 'https://ehr.larkspur-bay.example, https://test.larkspur-bay.example:8443',
        OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS: '400',
        OXYGEN_CHECKER_FHIR_BUDGET_MS: '900',
        OXYGEN_CHECKER_FHIR_MAX_RESPONSE_BYTES: '4096',
        OXYGEN_CHECKER_FHIR_MAX_PAGES: '2',
        OXYGEN_CHECKER_MAX_CONCURRENT: '4',
        OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT: '6',
        OXYGEN_CHECKER_MAX_LOOP_DELAY_MS: '250',
        OXYGEN_CHECKER_MAX_WAIT_MS: '400',
        OXYGEN_CHECKER_METRICS: 'on',
        OXYGEN_CHECKER_WORKERS: '2',
        OXYGEN_CHECKER_SHUTDOWN_GRACE_MS: '2500',
        OXYGEN_CHECKER_REQUEST_TIMEOUT_MS: '8000',
        OXYGEN_CHECKER_HEADERS_TIMEOUT_MS: '4000',
        OXYGEN_CHECKER_KEEP_ALIVE_TIMEOUT_MS: '65000',
        OXYGEN_CHECKER_SOCKET_IDLE_TIMEOUT_MS: '20000',
        OXYGEN_CHECKER_BEHIND_TLS: 'true',
        OXYGEN_CHECKER_MODE: 'production',
        OXYGEN_CHECKER_TRUST: 'trust/larkspur-bay-clients.yaml',
        OXYGEN_CHECKER_PUBLIC_URL: 'https://CDS.larkspur-bay.example/',
        OXYGEN_CHECKER_JWT_CLOCK_SKEW_S: '30',
        OXYGEN_CHECKER_JWT_MAX_LIFETIME_S: '600',
        OXYGEN_CHECKER_JWKS_TIMEOUT_MS: '800',
        OXYGEN_CHECKER_JWKS_MAX_BYTES: '16384',
        OXYGEN_CHECKER_JWKS_CACHE_TTL_S: '120',
        OXYGEN_CHECKER_JWKS_REFRESH_MIN_INTERVAL_S: '15',
        OXYGEN_CHECKER_REPLAY_CACHE_MAX_ENTRIES: '5000',
        OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT: '1500',
        OXYGEN_CHECKER_DATA_DIR: 'var/oxygen-order-checker',
        OXYGEN_CHECKER_PATIENT_KEY_FILE: '/etc/oxygen-order-checker/patient-key',
        OXYGEN_CHECKER_AUDIT_RETENTION_DAYS: '730',
        OXYGEN_CHECKER_PURGE_INTERVAL_MIN: '15',
        OXYGEN_CHECKER_FEEDBACK_MAX_ITEMS: '10',
        OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY: '500',
      },
      '/srv/oxygen-order-checker',
    );
    expect(result).toStrictEqual({
      kind: 'ok',
      config: {
        host: '0.0.0.0',
        port: 9090,
        policyPath: '/srv/oxygen-order-checker/local/larkspur-bay.yaml',
        cardsDir: '/etc/oxygen-order-checker/cards',
        policyWatch: true,
        logLevel: 'warn',
        bodyLimitBytes: 65_536,
        corsOrigins: ['https://ehr.larkspur-bay.example', 'https://test.larkspur-bay.example:8443'],
        fhir: { callTimeoutMs: 400, budgetMs: 900, maxResponseBytes: 4096, maxPages: 2 },
        maxConcurrentEvaluations: 4,
        maxConcurrentPerClient: 4, // 6 was asked for: a client's share is at most the shared cap
        maxLoopDelayMs: 250,
        maxWaitMs: 400,
        shutdownGraceMs: 2500,
        timeouts: { requestTimeoutMs: 8000, headersTimeoutMs: 4000, keepAliveTimeoutMs: 65_000, socketIdleTimeoutMs: 20_000 },
        behindTls: true,
        security: {
          mode: 'production',
          trustPath: '/srv/oxygen-order-checker/trust/larkspur-bay-clients.yaml',
          // WHATWG URL: host lower-cased; the trailing slash is dropped so paths can be appended
          publicUrl: 'https://cds.larkspur-bay.example',
          limits: {
            clockSkewS: 30,
            maxTokenLifetimeS: 600,
            jwksTimeoutMs: 800,
            jwksMaxBytes: 16_384,
            jwksCacheTtlS: 120,
            jwksRefreshMinIntervalS: 15,
            replayCacheMaxEntries: 5000,
            replayMaxPerClient: 1500,
          },
        },
        store: {
          dataDir: '/srv/oxygen-order-checker/var/oxygen-order-checker',
          patientKeyFile: '/etc/oxygen-order-checker/patient-key',
          auditRetentionDays: 730,
          purgeIntervalMin: 15,
        },
        feedback: { maxItemsPerRequest: 10, maxRecordsPerClientPerDay: 500 },
        metrics: true,
        workers: 2,
      },
    });
  });

  describe('modes', () => {
    it('serves /metrics in production only when OXYGEN_CHECKER_METRICS is on, and refuses other words', () => {
      const base = { ...PRODUCTION, OXYGEN_CHECKER_POLICY: 'local/larkspur-bay.yaml' };
      const unset = parseEnvConfig(base, '/srv');
      expect(unset.kind === 'ok' && unset.config.metrics).toBe(false);
      const on = parseEnvConfig({ ...base, OXYGEN_CHECKER_METRICS: 'on' }, '/srv');
      expect(on.kind === 'ok' && on.config.metrics).toBe(true);
      const wrong = parseEnvConfig({ ...base, OXYGEN_CHECKER_METRICS: 'yes' }, '/srv');
      expect(wrong.kind === 'invalid' && wrong.problems.map((p) => p.variable)).toStrictEqual(['OXYGEN_CHECKER_METRICS']);
    });

    it('runs one process unless OXYGEN_CHECKER_WORKERS asks for more, and refuses a count outside 1 to 64', () => {
      for (const [text, workers] of [['', 1], ['1', 1], ['2', 2], ['64', 64]] as const) {
        const parsed = parseEnvConfig({ OXYGEN_CHECKER_WORKERS: text }, '/srv');
        expect(parsed.kind === 'ok' && parsed.config.workers).toBe(workers);
      }
      for (const text of ['0', '65', '-1', '2.5', 'two', 'auto']) {
        const parsed = parseEnvConfig({ OXYGEN_CHECKER_WORKERS: text }, '/srv');
        expect(parsed.kind === 'invalid' && parsed.problems.map((p) => p.variable)).toStrictEqual(['OXYGEN_CHECKER_WORKERS']);
      }
    });

    it('sends HSTS in production even when OXYGEN_CHECKER_BEHIND_TLS is not set, and not by default in demo mode', () => {
      // RFC 6797: HSTS tells browsers to use HTTPS only; production requires an https public URL.
      const production = parseEnvConfig(
        {
          OXYGEN_CHECKER_MODE: 'production',
          OXYGEN_CHECKER_POLICY: 'local/larkspur-bay.yaml',
          OXYGEN_CHECKER_TRUST: 'trust.yaml',
          OXYGEN_CHECKER_PUBLIC_URL: 'https://cds.larkspur-bay.example',
        },
        '/srv',
      );
      expect(production.kind === 'ok' && production.config.behindTls).toBe(true);
      const demo = parseEnvConfig({}, '/srv');
      expect(demo.kind === 'ok' && demo.config.behindTls).toBe(false);
    });

    it('refuses production mode without a policy, a trust file or a public URL, naming all three', () => {
      const result = parseEnvConfig({ OXYGEN_CHECKER_MODE: 'production', HOST: '0.0.0.0' }, '/');
      expect(result).toStrictEqual({
        kind: 'invalid',
        problems: [
          {
            variable: 'OXYGEN_CHECKER_POLICY',
            message:
              'production mode needs the local policy file set explicitly; the bundled demo policy is not used in production (see docs/policy.md)',
          },
          {
            variable: 'OXYGEN_CHECKER_TRUST',
            message: 'production mode needs the trust file naming the CDS clients allowed to call (see docs/security.md)',
          },
          {
            variable: 'OXYGEN_CHECKER_PUBLIC_URL',
            message:
              'production mode needs the https base URL clients call, e.g. https://cds.example.org (see docs/security.md)',
          },
        ],
      });
    });

    it.each([
      // CDS Hooks 2.0 §Security and Safety: all endpoints MUST use HTTPS
      ['http://cds.larkspur-bay.example', 'must use https (CDS Hooks 2.0 §Security and Safety)'],
      ['cds.larkspur-bay.example', 'must be an absolute URL such as https://cds.example.org'],
      ['https://cds.larkspur-bay.example/?tenant=north', 'must not carry a query, fragment or user name'],
      [
        'https://cds.larkspur-bay.example/cds-services',
        'must be the base URL, without /cds-services (it is added per call)',
      ],
    ])('refuses OXYGEN_CHECKER_PUBLIC_URL=%s', (publicUrl, message) => {
      const result = parseEnvConfig(
        {
          OXYGEN_CHECKER_MODE: 'production',
          OXYGEN_CHECKER_POLICY: 'local/larkspur-bay.yaml',
          OXYGEN_CHECKER_TRUST: '/etc/oxygen-order-checker/trust.yaml',
          OXYGEN_CHECKER_PUBLIC_URL: publicUrl,
        },
        '/',
      );
      expect(result).toStrictEqual({ kind: 'invalid', problems: [{ variable: 'OXYGEN_CHECKER_PUBLIC_URL', message }] });
    });

    it('keeps a path prefix on the public URL, for a proxy that serves the service under one', () => {
      const result = parseEnvConfig(
        {
          OXYGEN_CHECKER_MODE: 'production',
          OXYGEN_CHECKER_POLICY: 'local/larkspur-bay.yaml',
          OXYGEN_CHECKER_TRUST: '/etc/oxygen-order-checker/trust.yaml',
          OXYGEN_CHECKER_PUBLIC_URL: 'https://apps.larkspur-bay.example/oxygen/',
        },
        '/',
      );
      if (result.kind !== 'ok' || result.config.security.mode !== 'production') throw new Error('expected production');
      expect(result.config.security.publicUrl).toBe('https://apps.larkspur-bay.example/oxygen');
    });

    it.each(['0.0.0.0', '::', '10.20.0.4', 'cds.larkspur-bay.example'])(
      'refuses demo mode on the non-loopback HOST %s',
      (host) => {
        const result = parseEnvConfig({ HOST: host }, '/');
        expect(result).toStrictEqual({
          kind: 'invalid',
          problems: [
            {
              variable: 'HOST',
              message:
                'demo mode has authentication off, so it binds to loopback only (127.0.0.1, ::1 or localhost); ' +
                'to serve other machines set OXYGEN_CHECKER_MODE=production with OXYGEN_CHECKER_TRUST and OXYGEN_CHECKER_PUBLIC_URL (see docs/security.md)',
            },
          ],
        });
      },
    );

    // RFC 1122 §3.2.1.3 (127.0.0.0/8), RFC 4291 §2.5.3 (::1), RFC 6761 §6.3 (localhost)
    it.each(['127.0.0.1', '127.8.9.10', '::1', 'localhost'])('runs demo mode on the loopback HOST %s', (host) => {
      const result = parseEnvConfig({ HOST: host }, '/');
      expect(result.kind === 'ok' ? result.config.security : undefined).toStrictEqual({ mode: 'demo' });
    });

    it('refuses a trust file or public URL given without production mode', () => {
      const result = parseEnvConfig(
        { OXYGEN_CHECKER_TRUST: '/etc/oxygen-order-checker/trust.yaml', OXYGEN_CHECKER_PUBLIC_URL: 'https://cds.larkspur-bay.example' },
        '/',
      );
      const message =
        'is set, but OXYGEN_CHECKER_MODE is not production, so authentication would be off; set OXYGEN_CHECKER_MODE=production';
      expect(result).toStrictEqual({
        kind: 'invalid',
        problems: [
          { variable: 'OXYGEN_CHECKER_TRUST', message },
          { variable: 'OXYGEN_CHECKER_PUBLIC_URL', message },
        ],
      });
    });

    it('refuses an unknown mode', () => {
      const result = parseEnvConfig({ OXYGEN_CHECKER_MODE: 'staging' }, '/');
      expect(result).toStrictEqual({
        kind: 'invalid',
        problems: [{ variable: 'OXYGEN_CHECKER_MODE', message: 'must be one of demo, production' }],
      });
    });
  });

  it('freezes the result, nested objects included', () => {
    const result = parseEnvConfig({ OXYGEN_CHECKER_CORS_ORIGINS: 'https://ehr.larkspur-bay.example' }, '/');
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
        OXYGEN_CHECKER_FHIR_MAX_PAGES: '0',
        OXYGEN_CHECKER_CORS_ORIGINS: 'https://ehr.larkspur-bay.example/path',
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
          variable: 'OXYGEN_CHECKER_CORS_ORIGINS',
          message:
            "'https://ehr.larkspur-bay.example/path' is not an origin (scheme://host[:port], no path or trailing slash)",
        },
        { variable: 'OXYGEN_CHECKER_FHIR_MAX_PAGES', message: 'must be a whole number from 1 to 100' },
      ],
    });
  });

  describe('store and feedback limits', () => {
    it('keeps an absolute data directory as given and resolves a relative key file against the working directory', () => {
      const result = parseEnvConfig({ OXYGEN_CHECKER_DATA_DIR: '/var/lib/oxygen-order-checker', OXYGEN_CHECKER_PATIENT_KEY_FILE: 'keys/patient' }, '/srv');
      expect(result.kind === 'ok' && result.config.store).toStrictEqual({
        dataDir: '/var/lib/oxygen-order-checker',
        patientKeyFile: '/srv/keys/patient',
        auditRetentionDays: 400,
        purgeIntervalMin: 60,
      });
    });

    it.each([
      ['OXYGEN_CHECKER_AUDIT_RETENTION_DAYS', '0'],
      ['OXYGEN_CHECKER_AUDIT_RETENTION_DAYS', '400d'],
      ['OXYGEN_CHECKER_PURGE_INTERVAL_MIN', '0'],
      ['OXYGEN_CHECKER_FEEDBACK_MAX_ITEMS', '0'],
      ['OXYGEN_CHECKER_FEEDBACK_MAX_ITEMS', '-5'],
      ['OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY', '0'],
      ['OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT', '10'],
      ['OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT', 'lots'],
    ])('refuses %s=%s under its own name', (variable, value) => {
      const result = parseEnvConfig({ [variable]: value }, '/srv');
      expect(result.kind).toBe('invalid');
      expect(result.kind === 'invalid' && result.problems.map((p) => p.variable)).toStrictEqual([variable]);
    });

    it('gives the per-client replay share to production mode only, beside the memory cap', () => {
      const production = parseEnvConfig(
        {
          OXYGEN_CHECKER_MODE: 'production',
          OXYGEN_CHECKER_POLICY: 'local/larkspur-bay.yaml',
          OXYGEN_CHECKER_TRUST: 'trust.yaml',
          OXYGEN_CHECKER_PUBLIC_URL: 'https://cds.larkspur-bay.example',
          OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT: '250',
        },
        '/srv',
      );
      const limits = production.kind === 'ok' && production.config.security.mode === 'production'
        ? production.config.security.limits
        : undefined;
      expect(limits?.replayMaxPerClient).toBe(250);
      expect(limits?.replayCacheMaxEntries).toBe(100_000); // project default
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

    it('refuses a concurrency cap of 0 and a yes/no flag that is neither', () => {
      const result = parseEnvConfig({ OXYGEN_CHECKER_MAX_CONCURRENT: '0', OXYGEN_CHECKER_BEHIND_TLS: 'yes' }, '/');
      expect(result).toStrictEqual({
        kind: 'invalid',
        problems: [
          { variable: 'OXYGEN_CHECKER_MAX_CONCURRENT', message: 'must be a whole number from 1 to 10000' },
          { variable: 'OXYGEN_CHECKER_BEHIND_TLS', message: 'must be true or false' },
        ],
      });
    });

    it('refuses an overall FHIR budget shorter than one call', () => {
      const result = parseEnvConfig(
        { OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS: '2000', OXYGEN_CHECKER_FHIR_BUDGET_MS: '1000' },
        '/',
      );
      expect(result).toStrictEqual({
        kind: 'invalid',
        problems: [
          { variable: 'OXYGEN_CHECKER_FHIR_BUDGET_MS', message: 'must not be below OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS' },
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

  describe('the policy in production', () => {
    it.each([
      ['unset', undefined],
      ['empty', ''],
      ['blank', '   '],
    ])('refuses production with OXYGEN_CHECKER_POLICY %s, even when everything else is set', (_label, policy) => {
      const result = parseEnvConfig({ ...PRODUCTION, OXYGEN_CHECKER_POLICY: policy }, '/srv');
      expect(result.kind === 'invalid' && result.problems).toStrictEqual([
        {
          variable: 'OXYGEN_CHECKER_POLICY',
          message:
            'production mode needs the local policy file set explicitly; the bundled demo policy is not used in production (see docs/policy.md)',
        },
      ]);
    });

    it('accepts production with an explicit policy, even when it names the bundled file', () => {
      const result = parseEnvConfig({ ...PRODUCTION, OXYGEN_CHECKER_POLICY: ENV_DEFAULTS.OXYGEN_CHECKER_POLICY }, '/srv');
      expect(result.kind === 'ok' && result.config.policyPath).toBe(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY);
    });

    it('keeps the bundled policy as the demo default, unset or empty', () => {
      for (const env of [{}, { OXYGEN_CHECKER_POLICY: '' }, { OXYGEN_CHECKER_MODE: 'demo', OXYGEN_CHECKER_POLICY: ' ' }]) {
        const result = parseEnvConfig(env, '/srv');
        expect(result.kind === 'ok' && result.config.policyPath).toBe(bundledPath('policies', 'based-on-bts-2017.yaml'));
      }
    });

    it('lists the missing policy beside problems in other variables', () => {
      const result = parseEnvConfig({ ...PRODUCTION, PORT: 'eighty' }, '/srv');
      expect(result.kind === 'invalid' && result.problems.map((p) => p.variable)).toStrictEqual(['PORT', 'OXYGEN_CHECKER_POLICY']);
    });
  });

  describe('unknown variables with the service prefix', () => {
    it('refuses a misspelt name in every mode, suggesting the nearest known name', () => {
      for (const mode of [{}, { ...PRODUCTION, OXYGEN_CHECKER_POLICY: 'local/larkspur-bay.yaml' }]) {
        const result = parseEnvConfig({ ...mode, OXYGEN_CHECKER_BODY_LIMIT_BYTE: '65536' }, '/srv');
        expect(result.kind === 'invalid' && result.problems).toStrictEqual([
          {
            variable: 'OXYGEN_CHECKER_BODY_LIMIT_BYTE',
            message: 'is not a setting of this service, so it would be ignored; did you mean OXYGEN_CHECKER_BODY_LIMIT_BYTES?',
          },
        ]);
      }
    });

    it.each([
      ['OXYGEN_CHECKER_PUBLC_URL', 'OXYGEN_CHECKER_PUBLIC_URL'], // a letter left out
      ['OXYGEN_CHECKER_TRSUT', 'OXYGEN_CHECKER_TRUST'], // two letters swapped
      ['OXYGEN_CHECKER_REVIEW_LINK_TTL', 'OXYGEN_CHECKER_REVIEW_LINK_TTL_S'], // a review-page setting without its unit
      ['oxygen_checker_data_dir', 'OXYGEN_CHECKER_DATA_DIR'], // lower case: Linux environment names are case-sensitive
      ['OXYGEN_CHECKER_PATIENT_KEYFILE', 'OXYGEN_CHECKER_PATIENT_KEY_FILE'], // a setting with no default
    ])('refuses %s and suggests %s', (typo, known) => {
      const result = parseEnvConfig({ [typo]: 'x' }, '/srv');
      expect(result.kind === 'invalid' && result.problems).toStrictEqual([
        { variable: typo, message: `is not a setting of this service, so it would be ignored; did you mean ${known}?` },
      ]);
    });

    it('refuses a name close to none without guessing, and refuses it when empty too', () => {
      const result = parseEnvConfig({ OXYGEN_CHECKER_COLOUR_SCHEME: '' }, '/srv');
      expect(result.kind === 'invalid' && result.problems).toStrictEqual([
        {
          variable: 'OXYGEN_CHECKER_COLOUR_SCHEME',
          message:
            'is not a setting of this service, so it would be ignored; remove it, or use one of the settings listed in docs/configuration.md',
        },
      ]);
    });

    it('ignores variables that belong to others', () => {
      const others = {
        PATH: '/usr/local/bin:/usr/bin:/bin',
        HOME: '/home/larkspur',
        NODE_ENV: 'production',
        NODE_OPTIONS: '--max-old-space-size=512',
        OXYGEN_CHECKERS_NOTE: 'another prefix',
        MY_OXYGEN_CHECKER_POLICY: 'the prefix not at the start',
      };
      expect(parseEnvConfig(others, '/srv').kind).toBe('ok');
    });

    it('accepts every known variable at once, and lists every unknown one with the other problems', () => {
      // Every review-page variable is known here, though review-config.ts checks their values.
      const known = Object.fromEntries(REVIEW_VARIABLES.map((name) => [name, '']));
      expect(parseEnvConfig(known, '/srv').kind).toBe('ok');
      const result = parseEnvConfig(
        { ...known, OXYGEN_CHECKER_MAX_CONCURENT: '4', OXYGEN_CHECKER_BEHIND_TLS: 'maybe', OXYGEN_CHECKER_CARD_DIR: 'cards' },
        '/srv',
      );
      expect(result.kind === 'invalid' && result.problems.map((p) => [p.variable, p.message.split('; ')[1]])).toStrictEqual([
        ['OXYGEN_CHECKER_BEHIND_TLS', undefined],
        ['OXYGEN_CHECKER_CARD_DIR', 'did you mean OXYGEN_CHECKER_CARDS_DIR?'],
        ['OXYGEN_CHECKER_MAX_CONCURENT', 'did you mean OXYGEN_CHECKER_MAX_CONCURRENT?'],
      ]);
    });

    it('knows every default, the review pages and the settings that have no default', () => {
      const expected = [
        ...Object.keys(ENV_DEFAULTS).filter((name) => name.startsWith('OXYGEN_CHECKER_')),
        ...REVIEW_VARIABLES,
        'OXYGEN_CHECKER_TRUST',
        'OXYGEN_CHECKER_PUBLIC_URL',
        'OXYGEN_CHECKER_PATIENT_KEY_FILE',
      ];
      expect([...KNOWN_VARIABLES].sort()).toStrictEqual([...new Set(expected)].sort());
    });
  });
});
