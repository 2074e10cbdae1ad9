import { describe, expect, it } from 'vitest';
import { dateInZone, notYetInEffectWarning, policyInEffect } from '../../src/policy/effective-from.js';

const site = (timeZone: string) => ({ name: 'Larkspur Bay General Hospital', altitudeM: 40, barometricPressureMmHg: undefined, timeZone });
const policy = (effectiveFrom: string | undefined, timeZone = 'Europe/London') => ({
  id: 'larkspur-bay',
  version: '2.0.0',
  effectiveFrom,
  site: site(timeZone),
});

describe('policyInEffect', () => {
  it('is in effect from the first moment of its date at the site, and not before', () => {
    const p = policy('2027-03-01');
    expect(policyInEffect(p, new Date('2027-02-28T23:59:59Z'))).toStrictEqual({
      kind: 'not-yet',
      effectiveFrom: '2027-03-01',
      siteDate: '2027-02-28',
    });
    expect(policyInEffect(p, new Date('2027-03-01T00:00:00Z')).kind).toBe('in-effect');
    expect(policyInEffect(p, new Date('2031-01-01T00:00:00Z')).kind).toBe('in-effect');
  });

  it("reads the date at the site's time zone, not the server's", () => {
    // 20:00 UTC on 28 February is already 1 March in Auckland (UTC+13 in daylight saving time).
    const now = new Date('2027-02-28T20:00:00Z');
    expect(policyInEffect(policy('2027-03-01', 'Pacific/Auckland'), now).kind).toBe('in-effect');
    expect(policyInEffect(policy('2027-03-01', 'Europe/London'), now).kind).toBe('not-yet');
    expect(dateInZone(now, 'Pacific/Auckland')).toBe('2027-03-01');
  });

  it('takes a file without the date as in effect once loaded', () => {
    expect(policyInEffect(policy(undefined), new Date('2027-01-01T00:00:00Z'))).toStrictEqual({ kind: 'no-date' });
    expect(notYetInEffectWarning(policy(undefined), new Date('2027-01-01T00:00:00Z'))).toBeUndefined();
  });
});

describe('notYetInEffectWarning', () => {
  it('warns, naming the policy and both dates, only when loaded early', () => {
    expect(notYetInEffectWarning(policy('2027-03-01'), new Date('2027-02-20T09:00:00Z'))).toBe(
      'policy larkspur-bay v2.0.0 is effective from 2027-03-01, but the date at the site is 2027-02-20: ' +
        'it is in use from now, ahead of that date',
    );
    expect(notYetInEffectWarning(policy('2027-03-01'), new Date('2027-03-02T09:00:00Z'))).toBeUndefined();
  });
});
