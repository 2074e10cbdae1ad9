import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { renderSpo2Chart } from '../../src/review/spo2-chart.js';
import type { AdvisorySeries } from '../../src/store/store.js';
import { elementsWith, numberAttr } from './support/read-markup.js';

const ZONE = 'Europe/London';

// Invented series for a demo patient on a ward at Larkspur Bay General Hospital. The band is the
// BTS 2017 target for patients at risk of hypercapnic respiratory failure, 88-92 % (BTS 2017, section 6).
const AT_RISK_SERIES: AdvisorySeries = {
  spo2: [
    { at: '2026-07-12T06:00:00Z', spo2Percent: 86 },
    { at: '2026-07-12T08:00:00Z', spo2Percent: 90 },
    { at: '2026-07-12T07:00:00Z', spo2Percent: 89 },
    { at: '2026-07-12T09:30:00Z', spo2Percent: 95 },
  ],
  oxygen: [
    { at: '2026-07-12T07:30:00Z', device: 'Venturi mask', fio2Fraction: 0.28, flowLPerMin: 4 },
    { at: '2026-07-12T05:45:00Z', device: 'nasal cannula', flowLPerMin: 2 },
  ],
  target: { lowPercent: 88, highPercent: 92 }, // BTS 2017, section 6 (at-risk range)
};

function chart(series: AdvisorySeries, issuedAt = '2026-07-12T09:35:00Z'): string {
  return renderSpo2Chart({ series, issuedAt, timeZone: ZONE }).toString();
}

/** The y position of a value, from two labelled y-axis ticks: independent of how the chart scales. */
function yFromTicks(markup: string): (value: number) => number {
  const ticks = elementsWith(markup, 'data-y-tick').map((t) => ({ value: numberAttr(t, 'data-y-tick'), y: numberAttr(t, 'data-y') }));
  const [a, b] = [ticks[0], ticks[ticks.length - 1]];
  if (a === undefined || b === undefined || a.value === b.value) {
    throw new Error('the chart needs two y ticks');
  }
  return (value) => a.y + ((value - a.value) * (b.y - a.y)) / (b.value - a.value);
}

