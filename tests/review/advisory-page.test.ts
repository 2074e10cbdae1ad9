import { describe, expect, it } from 'vitest';
import { renderAdvisoryPage, wordsOf } from '../../src/review/advisory-page.js';
import type { ReasonDisplay } from '../../src/review/override-reasons.js';
import { advisory, escapedHostile, feedbackRecord, hostile } from './support/advisory-fixtures.js';
import { elementsWith } from './support/read-markup.js';

const ZONE = 'Europe/London';
// The display of cards/acute-hypercapnic-acidosis.yaml's `ceiling-of-care` reason.
const displays: ReasonDisplay = (ruleId, code) =>
  ruleId === 'acute-hypercapnic-acidosis' && code === 'ceiling-of-care' ? 'Agreed ceiling of care' : undefined;

describe('renderAdvisoryPage', () => {
  it('shows the advisory facts, its issue time in the site zone with the zone named', () => {
    const out = renderAdvisoryPage({ advisory: advisory(), timeZone: ZONE, reasonDisplay: displays });
    expect(out).toContain('<dd data-field="rule">acute-hypercapnic-acidosis, version 2</dd>');
    expect(out).toContain('bts-2017, version 1.4.0');
    expect(out).toContain('sha256-3f1c9a');
    // 13:05 UTC in July is 14:05 BST (Summer Time Act 1972).
    expect(out).toContain('<dd data-field="issued">12 Jul 2026, 14:05 BST</dd>');
    expect(out).toContain('Times in Europe/London');
    expect(elementsWith(out, 'data-key-number').map((e) => e['data-key-number'])).toStrictEqual(['pH', 'PCO2']);
  });

  it('lists every feedback record with its outcome, reason display and code, and both times', () => {
    const { overrideReason: _none, ...accepted } = feedbackRecord({ id: 'fb-1', outcome: 'accepted', acceptedSuggestionIds: ['s-1'] });
    const records = [
      accepted,
      feedbackRecord({ id: 'fb-2', outcome: 'overridden', outcomeTimestamp: '2026-07-12T14:00:00Z', receivedAt: '2026-07-12T14:00:01Z' }),
      feedbackRecord({ id: 'fb-3', outcome: 'overridden', overrideReason: { code: 'not-in-card-file' } }),
    ];
    const out = renderAdvisoryPage({ advisory: advisory({ feedback: records }), timeZone: ZONE, reasonDisplay: displays });
    const rows = elementsWith(out, 'data-feedback-id');
    expect(rows.map((r) => [r['data-feedback-id'], r['data-outcome']])).toStrictEqual([
      ['fb-1', 'accepted'],
      ['fb-2', 'overridden'],
      ['fb-3', 'overridden'],
    ]);
    expect(out).toContain('Agreed ceiling of care (ceiling-of-care)');
    expect(out).toContain('<td>not-in-card-file</td>');
    expect(out).toContain('<td>12 Jul 2026, 15:00 BST</td>'); // 14:00 UTC, BST (Summer Time Act 1972)
  });

  it('says when no feedback has been received', () => {
    const out = renderAdvisoryPage({ advisory: advisory({ feedback: [] }), timeZone: ZONE, reasonDisplay: displays });
    expect(out).toContain('id="feedback-empty"');
    expect(out).not.toContain('id="feedback-table"');
  });

  it('renders the card detail and workings as the safe Markdown subset', () => {
    const out = renderAdvisoryPage({ advisory: advisory(), timeZone: ZONE, reasonDisplay: displays });
    expect(out).toContain('<div class="markdown" id="card-detail"><p><strong>Based on:</strong></p><ul><li>Blood gas pH 7.28</li></ul>');
    expect(out).toContain('<em>Advisory only.</em>');
  });

  it('includes the chart with one point per stored reading', () => {
    const out = renderAdvisoryPage({ advisory: advisory(), timeZone: ZONE, reasonDisplay: displays });
    expect(elementsWith(out, 'data-spo2-point')).toHaveLength(2);
    expect(elementsWith(out, 'data-target-band')[0]?.['data-low']).toBe('88'); // BTS 2017, section 6
  });

  it('escapes every field that comes from the store', () => {
    const fields = {
      summary: hostile('summary'),
      unit: hostile('unit'),
      ruleId: hostile('ruleId'),
      serviceId: hostile('serviceId'),
      hook: hostile('hook'),
      cardUuid: hostile('cardUuid'),
      patientKey: hostile('patientKey'),
      detail: hostile('detail'),
      workings: hostile('workings'),
      client: { iss: hostile('iss'), tenant: hostile('tenant') },
      policy: { id: hostile('policyId'), version: hostile('policyVersion'), contentHash: hostile('contentHash') },
      keyNumbers: [{ name: hostile('keyName'), value: hostile('keyValue') }],
      series: { spo2: [{ at: '2026-07-12T12:00:00Z', spo2Percent: 90 }], oxygen: [{ at: '2026-07-12T11:00:00Z', device: hostile('device') }] },
      feedback: [
        feedbackRecord({ id: hostile('feedbackId'), overrideReason: { code: hostile('reasonCode'), system: hostile('reasonSystem') } }),
      ],
    };
    const out = renderAdvisoryPage({ advisory: advisory(fields), timeZone: ZONE, reasonDisplay: displays });
    expect(out).not.toContain('<i data-f');
    // Shown, escaped, not dropped (the system is used only to look up the display).
    for (const field of ['summary', 'unit', 'ruleId', 'serviceId', 'hook', 'cardUuid', 'patientKey', 'iss', 'tenant', 'policyId', 'policyVersion', 'contentHash', 'keyName', 'keyValue', 'device', 'feedbackId', 'reasonCode']) {
      expect(out, field).toContain(escapedHostile(field));
    }
    // The Markdown fields keep their text escaped too (the renderer's own escaping of the same payload).
    expect(out).toContain('&quot;&gt;&lt;i data-f=&quot;detail&quot;&gt;');
    expect(out).toContain('&quot;&gt;&lt;i data-f=&quot;workings&quot;&gt;');
  });
});

describe('wordsOf', () => {
  it('spells camel-case value names as words and leaves symbols alone', () => {
    expect(wordsOf('orderDescription')).toBe('order description');
    expect(wordsOf('targetSourceNote')).toBe('target source note');
    expect(wordsOf('pH')).toBe('pH');
    expect(wordsOf('PCO2')).toBe('PCO2');
    expect(wordsOf('spo2')).toBe('spo2');
  });
});
