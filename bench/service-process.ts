import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, sep } from 'node:path';
import { ENV_DEFAULTS } from '../src/config/env-config.js';
import type { AuditArm } from './audit-off-store.js';
import { freePort, startChildServer, waitForOk, type ChildServer } from './child-server.js';

/**
 * How the service under test runs. `dist` is what `npm start` runs (tsc, then `node dist/server.js`),
 * so it is the default; it compiles into a private temporary folder, not the shared `dist/`, so a
 * bench never swaps files under another process. `tsx` runs `src/server.ts` through tsx, as
 * `npm run dev` does: no build, the same code after load except for what tsx's transform adds (a
 * `__name` call each time an inner function is created, which the tsc output has not).
 *
 * The bench's own in-process children (the micro-benchmarks, the pure-path profile, the bulk
 * children: `BENCH_CHILD_ENTRIES`) run on the same code as the service: under `dist` they are compiled
 * in the same tsc run into the same folder, beside the service's modules, and run by plain `node`.
 */
export type ServiceRunner = 'dist' | 'tsx';

export interface BuiltService {
  readonly runner: ServiceRunner;
  readonly nodeArgs: readonly string[];
  /** The folder our code runs from (ends in a separator), for naming profile frames. */
  readonly codeRoot: string;
  /** Node arguments that run one of `BENCH_CHILD_ENTRIES` on the same code as the service. */
  readonly benchEntry: (entry: BenchChildEntry) => readonly string[];
  /** Removes the private build folder (nothing for tsx). */
  readonly cleanUp: () => void;
}

const BUILD_TIMEOUT_MS = 240_000;

/**
 * The bench's entries that run in a process of their own (files in bench/): those that run the
 * service's code, and the baselines the service is compared with, which run as the service does (plain
 * node from the build, or through tsx) so that neither side of a ratio pays for a loader the other has not.
 */
export const BENCH_CHILD_ENTRIES = ['micro-child', 'profile-micro', 'bulk-child', 'token-baseline-server', 'json-echo-server'] as const;
export type BenchChildEntry = (typeof BENCH_CHILD_ENTRIES)[number];

export function prepareService(root: string, runner: ServiceRunner): BuiltService {
  if (runner === 'tsx') {
    return {
      runner,
      nodeArgs: ['--import', 'tsx', join(root, 'src', 'server.ts')],
      codeRoot: join(root, 'src', sep),
      benchEntry: (entry) => ['--import', 'tsx', join(root, 'bench', `${entry}.ts`)],
      cleanUp: () => undefined,
    };
  }
  const folder = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-bench-'));
  const cleanUp = (): void => rmSync(folder, { recursive: true, force: true });
  // The emitted ES modules need a `type: module` scope, and their bare imports the project's packages.
  writeFileSync(join(folder, 'package.json'), '{ "type": "module", "private": true }\n');
  symlinkSync(join(root, 'node_modules'), join(folder, 'node_modules'), 'dir');
  // The bundled files beside the build, as in the published package, for code that finds them from its
  // own place (the defaults of OXYGEN_CHECKER_POLICY and _CARDS_DIR): the bench's in-process children.
  for (const shipped of ['policies', 'cards', 'examples']) {
    symlinkSync(join(root, shipped), join(folder, shipped), 'dir');
  }
  // tsconfig.build.json's compiler options, with the package root as rootDir so that the bench's child
  // entries land beside the service's modules: FOLDER/src/** (what `npm run build` writes to dist/,
  // file for file) and FOLDER/bench/**, whose `../src/` imports then load those very modules. The
  // service's files sit two levels under FOLDER as they sit under the package root after a build.
  const config = {
    extends: join(root, 'tsconfig.build.json'),
    compilerOptions: { rootDir: root, outDir: folder },
    include: [join(root, 'src'), ...BENCH_CHILD_ENTRIES.map((entry) => join(root, 'bench', `${entry}.ts`))],
  };
  const configFile = join(folder, 'tsconfig.bench-build.json');
  writeFileSync(configFile, `${JSON.stringify(config, null, 2)}\n`);
  const tsc = join(root, 'node_modules', 'typescript', 'bin', 'tsc');
  const build = spawnSync(process.execPath, [tsc, '-p', configFile], {
    cwd: root,
    encoding: 'utf8',
    timeout: BUILD_TIMEOUT_MS,
  });
  if (build.status !== 0) {
    cleanUp();
    const output = `${build.stdout}${build.stderr}`.trim().split('\n').slice(0, 20).join('\n');
    throw new Error(`the build failed (tsc exit ${String(build.status)}); fix it or run with --runner tsx\n${output}`);
  }
  const codeRoot = join(folder, 'src', sep);
  return {
    runner,
    nodeArgs: [join(codeRoot, 'server.js')],
    codeRoot,
    benchEntry: (entry) => [join(folder, 'bench', `${entry}.js`)],
    cleanUp,
  };
}

