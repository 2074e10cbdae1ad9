import { afterEach, describe, expect, it } from 'vitest';
import { larkspurPolicy, policyFolder, sha256 } from '../live-policy/support/policy-files.js';
import { get } from './support/app-server.js';
import { killServerProcesses, runServerProcess } from './support/server-process.js';

/**
 * SIGHUP on the real process (`node --import tsx src/server.ts`), as an operator sends it: a good file
 * is put in force and `GET /policy` shows its hash; a bad one is refused, logged, and the process goes
 * on serving the last good policy.
 */


afterEach(killServerProcesses);


describe('SIGHUP', () => {
  it('loads a good policy file, refuses a bad one and keeps serving the last good one', async () => {
    const folder = policyFolder(larkspurPolicy('1.0.0'));
    const run = runServerProcess({ OXYGEN_CHECKER_POLICY: folder.policyPath });
    const listening = await run.waitForLine('oxygen-order-checker listening');
    const url = String(listening['url']);
    expect(listening['policyContentHash']).toBe(sha256(larkspurPolicy('1.0.0')));

    folder.write(larkspurPolicy('1.1.0'));
    run.child.kill('SIGHUP');
    const swapped = await run.waitForLine('policy reloaded');
    expect(swapped).toMatchObject({
      trigger: 'signal',
      previousPolicyVersion: '1.0.0',
      policyVersion: '1.1.0',
      policyContentHash: sha256(larkspurPolicy('1.1.0')),
    });
    expect((await get(`${url}/policy`)).body).toMatchObject({ version: '1.1.0', contentHash: sha256(larkspurPolicy('1.1.0')) });

    folder.write(larkspurPolicy('1.2.0').replace('  standard: { lowPercent: 94, highPercent: 98 }', '  standard: { lowPercent: 98, highPercent: 94 }'));
    run.child.kill('SIGHUP');
    const rejected = await run.waitForLine('policy reload rejected');
    expect(rejected).toMatchObject({ level: 50, trigger: 'signal', reason: 'invalid', rejectedReloads: 1, policyVersion: '1.1.0' });
    // BTS 2017, Tables 1-3: 94-98 %; a range whose low end is above its high end is refused
    expect((rejected['problems'] as { path: string }[]).some((p) => p.path.startsWith('targets.standard'))).toBe(true);
    expect((await get(`${url}/policy`)).body).toMatchObject({ version: '1.1.0' });

    run.child.kill('SIGTERM');
    expect(await run.exit).toStrictEqual({ code: 0, signal: null });
  }, 60_000);
});
