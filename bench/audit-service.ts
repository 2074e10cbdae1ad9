import type { Server } from 'node:http';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import type * as EnvConfigModule from '../src/config/env-config.js';
import type * as LoadFilesModule from '../src/config/load-files.js';
import type * as ReviewConfigModule from '../src/config/review-config.js';
import type * as AppModule from '../src/http/app.js';
import type * as PolicySnapshotModule from '../src/live-policy/policy-snapshot.js';
import type * as LoggerModule from '../src/log/logger.js';
import type * as AuthenticationModule from '../src/security/setup-authentication.js';
import type * as ReviewAccessModule from '../src/security/setup-review-access.js';
import type * as OpenStoreModule from '../src/store/open-store.js';
import type * as PatientKeyModule from '../src/store/patient-key.js';
import { withoutAuditWrites, type AuditArm } from './audit-off-store.js';

/**
 * Bench only, never shipped (tsconfig.build.json builds src/ alone): the service's app built as
 * src/server.ts builds it in demo mode, with the store either as it is (`audit-on`) or wrapped so
 * that `recordAdvisories` does nothing (`audit-off`). The bench starts one of each and loads both the
 * same way, so the only difference between the two is the audit write. Production has no way to
 * turn the audit trail off; this file is that way, and it refuses to run outside demo mode.
 *
 * The service's modules are loaded from `codeRoot`: the bench's private build (as `npm start` runs
 * them) or src/ through tsx, whichever the rest of the run measures.
 *
 * Keep it in step with `startWithStore` in src/server.ts (demo branch); what it leaves out (the
 * retention purge, graceful close) does not run during a load.
 */

function refuse(problem: string): never {
  process.stderr.write(`bench audit service refused to start: ${problem}\n`);
  process.exit(1);
}

async function main(arm: AuditArm, codeRoot: string): Promise<void> {
  const load = async <T>(path: string): Promise<T> => (await import(pathToFileURL(join(codeRoot, path)).href)) as T;
  const { parseEnvConfig, formatEnvProblems } = await load<typeof EnvConfigModule>('config/env-config.js');
  const { formatLoadProblems, loadPolicyAndCards } = await load<typeof LoadFilesModule>('config/load-files.js');
  const { parseReviewConfig } = await load<typeof ReviewConfigModule>('config/review-config.js');
  const { createApp } = await load<typeof AppModule>('http/app.js');
  const { createPolicyHolder, snapshotOf } = await load<typeof PolicySnapshotModule>('live-policy/policy-snapshot.js');
  const { createLogger } = await load<typeof LoggerModule>('log/logger.js');
  const { setUpAuthentication } = await load<typeof AuthenticationModule>('security/setup-authentication.js');
  const { setUpReviewAccess } = await load<typeof ReviewAccessModule>('security/setup-review-access.js');
  const { openStore } = await load<typeof OpenStoreModule>('store/open-store.js');
  const { loadOrCreateSecret, patientKey } = await load<typeof PatientKeyModule>('store/patient-key.js');
  const parsedEnv = parseEnvConfig(process.env, process.cwd());
  if (parsedEnv.kind === 'invalid') {
    refuse(formatEnvProblems(parsedEnv.problems));
  }
  const config = parsedEnv.config;
  if (config.security.mode !== 'demo') {
    refuse('this bench entry runs in demo mode only (OXYGEN_CHECKER_MODE=demo)');
  }
  const reviewParsed = parseReviewConfig(process.env, process.cwd(), config.security.mode, config.store.dataDir);
  if (reviewParsed.kind === 'invalid') {
    refuse(formatEnvProblems(reviewParsed.problems));
  }
  const files = await loadPolicyAndCards(config);
  if (files.kind === 'invalid') {
    refuse(formatLoadProblems(files.problems));
  }
  const log = createLogger({ level: config.logLevel });
  const opened = openStore({ dataDir: config.store.dataDir });
  if (opened.kind === 'refused') {
    refuse(opened.problem);
  }
  const store = arm === 'audit-on' ? opened.store : withoutAuditWrites(opened.store);
  const secret = loadOrCreateSecret({ dataDir: config.store.dataDir });
  if (secret.kind === 'refused') {
    refuse(secret.problem);
  }
  const auth = await setUpAuthentication(config.security, {
    fetch: globalThis.fetch,
    clock: () => new Date(),
    logger: log,
    store,
  });
  if (auth.kind !== 'demo') {
    refuse(auth.kind === 'refused' ? auth.problems : 'not demo mode');
  }
  const review = setUpReviewAccess({ mode: config.security.mode, config: reviewParsed.config, clock: () => new Date() });
  if (review.kind === 'refused') {
    refuse(review.problems);
  }
  const app = createApp(config, {
    policy: createPolicyHolder(snapshotOf(files, new Date())),
    logger: log,
    clock: () => new Date(),
    fetch: globalThis.fetch,
    authenticate: auth.authenticate,
    store,
    patientKey: (patient) => patientKey(secret.secret, patient),
    review: review.review,
  });
  const server = await new Promise<Server>((resolve, reject) => {
    const listening = app.listen(config.port, config.host);
    listening.once('listening', () => resolve(listening));
    listening.once('error', reject);
  });
  const address = server.address();
  const port = typeof address === 'object' && address !== null ? address.port : config.port;
  const url = `http://${config.host.includes(':') ? `[${config.host}]` : config.host}:${port}`;
  review.setListeningUrl(url);
  // The bench reads the url from this line (bench/child-server.ts), as it does the service's own.
  log.warn({ url, arm }, `bench ${arm} service listening; demo mode, not for clinical use`);
  const stop = (): void => {
    server.close(() => {
      void store.close().then(() => process.exit(0));
    });
    server.closeAllConnections();
  };
  process.once('SIGTERM', stop);
  process.once('SIGINT', stop);
}

const [arm, codeRoot] = process.argv.slice(2);
if ((arm !== 'audit-on' && arm !== 'audit-off') || codeRoot === undefined) {
  refuse('usage: audit-service.ts audit-on|audit-off CODE_ROOT (the built dist/ folder, or src/)');
}
await main(arm, codeRoot);