/** The environment the service runs in: demo mode, loopback, a free port, quiet logs, bundled files. */
function serviceEnv(root: string, dataDir?: string): Record<string, string | undefined> {
  const env: Record<string, string | undefined> = {};
  for (const [name, value] of Object.entries(process.env)) {
    // Settings left in the shell (a trust file, a concurrency cap) must not change what is measured.
    if (!name.startsWith('OXYGEN_CHECKER_') && !['HOST', 'PORT', 'LOG_LEVEL', 'NODE_OPTIONS'].includes(name)) {
      env[name] = value;
    }
  }
  return {
    ...env,
    NODE_ENV: 'production',
    HOST: '127.0.0.1',
    PORT: '0',
    LOG_LEVEL: 'warn',
    OXYGEN_CHECKER_MODE: 'demo',
    // The bundled files, named because a private build folder is not the package root.
    OXYGEN_CHECKER_POLICY: join(root, 'policies', 'based-on-bts-2017.yaml'),
    OXYGEN_CHECKER_CARDS_DIR: join(root, 'cards'),
    // The bench is one client sending the whole load (one address in the demo, one issuer in production):
    // its share is the shared cap, as a site with one EHR would set it (docs/security.md, "Load and
    // per-client shares"). Load shedding by waiting time stays as shipped.
    OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT: String(ENV_DEFAULTS.OXYGEN_CHECKER_MAX_CONCURRENT),
    // A fresh store per run (the audit write is part of what is measured), never the shared ./data.
    ...(dataDir === undefined ? {} : { OXYGEN_CHECKER_DATA_DIR: dataDir }),
  };
}

export async function startService(
  root: string,
  built: BuiltService,
  extraNodeArgs: readonly string[] = [],
): Promise<ChildServer> {
  return startWithDataDir(root, 'oxygen-order-checker', [...extraNodeArgs, ...built.nodeArgs], {});
}

/**
 * The feedback load sends thousands of items from one client in seconds: far past the daily quota
 * (OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY) a real client has, which would answer 429. The audit services
 * get the highest quota the setting takes, so the bench measures the commit, not the refusal.
 */
const BENCH_FEEDBACK_QUOTA = '10000000';

/**
 * bench/audit-service.ts in one arm (the store as shipped, or without the audit write), in demo
 * mode, with its own fresh data directory. The entry itself runs through tsx; the service's modules
 * come from the same build (or src/) as the service the rest of the run measures.
 */
export async function startAuditService(root: string, built: BuiltService, arm: AuditArm): Promise<ChildServer> {
  const entry = join(root, 'bench', 'audit-service.ts');
  return startWithDataDir(root, `bench ${arm} service`, ['--import', 'tsx', entry, arm, built.codeRoot], {
    OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY: BENCH_FEEDBACK_QUOTA,
  });
}

