import type { AdvisoryQuery, AdvisoryRecord, FeedbackOutcome, SummaryQuery } from '../../../src/store/store.js';
import { advisory, EMERGENCY, WARD_7 } from './fixtures.js';

/**
 * Invented advisories at the fictional Larkspur Bay General Hospital spread over every value the review
 * pages filter on (unit or none, rule, indicator, patient, issue time, latest outcome and reason), and
 * the list and summary queries that filter on them alone and together. Used to check that a change of
 * indexes leaves every review answer as it was.
 */

const RULES = ['spo2-above-target', 'spo2-below-target', 'uncontrolled-oxygen-at-risk'] as const;
const INDICATORS = ['info', 'warning', 'critical'] as const;
const UNITS = [WARD_7, EMERGENCY, undefined] as const;
const PATIENTS = ['a1b2c3d4e5f60718293a4b5c6d7e8f90', 'ffffffffffffffffffffffffffffffff', '0123456789abcdef0123456789abcdef'];
const FIRST_MS = Date.parse('2026-03-01T00:00:00Z');

export const REVIEW_CARD_COUNT = 60;

/** Card n's latest outcome and reason as the feedback writer would leave them (every third none). */
export function reviewOutcome(n: number): { outcome: FeedbackOutcome; reasonCode: string | null } | undefined {
  if (n % 3 === 0) {
    return undefined;
  }
  return n % 3 === 1 ? { outcome: 'accepted', reasonCode: null } : { outcome: 'overridden', reasonCode: `reason-${String(n % 2)}` };
}

export function reviewRecords(): AdvisoryRecord[] {
  return Array.from({ length: REVIEW_CARD_COUNT }, (_unused, i) => {
    const n = i + 1;
    const unit = UNITS[n % UNITS.length];
    // Some cards share an issue time, so the list's tie-break on card uuid is exercised too.
    const issuedAt = new Date(FIRST_MS + Math.floor(n / 2) * 3_600_000).toISOString();
    const base = advisory(n, {
      ruleId: RULES[n % RULES.length] as string,
      indicator: INDICATORS[Math.floor(n / 3) % INDICATORS.length] as (typeof INDICATORS)[number],
      issuedAt,
      patientKey: PATIENTS[n % PATIENTS.length] as string,
    });
    if (unit !== undefined) {
      return { ...base, unit };
    }
    const { unit: _dropped, ...withoutUnit } = base;
    return withoutUnit;
  });
}

const WINDOW = { from: '2026-03-01T05:00:00Z', to: '2026-03-02T02:00:00Z' };

/** Every list filter alone and in combination, with and without a time window, on two pages. */
export function reviewListQueries(): AdvisoryQuery[] {
  const queries: AdvisoryQuery[] = [];
  for (const window of [{}, WINDOW]) {
    for (const unit of [undefined, WARD_7, EMERGENCY]) {
      for (const ruleId of [undefined, 'spo2-below-target']) {
        for (const indicator of [undefined, 'critical'] as const) {
          for (const outcome of [undefined, 'none', 'accepted', 'overridden'] as const) {
            for (const patientKey of [undefined, PATIENTS[1]]) {
              for (const offset of [0, 3]) {
                queries.push({
                  ...window,
                  ...(unit === undefined ? {} : { unit }),
                  ...(ruleId === undefined ? {} : { ruleId }),
                  ...(indicator === undefined ? {} : { indicator }),
                  ...(outcome === undefined ? {} : { outcome }),
                  ...(patientKey === undefined ? {} : { patientKey }),
                  limit: 5,
                  offset,
                });
              }
            }
          }
        }
      }
    }
  }
  return queries;
}

export function reviewSummaryQueries(): SummaryQuery[] {
  return [{}, WINDOW, { from: WINDOW.from }, { to: WINDOW.to }];
}
