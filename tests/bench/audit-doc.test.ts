import { describe, expect, it } from 'vitest';
import type { AuditPair } from '../../bench/audit-cases.js';
import type { AuditMicroResult } from '../../bench/audit-micro.js';
import { auditFindings, auditLoadTable, auditMicroFinding, auditMicroTable, auditVerdict, feedbackTable } from '../../bench/audit-report.js';
import type { LoadResult } from '../../bench/load-test.js';
import type { MicroResult, Timing } from '../../bench/micro.js';
import { renderAuditSection, renderPerformanceDoc } from '../../bench/performance-doc.js';
import type { AuditReport, RunReport } from '../../bench/report.js';
import { inventedMachine } from './support/invented-machine.js';

/**
 * How the audit section reads given numbers: the ratios and differences it prints are those of the
 * numbers it was given, and its verdict follows the noise band and the budget. No timing is taken
 * here; the inputs are invented.
 */

function load(label: string, reqPerSec: number, p50: number, p99: number): LoadResult {
  return {
    label,
    url: 'http://127.0.0.1:1/x',
    method: 'POST',
    requestBytes: 1234,
    reqPerSec,
    reqPerSecStddev: 0,
    latencyMs: { p50, p97_5: p99, p99, max: p99 },
    completed: Math.round(reqPerSec * 8),
    durationS: 8,
    non2xx: 0,
    errors: 0,
    timeouts: 0,
  };
}

const timing = (p50Us: number, p99Us = p50Us * 2): Timing => ({ iterations: 100, meanUs: p50Us, p50Us, p99Us });

function pair(example: string, on: [number, number, number], off: [number, number, number]): AuditPair {
  return { example, cards: 2, on: load(`${example} on`, ...on), off: load(`${example} off`, ...off) };
}

function micro(name: string, evaluateUs: number): MicroResult {
  return { name, requestBytes: 1234, cards: 2, baseline: timing(20), evaluate: timing(evaluateUs), wholePath: timing(evaluateUs * 2) };
}

const auditMicro = (name: string, recordUs: number): AuditMicroResult => ({ name, cards: 2, record: timing(recordUs) });

function audit(pairs: AuditPair[], feedback = load('POST feedback', 400, 20, 60)): AuditReport {
  return {
    http: { pairs, feedback, feedbackCards: 600 },
    micro: [auditMicro('sign-a', 2000), auditMicro('sign-b', 500)],
  };
}

const MICRO = [micro('sign-a', 100), micro('sign-b', 250)];
const BASELINE = 4000;

describe('auditVerdict', () => {
  // ±15 %: the run-to-run spread of these machines (toolchain.md, "Baseline figures").
  it('calls a ratio inside ±15 % noise, below it slower, above it faster', () => {
    for (const value of [0.85, 0.9, 0.99, 1, 1.1, 1.15]) {
      expect(auditVerdict(value)).toBe('within-noise');
    }
    for (const value of [0.2, 0.5, 0.84]) {
      expect(auditVerdict(value)).toBe('slower');
    }
    for (const value of [1.16, 2]) {
      expect(auditVerdict(value)).toBe('faster');
    }
  });
});

// The 500 ms budget: CDS Hooks 2.0 §Providing FHIR Resources ("on the order of 500 ms").
describe('audit tables', () => {
  it('print on / off, signed latency differences and the share of the 500 ms budget from the numbers given', () => {
    const table = auditLoadTable([pair('sign-a', [900, 12, 40], [1000, 10, 30]), pair('sign-b', [1000, 9, 25], [800, 10, 30])], BASELINE);
    const rows = table.split('\n').slice(2);
    // 900 / 1000 = 0.90; p50 12 − 10 = +2; p99 40 − 30 = +10; 900 / 4000 = 0.23; 40 / 500 = 8.0 %
    expect(rows[0]).toBe('| sign-a | 2 | 900 | 1,000 | 0.90 × | 12 / 10 | +2 | 40 / 30 | +10 | 0.23 × | 8.0 |');
    // 1000 / 800 = 1.25; p50 9 − 10 = −1; p99 25 − 30 = −5; 25 / 500 = 5.0 %
    expect(rows[1]).toBe('| sign-b | 2 | 1,000 | 800 | 1.25 × | 9 / 10 | −1 | 25 / 30 | −5 | 0.25 × | 5.0 |');
  });

  it('give the feedback route as a ratio to the baseline', () => {
    const row = feedbackTable(load('POST feedback', 400, 20, 60), BASELINE).split('\n')[2];
    // 400 / 4000 = 0.10; 60 / 500 = 12.0 %
    expect(row).toBe('| POST feedback | 1,234 | 400 | 20 | 60 | 60 | 0.10 × | 12.0 |');
  });

  it('put the audit write beside the same example’s evaluation, and say so when there is none', () => {
    const table = auditMicroTable([...audit([]).micro, auditMicro('sign-c', 300)], MICRO);
    const rows = table.split('\n').slice(2);
    // 2000 / 100 = 20.0; 500 / 250 = 2.00
    expect(rows[0]).toBe('| sign-a | 2 | 100 | 2,000 / 4,000 | 20.0 × |');
    expect(rows[1]).toBe('| sign-b | 2 | 250 | 500 / 1,000 | 2.00 × |');
    expect(rows[2]).toBe('| sign-c | 2 | not measured | 300 / 600 |  |');
    expect(auditMicroFinding(audit([]).micro, MICRO)).toContain('from 2.00 × (sign-b) to 20.0 × (sign-a)');
  });
});

