import { randomUUID } from 'node:crypto';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { DEMO_MODE_NOTICE, PRODUCTION_MODE_NOTICE, startServer } from '../../src/server.js';
import { SPEC_PRIVATE_JWK } from '../fixtures/security/spec-jwt-example.js';
import { makeTempDataDir } from '../helpers/temp-store.js';
import { createMemoryLog } from '../log/memory-log.js';
import { EHR_ES384, EHR_ISS } from '../security/support/fixtures.js';
import { signToken } from '../security/support/keys.js';
import { larkspurTrustYaml } from './support/trust-file.js';

/** Start-up in both modes, through the same `startServer` the process entry point calls. */
const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const PUBLIC_URL = 'https://cds.larkspur-bay.example';
let dir: string;
let trustPath: string;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'oxygen-order-checker-server-'));
  trustPath = join(dir, 'trust.yaml');
  await writeFile(trustPath, larkspurTrustYaml());
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const production = (extra: Record<string, string> = {}) => ({
  PORT: '0',
  OXYGEN_CHECKER_MODE: 'production',
  OXYGEN_CHECKER_POLICY: join(ROOT, 'policies', 'based-on-bts-2017.yaml'),
  OXYGEN_CHECKER_TRUST: trustPath,
  OXYGEN_CHECKER_PUBLIC_URL: PUBLIC_URL,
  OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(),
  ...extra,
});

describe('startServer and the two modes', () => {
  it('starts in production with a trust file and refuses calls without a valid token', async () => {
    const log = createMemoryLog();
    const result = await startServer(production(), ROOT, createLogger({ level: 'info', destination: log.stream }));
    if (result.kind !== 'started') throw new Error(result.problems);
    try {
      const base = result.started.url;
      const bare = await fetch(`${base}/cds-services`);
      const nowS = Math.floor(Date.now() / 1000);
      const token = signToken(EHR_ES384, {
        iss: EHR_ISS,
        aud: `${PUBLIC_URL}/cds-services`,
        iat: nowS,
        exp: nowS + 300,
        jti: randomUUID(),
      });
      const signed = await fetch(`${base}/cds-services`, { headers: { Authorization: `Bearer ${token}` } });
      const health = await fetch(`${base}/healthz`);
      expect([bare.status, signed.status, health.status]).toStrictEqual([401, 200, 200]);
    } finally {
      await result.started.close();
    }
    expect(log.lines()[0]).toMatchObject({
      msg: `oxygen-order-checker listening; ${PRODUCTION_MODE_NOTICE}`,
      mode: 'production',
      publicUrl: PUBLIC_URL,
      trustedClients: 1,
      level: 30,
    });
  });

  it('warns at start in demo mode', async () => {
    const log = createMemoryLog();
    const result = await startServer({ PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir() }, ROOT, createLogger({ level: 'info', destination: log.stream }));
    if (result.kind !== 'started') throw new Error(result.problems);
    await result.started.close();
    expect(log.lines()[0]).toMatchObject({ msg: `oxygen-order-checker listening; ${DEMO_MODE_NOTICE}`, mode: 'demo', level: 40 });
  });

  it('refuses production without a policy, a trust file or a public URL', async () => {
    expect(await startServer({ PORT: '0', OXYGEN_CHECKER_MODE: 'production', HOST: '0.0.0.0' }, ROOT)).toStrictEqual({
      kind: 'refused',
      problems:
        'OXYGEN_CHECKER_POLICY: production mode needs the local policy file set explicitly; the bundled demo policy is not used in production (see docs/policy.md)\n' +
        'OXYGEN_CHECKER_TRUST: production mode needs the trust file naming the CDS clients allowed to call (see docs/security.md)\n' +
        'OXYGEN_CHECKER_PUBLIC_URL: production mode needs the https base URL clients call, e.g. https://cds.example.org (see docs/security.md)',
    });
  });

  it('refuses demo mode on a non-loopback HOST', async () => {
    expect(await startServer({ PORT: '0', HOST: '0.0.0.0' }, ROOT)).toStrictEqual({
      kind: 'refused',
      problems:
        'HOST: demo mode has authentication off, so it binds to loopback only (127.0.0.1, ::1 or localhost); ' +
        'to serve other machines set OXYGEN_CHECKER_MODE=production with OXYGEN_CHECKER_TRUST and OXYGEN_CHECKER_PUBLIC_URL (see docs/security.md)',
    });
  });

  it('refuses production with an invalid trust file, listing every problem by file and path', async () => {
    const bad = join(dir, 'bad-trust.json');
    await writeFile(
      bad,
      JSON.stringify({
        clients: [
          { iss: EHR_ISS, jwks: { keys: [SPEC_PRIVATE_JWK] }, algorithms: ['HS256'], fhirServers: ['http://fhir.larkspur-bay.example/r4'] },
        ],
      }),
    );
    expect(await startServer(production({ OXYGEN_CHECKER_TRUST: bad }), ROOT)).toStrictEqual({
      kind: 'refused',
      problems: [
        `${bad}: clients.0.jwks.keys.0: holds private key material ('d'); give public keys only`,
        `${bad}: clients.0.algorithms.0: 'HS256' is symmetric and is never accepted (CDS Hooks 2.0 §JWT signing algorithm)`,
        `${bad}: clients.0.fhirServers.0: must use https (CDS Hooks 2.0 §Security and Safety)`,
      ].join('\n'),
    });
  });

  describe('edge cases', () => {
    it('refuses production when the trust file cannot be read', async () => {
      const missing = join(dir, 'absent.yaml');
      expect(await startServer(production({ OXYGEN_CHECKER_TRUST: missing }), ROOT)).toStrictEqual({
        kind: 'refused',
        problems: `${missing}: (file): cannot be read (ENOENT)`,
      });
    });
  });
});
