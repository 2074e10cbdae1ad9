import { cpSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { Mode } from '../../src/config/env-config.js';
import { loadPolicyAndCards, type FilePaths, type LoadedFiles } from '../../src/config/load-files.js';
import { createPolicyHolder, snapshotOf } from '../../src/live-policy/policy-snapshot.js';
import { createPolicyReloader } from '../../src/live-policy/reload-policy.js';
import { createLogger } from '../../src/log/logger.js';
import { createMemoryLog } from '../log/memory-log.js';
import { BUNDLED_TEXT, edited, larkspurPolicy, policyFolder, sha256 } from './support/policy-files.js';

/**
 * The reload function in-process: a valid file replaces the policy in force as one snapshot; an
 * invalid or unsafe one leaves it in force, with every problem logged (line and column, never the
 * file's text) and counted; reloads asked for together run one at a time and end on the newest file.
 */

const STARTED_AT = new Date('2026-12-01T08:00:00Z'); // invented
const RELOADED_AT = new Date('2026-12-01T14:30:00Z'); // invented

/** A marker written into a comment of every bad file: it must never reach the log. */
const MARKER = 'larkspur-private-comment-7f3a';

async function setUp(initial: string, options: { mode?: Mode; load?: (paths: FilePaths) => Promise<LoadedFiles>; cardsDir?: string } = {}) {
  const folder = policyFolder(initial);
  const paths = { policyPath: folder.policyPath, cardsDir: options.cardsDir ?? folder.cardsDir };
  const files = await loadPolicyAndCards(paths);
  if (files.kind !== 'ok') throw new Error('the starting policy must load');
  const holder = createPolicyHolder(snapshotOf(files, STARTED_AT));
  const log = createMemoryLog();
  const reloader = createPolicyReloader({
    holder,
    paths,
    mode: options.mode ?? 'demo',
    logger: createLogger({ level: 'info', destination: log.stream }),
    clock: () => RELOADED_AT,
    ...(options.load === undefined ? {} : { load: options.load }),
  });
  return { folder, holder, log, reloader, paths };
}

/** 1-based line of the first line containing `text`, and the column its first non-space starts at. */
function positionOf(fileText: string, text: string): [number, number] {
  const lines = fileText.split('\n');
  const index = lines.findIndex((line) => line.includes(text));
  const line = lines[index] ?? '';
  return [index + 1, line.length - line.trimStart().length + 1];
}

describe('reloading the policy', () => {
  it('puts a valid new file in force and logs the old and new id, version and content hash', async () => {
    const { folder, holder, log, reloader } = await setUp(larkspurPolicy('1.0.0'));
    const before = holder.current();
    const next = larkspurPolicy('1.1.0');
    folder.write(next);

    const outcome = await reloader.reload('manual');

    expect(outcome.kind).toBe('swapped');
    const now = holder.current();
    expect(now).not.toBe(before);
    expect([now.policy.id, now.policy.version, now.contentHash]).toStrictEqual(['larkspur-bay-adult', '1.1.0', sha256(next)]);
    expect(now.loadedAt).toBe(RELOADED_AT.toISOString());
    expect(Object.isFrozen(now)).toBe(true);
    const line = log.lines().find((l) => l['policyReload'] === 'swapped');
    expect(line).toMatchObject({
      level: 30,
      trigger: 'manual',
      previousPolicyId: 'larkspur-bay-adult',
      previousPolicyVersion: '1.0.0',
      previousPolicyContentHash: before.contentHash,
      policyId: 'larkspur-bay-adult',
      policyVersion: '1.1.0',
      policyContentHash: sha256(next),
      policyAcknowledgements: [],
      msg: 'policy reloaded: larkspur-bay-adult v1.0.0 -> larkspur-bay-adult v1.1.0',
    });
    expect(reloader.rejectedCount()).toBe(0);
  });

  it('puts a file in force before its effectiveFrom date, with a warning, as at start', async () => {
    const { folder, holder, log, reloader } = await setUp(larkspurPolicy('1.0.0'));
    // The committee loads its next version early; it applies from a date after RELOADED_AT (invented).
    folder.write(larkspurPolicy('1.1.0').replace(/^effectiveFrom: .*$/m, 'effectiveFrom: 2026-12-15'));
    expect((await reloader.reload('manual')).kind).toBe('swapped');
    expect(holder.current().policy.version).toBe('1.1.0');
    const warning = log.lines().find((l) => l['effectiveFrom'] === '2026-12-15');
    expect(warning).toMatchObject({ level: 40, policyId: 'larkspur-bay-adult' });
  });

  it('logs the acknowledgements of the file it puts in force', async () => {
    const { folder, holder, log, reloader } = await setUp(larkspurPolicy('1.0.0'));
    const reason = 'Larkspur Bay respiratory team reviews every gas in person (invented demo)';
    folder.write(
      edited(
        ['id: based-on-bts-2017', 'id: larkspur-bay-adult'],
        ['version: "1.0.0"', 'version: "2.0.0"'],
        ['disabledRules: []', 'disabledRules: [acute-hypercapnic-acidosis]'],
        ['acknowledgements: []', `acknowledgements: [{ ruleId: acute-hypercapnic-acidosis, change: disabled, reason: "${reason}" }]`],
      ),
    );
    expect((await reloader.reload('signal')).kind).toBe('swapped');
    expect(holder.current().policy.disabledRules).toStrictEqual(['acute-hypercapnic-acidosis']);
    const line = log.lines().find((l) => l['policyReload'] === 'swapped');
    expect(line?.['policyAcknowledgements']).toStrictEqual([{ ruleId: 'acute-hypercapnic-acidosis', change: 'disabled', reason }]);
  });

  describe('keeps the policy in force and logs every problem when the new file is bad', () => {
    const [riskLine, riskColumn] = positionOf(BUNDLED_TEXT, 'hypercapnicRisk: { lowPercent: 88, highPercent: 92 }');
    const lastLine = BUNDLED_TEXT.trimEnd().split('\n').length + 2;
    const cases: readonly (readonly [string, string, readonly (readonly [number, number])[]])[] = [
      [
        // BTS 2017 Table 4 gives 88-92 % at risk; above the standard range is refused (check-policy.ts)
        'an at-risk range above the standard range',
        `${edited(['hypercapnicRisk: { lowPercent: 88, highPercent: 92 }', 'hypercapnicRisk: { lowPercent: 96, highPercent: 99 }']).trimEnd()}\n# ${MARKER}\n`,
        [[riskLine, riskColumn]],
      ],
      ['a key the format does not have', `${BUNDLED_TEXT.trimEnd()}\n# ${MARKER}\nwardColour: teal\n`, [[lastLine, 1]]],
      ['broken YAML', `${BUNDLED_TEXT.trimEnd()}\n# ${MARKER}\ncautions: [unclosed\n`, []],
    ];

    it.each(cases)('%s', async (_name, badText, positions) => {
      const { folder, holder, log, reloader } = await setUp(larkspurPolicy('1.0.0'));
      const before = holder.current();
      folder.write(badText);

      const outcome = await reloader.reload('signal');

      expect(outcome.kind === 'kept' && outcome.reason).toBe('invalid');
      expect(holder.current()).toBe(before);
      expect(reloader.rejectedCount()).toBe(1);
      const line = log.lines().find((l) => l['policyReload'] === 'rejected');
      expect(line).toMatchObject({ level: 50, trigger: 'signal', reason: 'invalid', rejectedReloads: 1, policyVersion: '1.0.0' });
      const problems = line?.['problems'] as { file: string; line?: number; column?: number; message: string }[];
      expect(problems.length).toBeGreaterThan(0);
      expect(line?.['problemCount']).toBe(problems.length);
      for (const problem of problems) {
        expect(problem.file).toBe(folder.policyPath);
        expect(typeof problem.line).toBe('number'); // every problem in the file is placed
        expect(typeof problem.column).toBe('number');
      }
      for (const position of positions) {
        expect(problems.map((p) => [p.line, p.column])).toContainEqual(position);
      }
      expect(log.text()).not.toContain(MARKER);
    });

    it('when the file has gone', async () => {
      const { folder, holder, reloader, log } = await setUp(larkspurPolicy('1.0.0'));
      const before = holder.current();
      rmSync(folder.policyPath);
      const outcome = await reloader.reload('file-change');
      expect(outcome.kind).toBe('kept');
      expect(holder.current()).toBe(before);
      const line = log.lines().find((l) => l['policyReload'] === 'rejected');
      expect(line?.['problems']).toStrictEqual([{ file: folder.policyPath, path: '(file)', message: 'cannot be read (ENOENT)' }]);
    });

    it('when a card template has gone from the cards folder', async () => {
      const cardsDir = join(mkdtempSync(join(tmpdir(), 'oxygen-order-checker-cards-')), 'cards');
      cpSync(policyFolder('').cardsDir, cardsDir, { recursive: true });
      const { holder, reloader, log } = await setUp(larkspurPolicy('1.0.0'), { cardsDir });
      const before = holder.current();
      rmSync(join(cardsDir, 'spo2-below-target.yaml'));
      expect((await reloader.reload('manual')).kind).toBe('kept');
      expect(holder.current()).toBe(before);
      const problems = log.lines().find((l) => l['policyReload'] === 'rejected')?.['problems'];
      expect(problems).toStrictEqual([
        { file: join(cardsDir, 'spo2-below-target.yaml'), path: '(file)', message: "is missing: rule 'spo2-below-target' has no card template" },
      ]);
    });

    it('and puts the next good file in force', async () => {
      const { folder, holder, reloader } = await setUp(larkspurPolicy('1.0.0'));
      folder.write('format: 1\n');
      await reloader.reload('manual');
      folder.write(larkspurPolicy('1.0.1'));
      expect((await reloader.reload('manual')).kind).toBe('swapped');
      expect(holder.current().policy.version).toBe('1.0.1');
      expect(reloader.rejectedCount()).toBe(1);
    });
  });

  describe('a changed file that keeps its id and version', () => {
    const changed = edited(
      ['id: based-on-bts-2017', 'id: larkspur-bay-adult'],
      ['title: Adult acute oxygen targets based on BTS 2017', 'title: Larkspur Bay adult oxygen targets'],
    );

    it('is refused in production, where cards and reviews would show two policies under one name', async () => {
      const { folder, holder, reloader, log } = await setUp(larkspurPolicy('1.0.0'), { mode: 'production' });
      const before = holder.current();
      folder.write(changed);
      const outcome = await reloader.reload('signal');
      expect(outcome.kind === 'kept' && outcome.reason).toBe('unsafe');
      expect(holder.current()).toBe(before);
      const line = log.lines().find((l) => l['policyReload'] === 'rejected');
      expect(line).toMatchObject({ reason: 'unsafe', problems: [{ path: 'version' }] });
    });

    it('is put in force in demo mode, with a warning', async () => {
      const { folder, holder, reloader, log } = await setUp(larkspurPolicy('1.0.0'), { mode: 'demo' });
      folder.write(changed);
      expect((await reloader.reload('signal')).kind).toBe('swapped');
      expect(holder.current().contentHash).toBe(sha256(changed));
      const line = log.lines().find((l) => l['policyReload'] === 'swapped');
      expect(line).toMatchObject({ level: 40, reloadWarnings: [{ path: 'version' }] });
    });

    it('an unchanged file reloads in production (the same policy, read again)', async () => {
      const { holder, reloader } = await setUp(larkspurPolicy('1.0.0'), { mode: 'production' });
      const before = holder.current();
      expect((await reloader.reload('signal')).kind).toBe('swapped');
      expect(holder.current().contentHash).toBe(before.contentHash);
    });
  });

  describe('reloads asked for together', () => {
    /** The start-up loader, held at its first call until `release`, counting loads running at once. */
    function gatedLoad() {
      let release: () => void = () => undefined;
      const gate = new Promise<void>((resolve) => {
        release = resolve;
      });
      const state = { calls: 0, running: 0, mostAtOnce: 0 };
      let firstRead: () => void = () => undefined;
      const read = new Promise<void>((resolve) => {
        firstRead = resolve;
      });
      const load = async (paths: FilePaths): Promise<LoadedFiles> => {
        state.calls += 1;
        state.running += 1;
        state.mostAtOnce = Math.max(state.mostAtOnce, state.running);
        const files = await loadPolicyAndCards(paths);
        // Held after reading, so the first run has read its file before the test writes the next.
        if (state.calls === 1) {
          firstRead();
          await gate;
        }
        state.running -= 1;
        return files;
      };
      return { load, state, read, release: () => release() };
    }

    it('run one at a time and end with the newest file', async () => {
      const gated = gatedLoad();
      const { folder, holder, reloader, log } = await setUp(larkspurPolicy('1.0.0'), { load: gated.load });
      folder.write(larkspurPolicy('1.1.0'));
      const first = reloader.reload('signal');
      await gated.read;
      folder.write(larkspurPolicy('1.2.0'));
      const second = reloader.reload('signal');
      folder.write(larkspurPolicy('1.3.0'));
      const third = reloader.reload('signal');
      gated.release();
      const outcomes = await Promise.all([first, second, third]);

      expect(holder.current().policy.version).toBe('1.3.0');
      expect(gated.state.mostAtOnce).toBe(1);
      // The second and third asked while the first ran: one more run after it serves both.
      expect(gated.state.calls).toBe(2);
      expect(outcomes[1]).toBe(outcomes[2]);
      const swaps = log.lines().filter((l) => l['policyReload'] === 'swapped');
      expect(swaps.map((l) => [l['previousPolicyVersion'], l['policyVersion']])).toStrictEqual([
        ['1.0.0', '1.1.0'],
        ['1.1.0', '1.3.0'],
      ]);
    });

    it('never reject, even when the loader throws', async () => {
      const { holder, reloader } = await setUp(larkspurPolicy('1.0.0'), {
        load: () => Promise.reject(new TypeError('disk on fire')),
      });
      const before = holder.current();
      const outcome = await reloader.reload('signal');
      expect(outcome.kind === 'kept' && outcome.problems.map((p) => p.message)).toStrictEqual(['could not be loaded (TypeError)']);
      expect(holder.current()).toBe(before);
    });
  });
});