describe('audit findings', () => {
  it('say the audit write is not noticeable when every case is within the noise and p99 well inside the budget', () => {
    const lines = auditFindings(audit([pair('sign-a', [900, 12, 40], [1000, 10, 30]), pair('sign-b', [1050, 9, 25], [1000, 10, 30])]), BASELINE);
    expect(lines[0]).toContain('from 0.90 × (sign-a) to 1.05 × (sign-b)');
    expect(lines[0]).toContain('did not slow the hook call noticeably');
    expect(lines[1]).toContain('p50 from −1 to +2 ms, p99 from −5 to +10 ms');
    expect(lines[1]).toContain('40 ms (sign-a), 8.0 % of the 500 ms CDS Hooks budget: well inside it');
    // 400 / 4000 = 0.10; 1000 / 400 = 2.50 ms a call
    expect(lines[2]).toContain('400 single-item calls a second, 0.10 × the baseline');
    expect(lines[2]).toContain('2.50 ms of wall time per call');
  });

  it('name the cases the audit write slowed beyond the noise, and a p99 not well inside the budget', () => {
    const lines = auditFindings(audit([pair('sign-a', [700, 200, 300], [1000, 10, 30]), pair('sign-b', [1000, 9, 25], [1000, 10, 30])]), BASELINE);
    expect(lines[0]).toContain('sign-a fell more than the 15 %');
    expect(lines[0]).not.toContain('sign-b fell');
    expect(lines[0]).toContain('slowed the hook call noticeably there');
    // 300 ms is 60 % of the 500 ms budget (CDS Hooks 2.0), above the half the section calls well inside.
    expect(lines[1]).toContain('300 ms (sign-a), 60.0 % of the 500 ms CDS Hooks budget: not well inside it');
  });
});

describe('the audit section of docs/performance.md', () => {
  it('explains how to read it and carries the run’s tables, or says it was not measured', () => {
    const section = renderAuditSection(audit([pair('sign-a', [900, 12, 40], [1000, 10, 30])]), BASELINE, MICRO);
    expect(section).toMatch(/^### Audit trail\n/);
    expect(section).toContain('between 0.85 × and 1.15 ×');
    expect(section).toContain('at most 50 % of it');
    expect(section).toContain('| sign-a | 2 | 900 | 1,000 | 0.90 × |');
    expect(section).toContain('| POST feedback |');
    expect(section).toContain('| sign-a | 2 | 100 | 2,000 / 4,000 | 20.0 × |');
    expect(renderAuditSection(undefined, BASELINE, MICRO)).toContain('Not measured in this run.');
  });

  it('sits in the whole page after the pure pipeline', () => {
    const report: RunReport = {
      machine: inventedMachine('2026-03-14T10:00:00.000Z', 'abc1234'),
      settings: { runner: 'dist', connections: 10, durationS: 8, warmupS: 2, buildS: 30, microIterations: 2000 },
      rows: [],
      baseline: { first: load('first', 3900, 2, 5), last: load('last', 4100, 2, 5), meanReqPerSec: BASELINE, driftPercent: 5 },
      echo: undefined,
      logLinesDuringLoad: 0,
      micro: MICRO,
      serviceProfile: undefined,
      microProfile: undefined,
      profiledExample: undefined,
      audit: audit([pair('sign-a', [900, 12, 40], [1000, 10, 30])]),
    };
    const page = renderPerformanceDoc(report);
    const pure = page.indexOf('### Pure pipeline, in process');
    const section = page.indexOf('### Audit trail');
    expect(pure).toBeGreaterThan(0);
    expect(section).toBeGreaterThan(pure);
    expect(page.indexOf('### What dominates')).toBeGreaterThan(section);
    expect(page).toContain('did not slow the hook call noticeably');
  });
});
