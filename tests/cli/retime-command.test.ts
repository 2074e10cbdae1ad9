import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { examplePath, runCommandLine } from './cli-harness.js';

describe('oxygen-order-checker retime', () => {
  const original = JSON.parse(readFileSync(examplePath('order-sign-kyphoscoliosis-standard-target'), 'utf8'));

  it('moves every date-time so the draft order is signed at --at, keeping the gaps between them', async () => {
    const run = await runCommandLine([
      'retime',
      examplePath('order-sign-kyphoscoliosis-standard-target'),
      '--at',
      '2027-01-15T08:00:00Z',
    ]);
    expect(run.code).toBe(0);
    const moved = JSON.parse(run.stdout);
    expect(moved.context.draftOrders.entry[0].resource.authoredOn).toBe('2027-01-15T08:00:00Z');
    const gas = moved.prefetch.observations.entry.find(
      (e: { resource: { id: string } }) => e.resource.id === 'abg-0001-paco2',
    );
    // The gas was taken 3 h before signing in the original, and still is.
    expect(gas.resource.effectiveDateTime).toBe('2027-01-15T05:00:00Z');
  });

  it('leaves dates without a time, such as the birth date, as they were', async () => {
    const run = await runCommandLine(['retime', examplePath('order-sign-kyphoscoliosis-standard-target')]);
    const moved = JSON.parse(run.stdout);
    expect(moved.prefetch.patient.birthDate).toBe(original.prefetch.patient.birthDate);
    // Without --at the request is moved to the CLI clock (fixed in the harness).
    expect(moved.context.draftOrders.entry[0].resource.authoredOn).toBe('2026-12-01T12:00:00Z');
  });

  describe('edge cases', () => {
    it('refuses a file nested deeper than the service accepts, with exit 1 and no stack trace', async () => {
      const file = join(mkdtempSync(join(tmpdir(), 'oxygen-order-checker-deep-')), 'deep.json');
      writeFileSync(file, `${'['.repeat(20_000)}${']'.repeat(20_000)}`);
      for (const command of ['retime', 'evaluate']) {
        const run = await runCommandLine([command, file]);
        expect(run.code).toBe(1);
        expect(run.stderr).toContain('nests deeper than 64 levels');
      }
    });

    it('refuses an --at that is not a date-time with exit 2', async () => {
      const run = await runCommandLine(['retime', examplePath('order-sign-paraquat'), '--at', 'tomorrow']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain('--at');
    });
  });
});