async function startWithDataDir(
  root: string,
  name: string,
  nodeArgs: readonly string[],
  extraEnv: Readonly<Record<string, string>>,
  knownUrl?: string,
): Promise<ChildServer> {
  const dataDir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-bench-data-'));
  const started = await startChildServer({
    name,
    nodeArgs,
    env: { ...serviceEnv(root, dataDir), ...extraEnv },
    cwd: root,
    startTimeoutMs: 30_000,
    ...(knownUrl === undefined ? {} : { knownUrl }),
  });
  const server: ChildServer = {
    ...started,
    stop: async (graceMs) => {
      await started.stop(graceMs);
      rmSync(dataDir, { recursive: true, force: true });
    },
  };
  try {
    // With no listening line to wait for first, the start-up itself is waited out here (up to ~30 s).
    await waitForOk(`${server.url}/healthz`, knownUrl === undefined ? 50 : 300);
  } catch (error) {
    await server.stop(1000);
    throw new Error(`${error instanceof Error ? error.message : String(error)}\n${server.tail()}`, { cause: error });
  }
  return server;
}

/**
 * A bench baseline app (an entry in bench/ with one file argument) in its own process, like the service:
 * from the same build by plain node when `built` is given, else through tsx.
 */
async function startBaselineApp(
  root: string,
  name: string,
  entry: 'token-baseline-server' | 'json-echo-server',
  fileArgument: string,
  built: BuiltService | undefined,
): Promise<ChildServer> {
  const server = await startChildServer({
    name,
    nodeArgs: [...(built?.benchEntry(entry) ?? ['--import', 'tsx', join(root, 'bench', `${entry}.ts`)]), fileArgument],
    env: serviceEnv(root),
    cwd: root,
    startTimeoutMs: 30_000,
  });
  try {
    await waitForOk(`${server.url}/healthz`, 50);
  } catch (error) {
    await server.stop(1000);
    throw error;
  }
  return server;
}

/** The plain express JSON echo (bench/json-echo-server.ts). */
export function startJsonEcho(root: string, replyFile: string, built?: BuiltService): Promise<ChildServer> {
  return startBaselineApp(root, 'json-echo', 'json-echo-server', replyFile, built);
}

/**
 * Production mode for the issue-9 figures: the bench's own client in the trust file, the public URL
 * its tokens are addressed to, and a replay cache large enough for every token of the run (each call
 * carries a new jti; the defaults would refuse a client past 20,000 live tokens with 429).
 */
export function productionEnv(trustFile: string, publicUrl: string): Record<string, string> {
  return {
    OXYGEN_CHECKER_MODE: 'production',
    OXYGEN_CHECKER_TRUST: trustFile,
    OXYGEN_CHECKER_PUBLIC_URL: publicUrl,
    OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT: '10000000',
    OXYGEN_CHECKER_REPLAY_CACHE_MAX_ENTRIES: '10000000',
  };
}

export async function startProductionService(
  root: string,
  built: BuiltService,
  trustFile: string,
  publicUrl: string,
): Promise<ChildServer> {
  // At LOG_LEVEL=warn production mode prints no listening line (it is at info), so the bench picks the port.
  const port = await freePort();
  return startWithDataDir(
    root,
    'oxygen-order-checker (production)',
    built.nodeArgs,
    { ...productionEnv(trustFile, publicUrl), PORT: String(port) },
    `http://127.0.0.1:${port}`,
  );
}

/** The environment of a production service started by hand (the cold-start timing). */
export function productionServiceEnv(root: string, trustFile: string, publicUrl: string, dataDir: string, port: number): Record<string, string | undefined> {
  return { ...serviceEnv(root, dataDir), PORT: String(port), ...productionEnv(trustFile, publicUrl) };
}

/** The bare express + same-token baseline (bench/token-baseline-server.ts). */
export function startTokenBaseline(root: string, configFile: string, built?: BuiltService): Promise<ChildServer> {
  return startBaselineApp(root, 'token-baseline', 'token-baseline-server', configFile, built);
}
