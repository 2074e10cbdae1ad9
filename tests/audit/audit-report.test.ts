import { describe, expect, it } from 'vitest';
import { renderAuditReport } from '../../src/audit/audit-report.js';
import { wardFigures } from '../../src/core/audit/audit-wards.js';

/** The HTML report escapes what comes from the export (ward names) and carries no script. */

const HOSTILE = '<script>alert("ward")</script><img src=x onerror=alert(1)>';

describe('renderAuditReport', () => {
  it('escapes a ward name from the export everywhere it appears', () => {
    const ward = wardFigures(HOSTILE, []);
    const page = renderAuditReport({
      figures: { period: { from: '2026-11-01T00:00:00.000Z', to: '2026-11-30T23:59:59.999Z' }, wards: [ward], overall: wardFigures('All wards', []) },
      policy: { label: 'based-on-bts-2017 v1.0.0 0123456789ab', siteName: 'Larkspur Bay General Hospital' },
      madeAt: '2026-12-01T09:00:00.000Z',
    });
    expect(page).not.toContain('<script');
    expect(page).not.toContain('<img');
    expect(page).toContain('&lt;script&gt;alert(&quot;ward&quot;)&lt;/script&gt;');
    // A share with no denominator is shown as no percentage, never as 0 % or NaN.
    expect(page).toContain('0 of 0 (–)');
    expect(page).not.toContain('NaN');
  });
});
