import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { startServer } from '../../src/server.js';
import { makeTempDataDir } from '../helpers/temp-store.js';
import { createMemoryLog } from '../log/memory-log.js';
import { policyWith } from '../policy/support/policy-sections.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));

function writePolicy(text: string): string {
  const file = join(mkdtempSync(join(tmpdir(), 'oxygen-order-checker-start-')), 'larkspur-bay.yaml');
  writeFileSync(file, text);
  return file;
}

describe('start-up with a checked policy', () => {
  it('refuses a dangerous policy, listing every problem with its line and column', async () => {
    const file = writePolicy(
      policyWith(
        [
          'targets:',
          '  standard: { lowPercent: 94, highPercent: 98 }', // BTS 2017, Tables 1-3
          '  hypercapnicRisk: { lowPercent: 96, highPercent: 99 }', // above the standard range: refused
          '  oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }', // BTS 2017, Table 3 (V2)
          'disabledRules: [acute-hypercapnic-acidosis]',
        ],
        'targets',
        'disabledRules',
      ),
    );
    const result = await startServer({ PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(), OXYGEN_CHECKER_POLICY: file }, ROOT);
    expect(result.kind).toBe('refused');
    const lines = (result.kind === 'refused' ? result.problems : '').split('\n');
    expect(lines.map((line) => line.split(' ')[0])).toStrictEqual([`${file}:3:3:`, `${file}:5:17:`]);
    expect(lines[0]).toContain('targets.hypercapnicRisk: the at-risk range 96–99 %');
    expect(lines[1]).toContain("disabledRules.0: 'acute-hypercapnic-acidosis' gives critical cards by default");
  });

  it('starts with warnings and acknowledgements carried in the start-up log line', async () => {
    const file = writePolicy(
      readFileSync(join(ROOT, 'policies/based-on-bts-2017.yaml'), 'utf8')
        .replace('    - copd\n', '    - copd\n    - pregnancy\n') // BTS 2017 Table 4 does not list pregnancy
        .replace('severity: {}', 'severity: { acute-hypercapnic-acidosis: warning }')
        .replace(
          /^acknowledgements: \[\].*$/m,
          'acknowledgements: [{ ruleId: acute-hypercapnic-acidosis, change: lowered, reason: "Outreach reviews every gas at once", by: Oxygen committee }]',
        ),
    );
    const log = createMemoryLog();
    const result = await startServer(
      { PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir(), OXYGEN_CHECKER_POLICY: file },
      ROOT,
      createLogger({ level: 'info', destination: log.stream }),
    );
    if (result.kind !== 'started') throw new Error(result.problems);
    await result.started.close();
    const first = log.lines()[0] ?? {};
    expect(first['policyAcknowledgements']).toStrictEqual([
      { ruleId: 'acute-hypercapnic-acidosis', change: 'lowered', reason: 'Outreach reviews every gas at once', by: 'Oxygen committee' },
    ]);
    const warnings = first['policyWarnings'] as string[];
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toMatch(new RegExp(`^${file}:\\d+:7: hypercapnicRisk\\.conditions\\.1: 'pregnancy' is not known`));
  });
});
