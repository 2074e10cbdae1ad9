import { newestFirst } from '../assessment/current-values.js';
import { formatDuration } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeMeasured } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * No SpO2 within `freshness.vitalSignsMinutes`, so the checks that compare SpO2 with the target could
 * not run.
 *
 * Rationale: oxygen is titrated against SpO2 (BTS 2017); without a current reading this service can
 * check the order but not the patient's response, and says so rather than staying silent. Info. Names
 * the last reading if the reader passed a stale one.
 * Source: BTS 2017 (monitoring); the freshness window is the local policy's.
 */
export const rule: Rule = {
  id: 'no-recent-spo2',
  title: 'No recent SpO2 reading',
  version: 2,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    // Comfort oxygen in terminal palliative care is not titrated against saturation (BTS 2017).
    if (assessment.current.spo2 !== undefined || assessment.order?.purpose === 'comfort') {
      return [];
    }
    const last = newestFirst(facts.spo2Percent)[0];
    return [
      makeFinding(rule, {
        orderReference: undefined, // about the patient, not an order: stated once per call
        values: {
          freshnessWindow: formatDuration(policy.freshness.vitalSignsMinutes),
          lastSpo2: last === undefined ? 'none within the window' : describeMeasured(last, now, '%'),
        },
        sourceKeys: ['bts-2017', 'local-policy'],
      }),
    ];
  },
};
