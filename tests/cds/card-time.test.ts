import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { cardClock, formatAgo, formatClockTime, formatWhen } from '../../src/cds/card-time.js';

// Zone rules are from the IANA time zone database (tzdata): Europe/London is GMT (UTC+0) in winter and
// BST (UTC+1) from 01:00 UTC on the last Sunday of March; Australia/Sydney is AEDT (UTC+11) in
// the southern summer and AEST (UTC+10) from 16:00 UTC on the first Saturday of April.

describe('formatWhen', () => {
  it('shows the same instant as each site reads it', () => {
    const now = new Date('2025-01-15T09:40:00Z');
    expect(formatWhen('2025-01-15T09:20:00Z', now, 'Europe/London')).toBe('at 09:20 (20 min ago)'); // GMT, tzdata
    expect(formatWhen('2025-01-15T09:20:00Z', now, 'Australia/Sydney')).toBe('at 20:20 (20 min ago)'); // AEDT +11, tzdata
  });

  it('follows the clock change: London 00:50 GMT then 02:10 BST, 20 min apart', () => {
    // tzdata: on 30 March 2025 London's clocks went from 01:00 GMT to 02:00 BST.
    const now = new Date('2025-03-30T01:10:00Z');
    expect(formatWhen('2025-03-30T00:50:00Z', now, 'Europe/London')).toBe('at 00:50 (20 min ago)');
    expect(formatWhen('2025-03-30T01:10:00Z', now, 'Europe/London')).toBe('at 02:10 (0 min ago)');
  });

  it('follows the clock change in Sydney: 02:50 AEDT, then 02:10 AEST 20 min later', () => {
    // tzdata: on 6 April 2025 Sydney's clocks went back from 03:00 AEDT to 02:00 AEST (16:00 UTC).
    const now = new Date('2025-04-05T16:10:00Z');
    expect(formatWhen('2025-04-05T15:50:00Z', now, 'Australia/Sydney')).toBe('at 02:50 (20 min ago)');
    expect(formatWhen('2025-04-05T16:10:00Z', now, 'Australia/Sydney')).toBe('at 02:10 (0 min ago)');
  });

  it('reads an offset time as the instant it names, not as the site wall clock', () => {
    const now = new Date('2025-01-15T09:40:00Z');
    expect(formatWhen('2025-01-15T10:20:00+01:00', now, 'Europe/London')).toBe('at 09:20 (20 min ago)');
  });

  describe('edge cases', () => {
    it('adds the date for another local day, and the year for another year', () => {
      const now = new Date('2025-01-01T00:30:00Z');
      expect(formatClockTime('2024-12-31T23:50:00Z', now, 'Europe/London')).toBe('31 Dec 2024 23:50');
      // Midnight in Sydney falls at 13:00 UTC: 12:50 UTC is still the previous local day there.
      const sydneyNow = new Date('2025-01-15T13:10:00Z');
      expect(formatClockTime('2025-01-15T12:50:00Z', sydneyNow, 'Australia/Sydney')).toBe('15 Jan 23:50');
      expect(formatClockTime('2025-01-15T13:05:00Z', sydneyNow, 'Australia/Sydney')).toBe('00:05');
    });

    it('never shows a raw ISO string for a readable time', () => {
      const now = new Date('2025-06-01T12:00:00Z');
      for (const at of ['2025-06-01T11:59:00Z', '2025-05-30T08:00:00Z', '2024-06-01T12:00:00.000Z']) {
        for (const zone of ['Europe/London', 'Australia/Sydney', 'America/New_York']) {
          expect(formatWhen(at, now, zone)).not.toMatch(/\d{4}-\d\d-\d\dT|Z\b/);
        }
      }
    });

    it('says a time later than the check is later, and an unreadable one is shown as given', () => {
      const now = new Date('2025-01-15T09:40:00Z');
      expect(formatAgo('2025-01-15T09:50:00Z', now)).toBe('later than this check');
      expect(formatWhen('not a time', now, 'Europe/London')).toBe('at not a time (time not readable)');
    });
  });
});