describe('renderSpo2Chart', () => {
  it('draws one marker per SpO2 reading, in time order, at its value on the axis', () => {
    const out = chart(AT_RISK_SERIES);
    const points = elementsWith(out, 'data-spo2-point');
    expect(points).toHaveLength(AT_RISK_SERIES.spo2.length);
    expect(points.map((p) => p['data-value'])).toStrictEqual(['86', '89', '90', '95']); // the series, by time
    const y = yFromTicks(out);
    for (const point of points) {
      expect(numberAttr(point, 'cy')).toBeCloseTo(y(numberAttr(point, 'data-value')), 1);
    }
    const xs = points.map((p) => numberAttr(p, 'cx'));
    expect([...xs].sort((a, b) => a - b)).toStrictEqual(xs);
  });

  it('shades the target band exactly between the axis positions of its low and high values', () => {
    const out = chart(AT_RISK_SERIES);
    const [band] = elementsWith(out, 'data-target-band');
    expect(band).toBeDefined();
    const y = yFromTicks(out);
    expect(numberAttr(band ?? {}, 'data-low')).toBe(88); // BTS 2017, section 6
    expect(numberAttr(band ?? {}, 'data-high')).toBe(92); // BTS 2017, section 6
    expect(numberAttr(band ?? {}, 'y')).toBeCloseTo(y(92), 1);
    expect(numberAttr(band ?? {}, 'y') + numberAttr(band ?? {}, 'height')).toBeCloseTo(y(88), 1);
  });

  it('keeps band and markers on one scale for any readings and band (generated)', () => {
    const reading = fc.record({ minute: fc.integer({ min: 0, max: 24 * 60 }), spo2: fc.integer({ min: 50, max: 100 }) });
    const bandArb = fc.integer({ min: 70, max: 96 }).chain((low) => fc.record({ low: fc.constant(low), high: fc.integer({ min: low + 1, max: 100 }) }));
    fc.assert(
      fc.property(fc.array(reading, { minLength: 1, maxLength: 30 }), bandArb, (readings, band) => {
        const series: AdvisorySeries = {
          spo2: readings.map((r) => ({ at: new Date(Date.UTC(2026, 6, 12) + r.minute * 60_000).toISOString(), spo2Percent: r.spo2 })),
          oxygen: [],
          target: { lowPercent: band.low, highPercent: band.high },
        };
        const out = chart(series, '2026-07-12T12:00:00Z');
        const y = yFromTicks(out);
        expect(elementsWith(out, 'data-spo2-point')).toHaveLength(readings.length);
        const [rect] = elementsWith(out, 'data-target-band');
        expect(numberAttr(rect ?? {}, 'y')).toBeCloseTo(y(band.high), 1);
        expect(numberAttr(rect ?? {}, 'y') + numberAttr(rect ?? {}, 'height')).toBeCloseTo(y(band.low), 1);
        for (const point of elementsWith(out, 'data-spo2-point')) {
          expect(numberAttr(point, 'cy')).toBeCloseTo(y(numberAttr(point, 'data-value')), 1);
        }
      }),
      { seed: 3, numRuns: 60 },
    );
  });

  it('draws the oxygen steps in time order on the same time axis, each starting where its time falls', () => {
    const out = chart(AT_RISK_SERIES);
    const steps = elementsWith(out, 'data-oxygen-step');
    expect(steps.map((s) => s['data-at'])).toStrictEqual(['2026-07-12T05:45:00Z', '2026-07-12T07:30:00Z']);
    expect(steps.map((s) => s['data-device'])).toStrictEqual(['nasal cannula', 'Venturi mask']);
    expect(steps[1]?.['data-fio2']).toBe('0.28');
    // A step and a reading at the same instant line up: the Venturi step (07:30) lies between the
    // 07:00 and 08:00 readings.
    const rects = [...out.matchAll(/<g data-oxygen-step[^>]*>\s*<rect x="([\d.]+)"/g)].map((m) => Number(m[1]));
    const points = elementsWith(out, 'data-spo2-point').map((p) => numberAttr(p, 'cx'));
    expect(rects[1]).toBeGreaterThan(points[1] ?? Infinity);
    expect(rects[1]).toBeLessThan(points[2] ?? -Infinity);
    expect(rects[0]).toBeLessThan(rects[1] ?? -Infinity);
  });

  it('labels the time axis in the site zone and names the zone', () => {
    const out = chart(AT_RISK_SERIES);
    expect(out).toContain('time (Europe/London)');
    // 06:00 UTC in July is 07:00 BST (Summer Time Act 1972); the first tick names the day.
    expect(out).toMatch(/>12 Jul 07:00</);
  });

  it('is described for assistive technology and followed by a text table of the points', () => {
    const out = chart(AT_RISK_SERIES);
    expect(out).toMatch(/<svg[^>]*role="img"[^>]*aria-labelledby="spo2-chart-title spo2-chart-desc"/);
    expect(out).toContain('<desc id="spo2-chart-desc">');
    // 86 below, 89 and 90 within, 95 above 88-92 % (BTS 2017, section 6).
    expect(out).toContain('4 reading(s) against the target 88–92 %: 2 within, 1 below, 1 above.');
    expect(elementsWith(out, 'data-reading-row')).toHaveLength(4);
    expect(elementsWith(out, 'data-step-row')).toHaveLength(2);
  });

  it('says no readings are stored when the series is empty, and draws no chart', () => {
    const out = chart({ spo2: [], oxygen: [] });
    expect(out).toContain('no readings stored');
    expect(out).not.toContain('<svg');
    expect(elementsWith(out, 'data-spo2-point')).toHaveLength(0);
  });

  it('draws no band when the advisory recorded no target, and says so', () => {
    const { target: _target, ...noTarget } = AT_RISK_SERIES;
    const out = chart(noTarget);
    expect(elementsWith(out, 'data-target-band')).toHaveLength(0);
    expect(out).toContain('no target band was recorded');
  });

  it('escapes a device label from the store', () => {
    const out = chart({ ...AT_RISK_SERIES, oxygen: [{ at: '2026-07-12T06:00:00Z', device: '"><script>x</script>' }] });
    expect(out).not.toContain('<script>');
    expect(out).toContain('data-device="&quot;&gt;&lt;script&gt;x&lt;/script&gt;"');
  });

  it('gives a single reading a time axis of its own width', () => {
    const out = chart({ spo2: [{ at: '2026-07-12T06:00:00Z', spo2Percent: 93 }], oxygen: [] }, '2026-07-12T06:00:00Z');
    const [point] = elementsWith(out, 'data-spo2-point');
    expect(Number.isFinite(numberAttr(point ?? {}, 'cx'))).toBe(true);
  });
});
