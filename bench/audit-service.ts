import type { Server } from 'node:http';
import { parseEnvConfig, formatEnvProblems } from '../src/config/env-config.js';
import { formatLoadProblems, loadPolicyAndCards } from '../src/config/load-files.js';
import { parseReviewConfig } from '../src/config/review-config.js';
import { createApp } from '../src/http/app.js';
import { createLogger } from '../src/log/logger.js';
import { setUpAuthentication } from '../src/security/setup-authentication.js';
import { setUpReviewAccess } from '../src/security/setup-review-access.js';
import { openStore } from '../src/store/open-store.js';
import { loadOrCreateSecret, patientKey } from '../src/store/patient-key.js';
import { withoutAuditWrites, type AuditArm } from './audit-off-store.js';

/**
 * Bench only, never shipped (tsconfig.build.json builds src/ alone): the service's app built as
 * src/server.ts builds it in demo mode, with the store either as it is (`audit-on`) or wrapped so
 * that `recordAdvisories` does nothing (`audit-off`). The bench starts one of each and loads both the
 * same way, so the only difference between the two is the audit write. Production has no way to
 * turn the audit trail off; this file is that way, and it refuses to run outside demo mode.
 *
 * Keep it in step with `startWithStore` in src/server.ts (demo branch); what it leaves out (the
 * retention purge, graceful close) does not run during a load.
 */

function refuse(problem: string): never {
  process.stderr.write(`bench audit service refused to start: ${problem}\n`);
  process.exit(1);
}

async function main(arm: AuditArm): Promise<void> {
  const parsedEnv = parseEnvConfig(process.env, process.cwd());
  if (parsedEnv.kind === 'invalid') {
    refuse(formatEnvProblems(parsedEnv.problems));
  }
  const config = parsedEnv.config;
  if (config.security.mode !== 'demo') {
    refuse('this bench entry runs in demo mode only (O2CHECK_MODE=demo)');
  }
  const reviewParsed = parseReviewConfig(process.env, process.cwd(), config.security.mode);
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
    policy: files.policy,
    templates: files.templates,
    logger: log,
    clock: () => new Date(),
    fetch: globalThis.fetch,
    authenticate: auth.authenticate,
    store,
    policyContentHash: files.policyContentHash,
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

const arm = process.argv[2];
if (arm !== 'audit-on' && arm !== 'audit-off') {
  refuse('name the arm: audit-on or audit-off');
}
await main(arm);