describe('cardClock', () => {
  it('shows each time as formatWhen does, across a clock change, another day and another year', () => {
    // tzdata: London went from 01:00 GMT to 02:00 BST at 01:00 UTC on 30 March 2025.
    const now = new Date('2025-03-30T01:10:00Z');
    const times = [
      '2025-03-30T00:50:00Z', // 00:50 GMT
      '2025-03-30T01:10:00Z', // 02:10 BST
      '2025-03-29T23:30:00Z', // the day before in London, the same day in Sydney
      '2024-12-31T23:50:00Z', // another year
      '2025-03-30T02:10:00+01:00',
      '2025-03-30T01:20:00Z', // later than the check
      'not a time',
    ];
    for (const zone of ['Europe/London', 'Australia/Sydney', 'America/St_Johns']) {
      const clock = cardClock(now, zone);
      for (const at of times) {
        expect(clock.when(at), `${zone} ${at}`).toBe(formatWhen(at, now, zone));
      }
    }
    const london = cardClock(now, 'Europe/London');
    expect(london.when('2025-03-30T00:50:00Z')).toBe('at 00:50 (20 min ago)'); // GMT, tzdata
    expect(london.when('2025-03-30T01:10:00Z')).toBe('at 02:10 (0 min ago)'); // BST, tzdata
  });

  describe('edge cases', () => {
    it('gives the same text when a time is asked for again', () => {
      const clock = cardClock(new Date('2025-01-15T09:40:00Z'), 'Europe/London');
      const first = clock.when('2025-01-15T09:20:00Z');
      expect(clock.when('2025-01-15T09:20:00Z')).toBe(first);
      expect(first).toBe('at 09:20 (20 min ago)'); // GMT (UTC+0) in January, tzdata
    });
  });
});

describe('local time by cached offset', () => {
  /** The wall clock as Intl writes it in the zone, the way card-time.ts wrote every time before. */
  function intlClockTime(ms: number, timeZone: string): string {
    const formatter = new Intl.DateTimeFormat('en-GB', {
      timeZone,
      year: 'numeric',
      month: 'short',
      day: 'numeric',
      hour: '2-digit',
      minute: '2-digit',
      hourCycle: 'h23',
    });
    const part = Object.fromEntries(formatter.formatToParts(ms).map((p) => [p.type, p.value]));
    return `${part['day']} ${part['month']} ${part['year']} ${part['hour']}:${part['minute']}`;
  }
  // A `now` in another year, so that every time is shown with its day, month and year.
  const FAR_NOW = new Date('2300-01-01T00:00:00Z');
  // Zones with half-hour and 45-minute offsets, half-hour clock changes (Lord Howe) and changes that
  // come and go within a year (Casablanca), all from tzdata.
  const ZONES = ['Europe/London', 'Australia/Sydney', 'Australia/Lord_Howe', 'America/St_Johns', 'Asia/Kathmandu', 'Pacific/Chatham', 'Africa/Casablanca', 'UTC'];

  it('shows any instant as Intl does, in every zone', () => {
    const instant = fc.integer({ min: Date.UTC(1900, 0, 1), max: Date.UTC(2100, 0, 1) });
    fc.assert(
      fc.property(instant, fc.constantFrom(...ZONES), (ms, zone) => {
        expect(formatClockTime(new Date(ms).toISOString(), FAR_NOW, zone)).toBe(intlClockTime(ms, zone));
      }),
      { numRuns: 500 },
    );
  });

  it('shows each minute around a clock change as Intl does', () => {
    // tzdata (from memory): London 01:00 UTC 30 Mar and 26 Oct 2025; Sydney 16:00 UTC 5 Apr 2025; Lord Howe goes
    // back half an hour at 15:00 UTC 5 Apr 2025; St John's forward at 05:30 UTC 9 Mar 2025.
    const changes: [string, number][] = [
      ['Europe/London', Date.UTC(2025, 2, 30, 1)],
      ['Europe/London', Date.UTC(2025, 9, 26, 1)],
      ['Australia/Sydney', Date.UTC(2025, 3, 5, 16)],
      ['Australia/Lord_Howe', Date.UTC(2025, 3, 5, 15)],
      ['America/St_Johns', Date.UTC(2025, 2, 9, 5, 30)],
    ];
    for (const [zone, change] of changes) {
      for (let ms = change - 2 * 3_600_000 + 17_000; ms < change + 2 * 3_600_000; ms += 60_000) {
        expect(formatClockTime(new Date(ms).toISOString(), FAR_NOW, zone), `${zone} ${new Date(ms).toISOString()}`).toBe(intlClockTime(ms, zone));
      }
    }
  });
});
