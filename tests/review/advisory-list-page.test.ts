import { describe, expect, it } from 'vitest';
import { renderAdvisoryListPage, type AdvisoryListInput } from '../../src/review/advisory-list-page.js';
import type { ListFilters } from '../../src/review/review-query.js';
import type { AdvisoryListItem } from '../../src/store/store.js';
import { escapedHostile, feedbackRecord, hostile } from './support/advisory-fixtures.js';
import { decodeEntities, elementsWith } from './support/read-markup.js';

const ZONE = 'Europe/London';

function item(n: number, overrides: Partial<AdvisoryListItem> = {}): AdvisoryListItem {
  return {
    cardUuid: `card-${n}`,
    serviceId: 'oxygen-order-check',
    ruleId: 'spo2-above-target',
    indicator: 'warning',
    summary: `SpO2 above target (${n})`,
    unit: 'Ward 7',
    issuedAt: '2026-07-12T13:05:00Z',
    patientKey: `pk-${n}`,
    feedbackCount: 0,
    ...overrides,
  };
}

function input(items: readonly AdvisoryListItem[], filters: Partial<ListFilters> = {}, total = items.length): AdvisoryListInput {
  return {
    timeZone: ZONE,
    facets: { units: ['Ward 7', 'Ward 9'], ruleIds: ['spo2-above-target', 'spo2-below-target'] },
    reasonDisplay: (ruleId, code) => (ruleId === 'spo2-above-target' && code === 'patient-specific-target' ? 'Target agreed for this patient' : undefined),
    result: { kind: 'ok', filters: { page: 1, pageSize: 25, ...filters }, page: { items, total } },
  };
}

