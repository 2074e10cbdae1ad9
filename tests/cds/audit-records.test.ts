import { describe, expect, it } from 'vitest';
import { buildAuditRecords, type AuditCall } from '../../src/cds/audit-records.js';
import type { CardAudit, HookEvaluation } from '../../src/cds/evaluate-hook.js';

// Invented card of the Larkspur Bay demo: the numbers are placeholders, not clinical check values.
const CARD: CardAudit = {
  cardUuid: '7d1f2a3b-4c5d-5e6f-8a9b-0c1d2e3f4a5b',
  suggestionUuids: ['9e8d7c6b-5a4f-5e3d-8c2b-1a0f9e8d7c6b'],
  ruleId: 'spo2-above-target',
  ruleVersion: 3,
  indicator: 'warning',
  summary: 'SpO2 above target on oxygen',
  detail: 'detail text',
  keyNumbers: { spo2: '99 %', targetRange: '94–98 %' },
  workings: '### Inputs',
  series: { spo2: [{ at: '2026-11-30T09:30:00.000Z', spo2Percent: 99 }], oxygen: [], target: { lowPercent: 94, highPercent: 98 } },
};

function evaluation(unit: string | undefined, cards: readonly CardAudit[] = [CARD]): HookEvaluation {
  return {
    response: { cards: [] },
    ruleIds: cards.map((c) => c.ruleId),
    policyId: 'based-on-bts-2017',
    policyVersion: '1.0.0',
    problems: [],
    audit: { unit, cards },
  };
}

const CALL: AuditCall = {
  serviceId: 'oxygen-order-sign',
  hook: 'order-sign',
  hookInstance: 'c6a1b7e0-2d4f-4b8e-9a3c-5f6e7d8c9b0a',
  client: { iss: 'https://ehr.larkspur-bay.example', tenant: 'lbgh-wards' },
  policyContentHash: 'ab'.repeat(32),
  patientKey: '0123456789abcdef0123456789abcdef',
  issuedAt: new Date('2026-11-30T09:45:00Z'),
};

describe('buildAuditRecords', () => {
  it('makes one record per card with the call, the policy and the patient key, key numbers as a list', () => {
    expect(buildAuditRecords(evaluation('Ward 4'), CALL)).toStrictEqual([
      {
        cardUuid: CARD.cardUuid,
        suggestionUuids: CARD.suggestionUuids,
        serviceId: 'oxygen-order-sign',
        hook: 'order-sign',
        hookInstance: CALL.hookInstance,
        client: { iss: 'https://ehr.larkspur-bay.example', tenant: 'lbgh-wards' },
        ruleId: 'spo2-above-target',
        ruleVersion: 3,
        indicator: 'warning',
        summary: CARD.summary,
        detail: CARD.detail,
        workings: CARD.workings,
        keyNumbers: [
          { name: 'spo2', value: '99 %' },
          { name: 'targetRange', value: '94–98 %' },
        ],
        policy: { id: 'based-on-bts-2017', version: '1.0.0', contentHash: CALL.policyContentHash },
        unit: 'Ward 4',
        issuedAt: '2026-11-30T09:45:00.000Z',
        patientKey: CALL.patientKey,
        series: CARD.series,
      },
    ]);
  });

  describe('edge cases', () => {
    it('leaves out the unit and the tenant when there are none, and makes nothing for no cards', () => {
      const [record] = buildAuditRecords(evaluation(undefined), { ...CALL, client: { iss: CALL.client.iss } });
      expect(record !== undefined && 'unit' in record).toBe(false);
      expect(record?.client).toStrictEqual({ iss: CALL.client.iss });
      expect(buildAuditRecords(evaluation('Ward 4', []), CALL)).toStrictEqual([]);
    });
  });
});
