import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Request } from 'express';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SecurityConfig } from '../../src/config/env-config.js';
import { allowEveryRequest } from '../../src/http/auth.js';
import { createLogger } from '../../src/log/logger.js';
import { setUpAuthentication } from '../../src/security/setup-authentication.js';
import { openTempStore } from '../helpers/temp-store.js';
import { createMemoryLog } from '../log/memory-log.js';
import { claims, DISCOVERY_AUD, EHR_ES384, EHR_ISS, fakeFetch, NOW, PUBLIC_BASE } from './support/fixtures.js';
import { signToken } from './support/keys.js';

const JWKS_URL = 'https://ehr.larkspur-bay.example/keys';
let dir: string;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'oxygen-order-checker-setup-'));
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

function production(trustPath: string): SecurityConfig {
  return {
    mode: 'production',
    trustPath,
    publicUrl: PUBLIC_BASE,
    // the project defaults (src/config/env-config.ts ENV_DEFAULTS)
    limits: {
      clockSkewS: 60,
      maxTokenLifetimeS: 3600,
      jwksTimeoutMs: 2000,
      jwksMaxBytes: 65_536,
      jwksCacheTtlS: 300,
      jwksRefreshMinIntervalS: 60,
      replayCacheMaxEntries: 100_000,
      replayMaxPerClient: 20_000,
    },
  };
}

describe('setUpAuthentication', () => {
  it('uses the demo authenticator in demo mode', async () => {
    const log = createMemoryLog();
    const setup = await setUpAuthentication({ mode: 'demo' }, { fetch: fakeFetch({}).fetch, clock: () => NOW, logger: createLogger({ level: 'info', destination: log.stream }), store: openTempStore().store });
    expect(setup).toStrictEqual({ kind: 'demo', authenticate: allowEveryRequest });
  });

  it('builds the production authenticator from the trust file and logs key fetches by issuer', async () => {
    const path = join(dir, 'trust.yaml');
    await writeFile(path, `clients:\n  - iss: ${EHR_ISS}\n    jwksUrl: ${JWKS_URL}\n    fhirServers: []\n`);
    const log = createMemoryLog();
    const served = fakeFetch({ [JWKS_URL]: { keys: [EHR_ES384.publicJwk] } });
    const setup = await setUpAuthentication(production(path), {
      fetch: served.fetch,
      clock: () => NOW,
      logger: createLogger({ level: 'info', destination: log.stream }),
      store: openTempStore().store,
    });
    if (setup.kind !== 'production') throw new Error(`expected production, got ${setup.kind}`);
    expect([setup.publicUrl, setup.trustedClients]).toStrictEqual([PUBLIC_BASE, 1]);
    const token = signToken(EHR_ES384, claims(DISCOVERY_AUD));
    const result = await setup.authenticate({ headers: { authorization: `Bearer ${token}` }, originalUrl: '/cds-services' } as unknown as Request);
    expect(result.kind).toBe('allowed');
    expect(served.asked).toStrictEqual([JWKS_URL]);
    expect(log.lines().map(({ jwks, iss, keyCount, msg }) => ({ jwks, iss, keyCount, msg }))).toStrictEqual([
      { jwks: 'fetched', iss: EHR_ISS, keyCount: 1, msg: 'client keys fetched' },
    ]);
    expect(log.text()).not.toContain(token);
  });

  describe('edge cases', () => {
    it('refuses with every problem of the trust file, by file and path', async () => {
      const path = join(dir, 'bad.yaml');
      await writeFile(path, `clients:\n  - iss: ${EHR_ISS}\n    jwksUrl: http://ehr.larkspur-bay.example/keys\n`);
      const setup = await setUpAuthentication(production(path), { fetch: fakeFetch({}).fetch, clock: () => NOW, logger: createLogger({ level: 'silent' }), store: openTempStore().store });
      expect(setup).toStrictEqual({
        kind: 'refused',
        problems: [
          `${path}: clients.0.jwksUrl: must use https (CDS Hooks 2.0 §Security and Safety)`,
          `${path}: clients.0.fhirServers: must list the FHIR base URLs the service may call for this client ([] for none)`,
        ].join('\n'),
      });
    });
  });
});
