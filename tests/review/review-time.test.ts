import { describe, expect, it } from 'vitest';
import { formatClock, formatReviewTime, isKnownTimeZone, startOfLocalDay, zoneOffsetMinutes } from '../../src/review/review-time.js';

// UK clocks: GMT in winter, BST (UTC+1) from 01:00 UTC on the last Sunday of March to 01:00 UTC on
// the last Sunday of October (Summer Time Act 1972; Directive 2000/84/EC). Sydney: AEDT (UTC+11) in
// its summer, AEST (UTC+10) in winter (NSW Standard Time Act 1987).
describe('formatReviewTime', () => {
  it('shows a UTC instant in London summer time, labelled BST', () => {
    expect(formatReviewTime('2026-07-12T13:05:00Z', 'Europe/London')).toBe('12 Jul 2026, 14:05 BST'); // Summer Time Act 1972
  });

  it('shows a UTC instant in London winter time, labelled GMT', () => {
    expect(formatReviewTime('2026-12-04T13:05:00Z', 'Europe/London')).toBe('4 Dec 2026, 13:05 GMT'); // Summer Time Act 1972
  });

  it('moves the day when the zone is ahead of UTC', () => {
    expect(formatReviewTime('2026-01-14T14:30:00Z', 'Australia/Sydney')).toBe('15 Jan 2026, 01:30 GMT+11'); // NSW Standard Time Act 1987
  });

  it('does not depend on the host zone', () => {
    const before = process.env['TZ'];
    process.env['TZ'] = 'America/Los_Angeles';
    try {
      expect(formatReviewTime('2026-07-12T13:05:00Z', 'Europe/London')).toBe('12 Jul 2026, 14:05 BST');
    } finally {
      if (before === undefined) {
        delete process.env['TZ'];
      } else {
        process.env['TZ'] = before;
      }
    }
  });

  it('shows an unreadable time as stored, saying so', () => {
    expect(formatReviewTime('yesterday', 'Europe/London')).toBe('yesterday (time not readable)');
  });

  it('gives the bare clock time for chart ticks', () => {
    expect(formatClock(new Date('2026-07-12T23:59:00Z'), 'Europe/London')).toBe('00:59'); // BST, UTC+1
  });
});

describe('zoneOffsetMinutes and startOfLocalDay', () => {
  it.each([
    ['Europe/London', '2026-01-15T12:00:00Z', 0],
    ['Europe/London', '2026-07-15T12:00:00Z', 60],
    ['Australia/Sydney', '2026-01-15T12:00:00Z', 660],
    ['Australia/Sydney', '2026-07-15T12:00:00Z', 600],
    ['America/New_York', '2026-01-15T12:00:00Z', -300], // EST, UTC-5 (15 U.S.C. §260a)
  ])('%s at %s is %i minutes from UTC', (zone, at, minutes) => {
    expect(zoneOffsetMinutes(new Date(at), zone)).toBe(minutes);
  });

  it.each([
    // The clocks change at 01:00 UTC, so London midnight on both change days is before the change.
    ['Europe/London', 2026, 3, 29, '2026-03-29T00:00:00.000Z'],
    ['Europe/London', 2026, 10, 25, '2026-10-24T23:00:00.000Z'],
    ['Europe/London', 2026, 7, 1, '2026-06-30T23:00:00.000Z'],
    ['Australia/Sydney', 2026, 1, 15, '2026-01-14T13:00:00.000Z'],
  ])('local midnight in %s on %i-%i-%i is %s', (zone, year, month, day, iso) => {
    expect(startOfLocalDay(year, month, day, zone).toISOString()).toBe(iso);
  });

  it('knows IANA names and refuses others', () => {
    expect(isKnownTimeZone('Europe/London')).toBe(true);
    expect(isKnownTimeZone('Mars/Olympus_Mons')).toBe(false);
  });
});
