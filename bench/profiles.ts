import { spawnSync } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { HookExample } from './cases.js';
import { readProfiles, summariseThreadOf, type ProfileSummary } from './cpu-profile.js';
import { runLoad } from './load-test.js';
import type { BenchOptions } from './options.js';
import { startService, type BuiltService } from './service-process.js';

/**
 * The two quick CPU profiles: the service under load with one example, and the whole pure path in a
 * loop. Neither is timed for the tables: profiling slows what it watches. A profile that cannot be
 * taken is reported, not fatal.
 */
export type ProfileOutcome =
  | { readonly kind: 'ok'; readonly summary: ProfileSummary }
  | { readonly kind: 'failed'; readonly reason: string };

function failed(error: unknown): ProfileOutcome {
  return { kind: 'failed', reason: error instanceof Error ? error.message.split('\n')[0] ?? '' : String(error) };
}

export async function profileService(input: {
  readonly root: string;
  readonly built: BuiltService;
  readonly example: HookExample;
  readonly options: BenchOptions;
  readonly scratch: string;
}): Promise<ProfileOutcome> {
  const folder = join(input.scratch, 'service-profile');
  mkdirSync(folder, { recursive: true });
  try {
    const service = await startService(input.root, input.built, ['--cpu-prof', `--cpu-prof-dir=${folder}`]);
    try {
      await runLoad({
        label: 'profile',
        url: `${service.url}/cds-services/${input.example.serviceId}`,
        method: 'POST',
        body: input.example.body,
        connections: input.options.connections,
        durationS: input.options.profileS,
        warmupS: 1,
      });
    } finally {
      // The profile is written as the process exits, so it must be let go gracefully.
      await service.stop(15_000);
    }
    return { kind: 'ok', summary: summariseThreadOf(readProfiles(folder), [input.built.codeRoot], { file: 'src/http/routes/cds-service.ts' }) };
  } catch (error) {
    return failed(error);
  }
}

export function profileMicro(input: {
  readonly root: string;
  readonly built: BuiltService;
  readonly example: HookExample;
  readonly options: BenchOptions;
  readonly scratch: string;
}): ProfileOutcome {
  const folder = join(input.scratch, 'pure-path-profile');
  mkdirSync(folder, { recursive: true });
  const exampleFile = join(input.scratch, 'profiled-example.json');
  writeFileSync(exampleFile, JSON.stringify(input.example));
  const child = spawnSync(
    process.execPath,
    [
      '--cpu-prof',
      `--cpu-prof-dir=${folder}`,
      // On the service's own code: the private build by plain node, or src/ through tsx.
      ...input.built.benchEntry('profile-micro'),
      exampleFile,
      String(input.options.profileS),
    ],
    { cwd: input.root, encoding: 'utf8', timeout: (input.options.profileS + 60) * 1000 },
  );
  if (child.status !== 0) {
    return { kind: 'failed', reason: `the profiled child exited ${String(child.status)}: ${child.stderr.slice(0, 300)}` };
  }
  try {
    return { kind: 'ok', summary: summariseThreadOf(readProfiles(folder), [input.built.codeRoot], {
      file: 'bench/profile-micro.ts',
      functionName: 'profiledLoop',
    }) };
  } catch (error) {
    return failed(error);
  }
}