describe('renderAdvisoryListPage', () => {
  it('gives each advisory a row keyed by its card uuid, linking to its page', () => {
    const out = renderAdvisoryListPage(input([item(1), item(2)]));
    expect(elementsWith(out, 'data-card-uuid').map((r) => r['data-card-uuid'])).toStrictEqual(['card-1', 'card-2']);
    expect(elementsWith(out, 'data-advisory-link').map((a) => a['href'])).toStrictEqual(['/review/advisories/card-1', '/review/advisories/card-2']);
  });

  it('shows the time in the site zone, labelled', () => {
    const out = renderAdvisoryListPage(input([item(1)]));
    expect(out).toContain('<td data-col="issued">12 Jul 2026, 14:05 BST</td>'); // 13:05 UTC in BST (Summer Time Act 1972)
  });

  it('shows the latest outcome: accepted, overridden with its reason display, or none yet', () => {
    const out = renderAdvisoryListPage(
      input([
        item(1, { latestOutcome: 'accepted', feedbackCount: 1 }),
        item(2, { latestOutcome: 'overridden', latestOverrideReasonCode: 'patient-specific-target', feedbackCount: 2 }),
        item(3, { latestOutcome: 'overridden', feedbackCount: 1 }),
        item(4),
      ]),
    );
    expect(elementsWith(out, 'data-outcome').map((c) => c['data-outcome'])).toStrictEqual(['accepted', 'overridden', 'overridden', 'none']);
    expect(out).toContain('overridden: Target agreed for this patient (patient-specific-target)');
    expect(out).toContain('overridden, no reason given');
    expect(out).toContain('no feedback yet');
  });

  it('keeps the filters in the form and in the page links', () => {
    const items = Array.from({ length: 25 }, (_, i) => item(i + 26));
    const out = renderAdvisoryListPage(input(items, { unit: 'Ward 7', outcome: 'overridden', window: '7d', page: 2 }, 80));
    expect(out).toContain('<option value="Ward 7" selected>Ward 7</option>');
    expect(out).toContain('<option value="overridden" selected>overridden</option>');
    const prev = elementsWith(out, 'rel').find((a) => a['id'] === 'page-prev');
    const next = elementsWith(out, 'rel').find((a) => a['id'] === 'page-next');
    expect(decodeEntities(prev?.['href'] ?? '')).toBe('/review?unit=Ward+7&outcome=overridden&window=7d');
    expect(decodeEntities(next?.['href'] ?? '')).toBe('/review?unit=Ward+7&outcome=overridden&window=7d&page=3');
    expect(out).toContain('Showing 26–50 of 80');
  });

  it('offers no next link on the last page and no previous link on the first', () => {
    const out = renderAdvisoryListPage(input([item(1)], {}, 1));
    expect(out).not.toContain('id="page-next"');
    expect(out).not.toContain('id="page-prev"');
  });

  it('says so when nothing matches', () => {
    expect(renderAdvisoryListPage(input([]))).toContain('No advisories match these filters.');
  });

  it('shows filter problems politely, naming each field, with an empty form', () => {
    const out = renderAdvisoryListPage({
      ...input([]),
      result: { kind: 'invalid', issues: [{ path: 'indicator', message: 'must be one of info, warning, critical' }] },
    });
    expect(out).toContain('<li data-field="indicator"><strong>indicator</strong>: must be one of info, warning, critical</li>');
    expect(out).not.toContain('id="advisory-table"');
    expect(out).toContain('id="advisory-filters"');
  });

  it('escapes every stored field shown in a row, the facets and the filter values', () => {
    const out = renderAdvisoryListPage({
      ...input([item(1, { cardUuid: hostile('cardUuid'), summary: hostile('summary'), unit: hostile('unit'), ruleId: hostile('ruleId'), latestOutcome: 'overridden', latestOverrideReasonCode: hostile('reason') })], {
        unit: hostile('filterUnit'),
      }),
      facets: { units: [hostile('facetUnit')], ruleIds: [hostile('facetRule')] },
      unmatched: { items: [feedbackRecord({ id: hostile('fbId'), cardUuid: hostile('fbCard'), serviceId: hostile('fbService'), client: { iss: hostile('fbIss'), tenant: hostile('fbTenant') }, knownCard: false })], total: 1 },
    });
    expect(out).not.toContain('<i data-f');
    for (const field of ['cardUuid', 'summary', 'unit', 'ruleId', 'reason', 'filterUnit', 'facetUnit', 'facetRule', 'fbId', 'fbCard', 'fbService', 'fbIss', 'fbTenant']) {
      expect(out, field).toContain(escapedHostile(field));
    }
    // The link path is percent-encoded, so the payload cannot leave the href either.
    expect(out).toContain('href="/review/advisories/%22%3E%3Ci%20data-f%3D%22cardUuid%22%3E&#39;%26"');
  });

  it('flags feedback for cards never issued in its own section, and omits the section when the store cannot list it', () => {
    const flagged = renderAdvisoryListPage({ ...input([item(1)]), unmatched: { items: [feedbackRecord({ id: 'stray-1', cardUuid: 'never-issued', knownCard: false })], total: 41 } });
    expect(flagged).toContain('id="unmatched-feedback"');
    expect(elementsWith(flagged, 'data-feedback-id').map((r) => r['data-feedback-id'])).toStrictEqual(['stray-1']);
    expect(flagged).toContain('The newest 1 of 41.');
    expect(renderAdvisoryListPage(input([item(1)]))).not.toContain('id="unmatched-feedback"');
  });
});

describe('the patient column', () => {
  it("links each row to that patient's advisories by the keyed pseudonym, never a name", () => {
    const out = renderAdvisoryListPage(input([item(1, { patientKey: 'ab12cd34ef56ab12' }), item(2, { patientKey: '0011223344556677' })]));
    const links = elementsWith(out, 'data-patient-key');
    expect(links.map((l) => l['data-patient-key'])).toStrictEqual(['ab12cd34ef56ab12', '0011223344556677']);
    expect(links.map((l) => l['href'])).toStrictEqual(['/review?patient=ab12cd34ef56ab12', '/review?patient=0011223344556677']);
  });

  it('keeps a patient filter in the form and says only one patient is shown', () => {
    const out = renderAdvisoryListPage(input([item(1, { patientKey: 'ab12cd34ef56ab12' })], { patient: 'ab12cd34ef56ab12' }));
    expect(out).toContain('<input type="hidden" name="patient" value="ab12cd34ef56ab12">');
    expect(out).toMatch(/id="patient-filter">One patient only/);
  });
});
