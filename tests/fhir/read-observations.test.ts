import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { readObservations } from '../../src/fhir/read-observations.js';
import { LOINC, NOW, btsPolicy, minutesAgo, observation, quantity } from './helpers/larkspur-bay.js';

const freshness = btsPolicy().freshness; // bundled policy: 240 min vitals, 720 min gases, 72 h Hb, 1825 d
const TREND_MINUTES = btsPolicy().thresholds.oxygenNeedTrendMinutes; // bundled policy: 360 min (local choice)

describe('readObservations', () => {
  it.each([
    // LOINC codes from check-values §6 (V unless marked)
    ['59408-5', 'spo2Percent', 93, '%', 93], // US Core pulse oximetry
    ['2708-6', 'spo2Percent', 0.93, '1', 93], // FHIR oxygensat; a fraction is read as percent by UCUM
    ['3150-0', 'fio2Fraction', 28, '%', 0.28], // FiO2 in %: 28 % is 0.28 (UCUM)
    ['3150-0', 'fio2Fraction', 0.28, '1', 0.28], // FiO2 as a fraction
    ['3151-8', 'o2FlowLPerMin', 2, 'L/min', 2],
    ['9279-1', 'respRatePerMin', 22, '/min', 22],
    ['718-7', 'haemoglobinGPerDL', 128, 'g/L', 12.8], // g/L to g/dL by UCUM
  ] as const)('reads LOINC %s into %s (%s %s → %s)', (code, field, value, unit, expected) => {
    const facts = readObservations([observation('o1', code, value, unit, minutesAgo(30))], freshness, TREND_MINUTES, NOW);
    expect(facts[field]).toStrictEqual([
      // atMs: the time as epoch ms, read once here so the rules need not parse it again.
      { value: expected, at: minutesAgo(30), atMs: Date.parse(minutesAgo(30)), reported: { value, unit }, reference: 'Observation/o1' },
    ]);
    expect(facts.notes).toStrictEqual([]);
  });

  it('converts a kPa PaCO2 to mmHg by UCUM and keeps the kPa for display', () => {
    const at = minutesAgo(20);
    const facts = readObservations(
      [observation('pco2', '2019-8', 6.7, 'kPa', at), observation('ph', '2744-1', 7.31, '[pH]', at)],
      freshness,
      TREND_MINUTES,
      NOW,
    );
    const [gas] = facts.bloodGases;
    // 6.7 kPa x 7.50062 mmHg/kPa = 50.25 mmHg (check-values 3b)
    expect(gas?.paco2MmHg).toBeCloseTo(50.25, 2);
    expect(gas?.reported).toStrictEqual({ paco2: { value: 6.7, unit: 'kPa' }, ph: { value: 7.31, unit: '[pH]' } });
    expect(gas?.specimen).toBe('arterial');
    expect(gas?.ph).toBe(7.31);
  });

  it.each([
    ['mm[Hg]', 52, 52],
    ['mmHg', 52, 52], // non-UCUM display spelling, accepted as an alias
    ['kPa', 8.0, 60.0], // 8 kPa = 60 mmHg, HOT-ICU (check-values 1b); 8 x 7.50062 = 60.00
  ])('reads PaO2 in %s', (unit, value, mmHg) => {
    const facts = readObservations([observation('o', '2703-7', value, unit, minutesAgo(5))], freshness, TREND_MINUTES, NOW);
    expect(facts.bloodGases[0]?.pao2MmHg).toBeCloseTo(mmHg, 1);
  });

  it('groups one arterial sample by its shared effective time', () => {
    const at = minutesAgo(45);
    const facts = readObservations(
      [
        observation('a', '2744-1', 7.3, '[pH]', at),
        observation('b', '2019-8', 7.2, 'kPa', at),
        observation('c', '2703-7', 7.9, 'kPa', at),
        observation('d', '1960-4', 30, 'mmol/L', at),
        observation('e', '1925-7', 4.1, 'mmol/L', at),
        observation('later', '2744-1', 7.36, '[pH]', minutesAgo(10)),
      ],
      freshness,
      TREND_MINUTES,
      NOW,
    );
    expect(facts.bloodGases).toHaveLength(2);
    const [newest, first] = facts.bloodGases;
    expect(newest?.ph).toBe(7.36);
    expect(newest?.paco2MmHg).toBeUndefined();
    expect(first).toMatchObject({ at, specimen: 'arterial', ph: 7.3, hco3MmolPerL: 30, baseExcessMmolPerL: 4.1 });
    // 7.2 kPa = 54.0 mmHg (the toolchain's UCUM check: convertUnitTo('kPa', 7.2, 'mm[Hg]') = 54.0046)
    expect(first?.paco2MmHg).toBeCloseTo(54.0046, 3);
  });

  it('sets aside the pressures of a gas whose PCO2 was sent in kPa but labelled mmHg', () => {
    // pH 7.33 and HCO3 34 agree with 6.9 kPa, not 6.9 mmHg (Henderson–Hasselbalch, from memory):
    // used as mmHg the gas would look normal and re-target a CO2 retainer (BTS 2017 Tables 2-4)
    const at = minutesAgo(60);
    const facts = readObservations(
      [
        observation('ph', '2744-1', 7.33, '[pH]', at),
        observation('pco2', '2019-8', 6.9, 'mm[Hg]', at),
        observation('po2', '2703-7', 10.2, 'mm[Hg]', at),
        observation('hco3', '1960-4', 34, 'mmol/L', at),
      ],
      freshness,
      TREND_MINUTES,
      NOW,
    );
    expect(facts.bloodGases).toHaveLength(1);
    expect(facts.bloodGases[0]).toMatchObject({ ph: 7.33, hco3MmolPerL: 34, paco2MmHg: undefined, pao2MmHg: undefined });
    expect(facts.notes.map((n) => [n.what, n.reason])).toStrictEqual([['Blood gas pressures', 'implausible']]);
  });

  it('sets aside a PCO2 below 10 mmHg even without a pH to check it against', () => {
    // 6.9 "mmHg" reads like 6.9 kPa; below 10 mmHg is exceptional in hospital patients (common practice)
    const facts = readObservations([observation('pco2', '2019-8', 6.9, 'mm[Hg]', minutesAgo(30))], freshness, TREND_MINUTES, NOW);
    expect(facts.bloodGases[0]?.paco2MmHg).toBeUndefined();
    expect(facts.notes.map((n) => [n.what, n.reason])).toStrictEqual([['Blood gas pressures', 'implausible']]);
  });

  it('groups values a panel lists in hasMember even when their times differ', () => {
    const panel = {
      resourceType: 'Observation',
      id: 'abg',
      status: 'final',
      code: { coding: [{ system: LOINC, code: '24336-0' }] },
      effectiveDateTime: minutesAgo(30),
      hasMember: [{ reference: 'Observation/m1' }, { reference: 'https://ehr.larkspur.example/fhir/Observation/m2' }],
    };
    const facts = readObservations(
      [panel, observation('m1', '2744-1', 7.32, '[pH]', minutesAgo(30)), observation('m2', '2019-8', 55, 'mm[Hg]', minutesAgo(29))],
      freshness,
      TREND_MINUTES,
      NOW,
    );
    expect(facts.bloodGases).toHaveLength(1);
    expect(facts.bloodGases[0]).toMatchObject({ ph: 7.32, paco2MmHg: 55, specimen: 'arterial' });
  });

  describe('one gas filed as several results', () => {
    // pH 7.27 (< 7.35, RCEM Learning) with PaCO2 8.2 kPa (>= 6 kPa, BTS 2017): a respiratory acidosis;
    // HCO3 28 agrees with them (Henderson-Hasselbalch, from memory)
    const split = [
      observation('ph', '2744-1', 7.27, '[pH]', minutesAgo(40)),
      observation('pco2', '2019-8', 8.2, 'kPa', minutesAgo(37)),
      observation('po2', '2703-7', 7.4, 'kPa', minutesAgo(34)),
      observation('hco3', '1960-4', 28, 'mmol/L', minutesAgo(31)),
    ];

    it("groups by the policy's window and dates the sample at its first value", () => {
      // freshness.bloodGasGroupingMinutes: 10 in the bundled policy (common practice)
      const facts = readObservations(split, freshness, TREND_MINUTES, NOW);
      expect(facts.bloodGases).toHaveLength(1);
      expect(facts.bloodGases[0]).toMatchObject({ at: minutesAgo(40), ph: 7.27, hco3MmolPerL: 28 });
      expect(facts.bloodGases[0]?.paco2MmHg).toBeCloseTo(61.5, 1); // 8.2 kPa x 7.50062 (UCUM)
    });

    it('uses the window the policy gives', () => {
      expect(readObservations(split, { ...freshness, bloodGasGroupingMinutes: 0 }, TREND_MINUTES, NOW).bloodGases).toHaveLength(4);
      expect(readObservations(split, { ...freshness, bloodGasGroupingMinutes: 5 }, TREND_MINUTES, NOW).bloodGases).toHaveLength(2);
    });

    it('checks the units of the grouped sample, not of each result', () => {
      // 8.2 "mmHg" with pH 7.27 and HCO3 28 disagrees (calculated HCO3 3.7); as 8.2 kPa it agrees
      const mislabelled = split.map((o) => (o.id === 'pco2' ? observation('pco2', '2019-8', 8.2, 'mm[Hg]', minutesAgo(37)) : o));
      const facts = readObservations(mislabelled, freshness, TREND_MINUTES, NOW);
      expect(facts.bloodGases[0]).toMatchObject({ ph: 7.27, paco2MmHg: undefined, pao2MmHg: undefined });
      expect(facts.notes.map((n) => n.what)).toStrictEqual(['Blood gas pressures']);
    });

    it('sets aside a future-dated result before grouping, so it cannot ride on the sample', () => {
      const specimen = { specimen: { reference: 'Specimen/lb-abg-1' } };
      const facts = readObservations(
        [
          observation('ph', '2744-1', 7.27, '[pH]', minutesAgo(40), specimen),
          observation('po2', '2703-7', 7.4, 'kPa', minutesAgo(-30), specimen),
        ],
        freshness,
        TREND_MINUTES,
        NOW,
      );
      expect(facts.bloodGases).toHaveLength(1);
      expect(facts.bloodGases[0]?.pao2MmHg).toBeUndefined();
      expect(facts.notes.map((n) => [n.what, n.reason])).toStrictEqual([['PaO2', 'implausible']]);
    });
  });

  it('keeps a venous gas apart from an arterial one taken at the same time', () => {
    const at = minutesAgo(15);
    const facts = readObservations(
      [
        observation('v1', '2746-6', 7.3, '[pH]', at),
        observation('v2', '2021-4', 8.1, 'kPa', at), // venous pCO2, LOINC 2021-4 from memory
        observation('a1', '2744-1', 7.34, '[pH]', at),
      ],
      freshness,
      TREND_MINUTES,
      NOW,
    );
    expect(facts.bloodGases.map((g) => [g.specimen, g.ph])).toStrictEqual([
      ['arterial', 7.34],
      ['venous', 7.3],
    ]);
  });

  it('reads HCO3 reported in meq/L as the same number of mmol/L', () => {
    const facts = readObservations([observation('h', '1963-8', 31, 'meq/L', minutesAgo(60))], freshness, TREND_MINUTES, NOW);
    // HCO3- is monovalent: 1 meq/L = 1 mmol/L (common practice)
    expect(facts.bloodGases[0]).toMatchObject({ hco3MmolPerL: 31, specimen: 'unknown' });
  });

  it('reads the O2 flow and concentration components of a US Core pulse-oximetry observation', () => {
    const obs = observation('pox', '59408-5', 91, '%', minutesAgo(10), {
      code: { coding: [{ system: LOINC, code: '59408-5' }, { system: LOINC, code: '2708-6' }] },
      component: [
        { code: { coding: [{ system: LOINC, code: '3151-8' }] }, valueQuantity: quantity(4, 'L/min') },
        { code: { coding: [{ system: LOINC, code: '3150-0' }] }, valueQuantity: quantity(28, '%') },
      ],
    });
    const facts = readObservations([obs], freshness, TREND_MINUTES, NOW);
    expect(facts.spo2Percent.map((m) => m.value)).toStrictEqual([91]);
    expect(facts.o2FlowLPerMin.map((m) => m.value)).toStrictEqual([4]);
    expect(facts.fio2Fraction.map((m) => m.value)).toStrictEqual([0.28]);
  });

  it('lists current values most recent first', () => {
    const facts = readObservations(
      [observation('old', '59408-5', 90, '%', minutesAgo(200)), observation('new', '59408-5', 94, '%', minutesAgo(5))],
      freshness,
      TREND_MINUTES,
      NOW,
    );
    expect(facts.spo2Percent.map((m) => m.reference)).toStrictEqual(['Observation/new', 'Observation/old']);
  });

  it('reads BMI from LOINC 39156-5 (from memory) whatever its age', () => {
    const facts = readObservations([observation('bmi', '39156-5', 43.2, 'kg/m2', '2025-06-01')], freshness, TREND_MINUTES, NOW);
    expect(facts.bmiKgPerM2).toBe(43.2);
  });

  describe('freshness', () => {
    it('sets aside an SpO2 older than the vital-signs window with one note', () => {
      const facts = readObservations(
        [observation('s1', '59408-5', 95, '%', minutesAgo(540)), observation('s2', '59408-5', 96, '%', minutesAgo(600))],
        freshness,
        TREND_MINUTES,
        NOW,
      );
      expect(facts.spo2Percent).toStrictEqual([]);
      expect(facts.notes).toStrictEqual([
        { what: 'SpO2', reason: 'stale', detail: 'Latest SpO2 is 9 h old (current within 4 h).', reference: 'Observation/s1' },
      ]);
    });

    it('adds no stale note when a current value of the kind remains', () => {
      const facts = readObservations(
        [observation('s1', '59408-5', 95, '%', minutesAgo(540)), observation('s2', '59408-5', 96, '%', minutesAgo(20))],
        freshness,
        TREND_MINUTES,
        NOW,
      );
      expect(facts.spo2Percent.map((m) => m.value)).toStrictEqual([96]);
      expect(facts.notes).toStrictEqual([]);
    });

    it('keeps a gas older than the gas window but within the history window as historic', () => {
      const facts = readObservations([observation('g', '2019-8', 8.2, 'kPa', '2025-02-10T09:00:00Z')], freshness, TREND_MINUTES, NOW);
      expect(facts.bloodGases).toStrictEqual([]);
      expect(facts.historicBloodGases).toHaveLength(1);
      expect(facts.historicBloodGases[0]?.paco2MmHg).toBeCloseTo(61.5, 1); // 8.2 x 7.50062 (check-values 3b)
      expect(facts.notes.map((n) => [n.what, n.reason])).toStrictEqual([['Blood gas', 'stale']]);
    });

    it('drops a gas older than the history window', () => {
      const facts = readObservations([observation('g', '2019-8', 8.2, 'kPa', '2019-01-01T09:00:00Z')], freshness, TREND_MINUTES, NOW);
      expect(facts.historicBloodGases).toStrictEqual([]);
      expect(facts.notes[0]?.reason).toBe('stale');
    });

    it('sets aside haemoglobin older than its window in hours', () => {
      const facts = readObservations([observation('hb', '718-7', 11.2, 'g/dL', minutesAgo(73 * 60))], freshness, TREND_MINUTES, NOW);
      expect(facts.haemoglobinGPerDL).toStrictEqual([]);
      expect(facts.notes[0]).toMatchObject({ what: 'Haemoglobin', reason: 'stale' });
    });

    it('sets aside a value dated beyond the clock-skew allowance in the future', () => {
      const facts = readObservations(
        [observation('f', '9279-1', 18, '/min', minutesAgo(-120)), observation('ok', '9279-1', 20, '/min', minutesAgo(-2))],
        freshness,
        TREND_MINUTES,
        NOW,
      );
      expect(facts.respRatePerMin.map((m) => m.reference)).toStrictEqual(['Observation/ok']);
      expect(facts.notes).toStrictEqual([
        { what: 'Respiratory rate', reason: 'implausible', detail: 'Dated 2 h in the future.', reference: 'Observation/f' },
      ]);
    });
  });

  it('keeps SpO2, FiO2 and flow over the 360-min trend window apart, while current values keep to 240 min', () => {
    // Bundled policy: vitalSignsMinutes 240, oxygenNeedTrendMinutes 360 (local choices)
    expect(freshness.vitalSignsMinutes).toBe(240);
    expect(TREND_MINUTES).toBe(360);
    const facts = readObservations(
      [
        observation('s-old', '59408-5', 95, '%', minutesAgo(300)),
        observation('s-new', '59408-5', 94, '%', minutesAgo(20)),
        observation('f-old', '3151-8', 2, 'L/min', minutesAgo(300)),
        observation('f-new', '3151-8', 6, 'L/min', minutesAgo(20)),
        observation('x-old', '3150-0', 40, '%', minutesAgo(361)),
      ],
      freshness,
      TREND_MINUTES,
      NOW,
    );
    expect(facts.spo2Percent.map((m) => m.reference)).toStrictEqual(['Observation/s-new']);
    expect(facts.o2FlowLPerMin.map((m) => m.reference)).toStrictEqual(['Observation/f-new']);
    expect(facts.trendReadings.spo2Percent.map((m) => m.reference)).toStrictEqual(['Observation/s-new', 'Observation/s-old']);
    expect(facts.trendReadings.o2FlowLPerMin.map((m) => m.value)).toStrictEqual([6, 2]);
    // Beyond both windows: neither current nor trend, and noted as stale
    expect(facts.fio2Fraction).toStrictEqual([]);
    expect(facts.trendReadings.fio2Fraction).toStrictEqual([]);
    expect(facts.notes.map((n) => n.what)).toStrictEqual(['FiO2']);
  });

  it('keeps the trend over the freshness window when that is the longer one', () => {
    // A hospital trend window shorter than its freshness window: the longer of the two applies
    const facts = readObservations([observation('s', '59408-5', 95, '%', minutesAgo(200))], freshness, 120, NOW);
    expect(facts.trendReadings.spo2Percent.map((m) => m.value)).toStrictEqual([95]);
  });

  describe('edge cases', () => {
    // Plausibility limits are common practice (docs/fhir-input.md), not clinical thresholds.
    it.each([
      ['59408-5', 42, '%', 'SpO2'],
      ['59408-5', 101, '%', 'SpO2'],
      ['2744-1', 6.5, '[pH]', 'Arterial pH'],
      ['2744-1', 8.1, '[pH]', 'Arterial pH'],
      ['3151-8', -1, 'L/min', 'Oxygen flow'],
      ['3151-8', 90, 'L/min', 'Oxygen flow'],
      ['3150-0', 0.1, '1', 'FiO2'],
      ['3150-0', 0.28, '%', 'FiO2'],
      ['9279-1', 95, '/min', 'Respiratory rate'],
      ['2703-7', 5, 'mm[Hg]', 'PaO2'],
      ['2703-7', 800, 'mm[Hg]', 'PaO2'],
      ['2019-8', 3, 'mm[Hg]', 'PaCO2'],
      ['2019-8', 30, 'kPa', 'PaCO2'],
    ])('sets aside LOINC %s = %s %s as implausible', (code, value, unit, what) => {
      const facts = readObservations([observation('x', code, value, unit, minutesAgo(5))], freshness, TREND_MINUTES, NOW);
      expect(facts.spo2Percent).toStrictEqual([]);
      expect(facts.bloodGases).toStrictEqual([]);
      expect(facts.notes).toHaveLength(1);
      expect(facts.notes[0]).toMatchObject({ what, reason: 'implausible', reference: 'Observation/x' });
    });

    it.each(['entered-in-error', 'cancelled'])('ignores a result with status %s and says so', (status) => {
      const facts = readObservations([observation('e', '59408-5', 95, '%', minutesAgo(5), { status })], freshness, TREND_MINUTES, NOW);
      expect(facts.spo2Percent).toStrictEqual([]);
      expect(facts.notes).toStrictEqual([
        { what: 'SpO2', reason: 'error-in-source', detail: `The result has status '${status}' and was not used.`, reference: 'Observation/e' },
      ]);
    });

    it.each(['preliminary', 'amended', 'corrected'])('uses a result with status %s', (status) => {
      const facts = readObservations([observation('p', '59408-5', 95, '%', minutesAgo(5), { status })], freshness, TREND_MINUTES, NOW);
      expect(facts.spo2Percent).toHaveLength(1);
    });

    it('sets aside a unit it cannot convert', () => {
      const facts = readObservations([observation('u', '2019-8', 6, 'mg', minutesAgo(5))], freshness, TREND_MINUTES, NOW);
      expect(facts.notes).toStrictEqual([
        { what: 'PaCO2', reason: 'unreadable-unit', detail: "6 'mg' is not a unit this value can be read in.", reference: 'Observation/u' },
      ]);
    });

    it('sets aside a result with no readable time', () => {
      const obs = observation('t', '59408-5', 95, '%', 'yesterday');
      const facts = readObservations([obs], freshness, TREND_MINUTES, NOW);
      expect(facts.notes.map((n) => n.reason)).toStrictEqual(['unrecognised']);
    });

    it('ignores codes it does not read and codes without a system', () => {
      const noSystem = { ...observation('n', '59408-5', 95, '%', minutesAgo(5)), code: { coding: [{ code: '59408-5' }] } };
      const facts = readObservations(
        [observation('bp', '8480-6', 120, 'mm[Hg]', minutesAgo(5)), noSystem, { resourceType: 'Patient', id: 'p' }],
        freshness,
        TREND_MINUTES,
        NOW,
      );
      expect(facts.spo2Percent).toStrictEqual([]);
      expect(facts.notes).toStrictEqual([]);
    });

    it('skips garbage values without throwing, and keeps a good value beside garbage', () => {
      const odd = [
        { ...observation('a', '59408-5', 95, '%', minutesAgo(5)), valueQuantity: { value: '95', unit: '%' } },
        { ...observation('b', '59408-5', 95, '%', minutesAgo(5)), valueQuantity: null },
        { ...observation('c', '59408-5', 95, '%', minutesAgo(5)), component: 'none', hasMember: {} },
        { ...observation('d', '59408-5', 95, '%', minutesAgo(5)), code: [] },
      ];
      const facts = readObservations(odd, freshness, TREND_MINUTES, NOW);
      expect(facts.spo2Percent.map((m) => m.reference)).toStrictEqual(['Observation/c']);
      expect(facts.notes.map((n) => n.reason)).toStrictEqual(['unrecognised', 'unrecognised']);
    });
  });
});

describe('reading times carried as epoch ms', () => {
  // The rules read `atMs` instead of parsing `at` (core/time/reading-time.ts): the two must agree for
  // every form of time a client sends, including one with no zone (given a "Z" here).
  it.each([
    ['UTC', '2026-11-30T09:10:00Z'],
    ['an offset', '2026-11-30T10:10:00+01:00'],
    ['a fraction', '2026-11-30T09:10:00.123Z'],
    ['no zone', '2026-11-30T09:10:00'],
  ])('agree with Date.parse of the time kept, for a time with %s', (_form, at) => {
    const facts = readObservations(
      [observation('s', '59408-5', 94, '%', at), observation('g', '2019-8', 6.1, 'kPa', at)],
      freshness,
      TREND_MINUTES,
      new Date('2026-11-30T10:00:00Z'),
    );
    const readings = [...facts.spo2Percent, ...facts.bloodGases];
    expect(readings).toHaveLength(2);
    for (const reading of readings) {
      expect(reading.atMs).toBe(Date.parse(reading.at));
      expect(reading.atMs).toBe(Date.parse('2026-11-30T09:10:00Z') + (at.includes('.123') ? 123 : 0));
    }
  });
});

describe('readings of many kinds sent together', () => {
  // Each kind is read apart from the others: mixing in other kinds changes none of its lists, which
  // hold its readings within the window (not beyond the 5 min clock-skew allowance), newest first,
  // readings of the same time in the order sent. Times fall on whole 30 min steps so that many tie.
  const KINDS = [
    ['59408-5', 94, '%'], // SpO2 (LOINC, check-values §6)
    ['3150-0', 28, '%'], // FiO2
    ['3151-8', 2, 'L/min'], // O2 flow
    ['9279-1', 22, '/min'], // respiratory rate
  ] as const;
  const sent = fc.array(fc.tuple(fc.integer({ min: 0, max: 3 }), fc.integer({ min: -1, max: 14 })), { maxLength: 40, size: 'medium' });
  // Ids run against the order sent, so no order by id can pass for the order sent.
  const idOf = (i: number): string => `o${99 - i}`;

  function expected(items: readonly (readonly [number, number])[], kind: number, windowMinutes: number): string[] {
    const own = items.flatMap(([k, steps], i) => (k === kind ? [{ ref: `Observation/${idOf(i)}`, minutes: steps * 30 }] : []));
    return own
      .filter((r) => r.minutes >= -5 && r.minutes <= windowMinutes)
      .sort((a, b) => a.minutes - b.minutes)
      .map((r) => r.ref);
  }

  it('keeps each kind newest first, ties in the order sent, whatever else is sent with it', () => {
    fc.assert(
      fc.property(sent, (items) => {
        const observations = items.map(([k, steps], i) => {
          const [code, value, unit] = KINDS[k] ?? KINDS[0];
          return observation(idOf(i), code, value, unit, minutesAgo(steps * 30));
        });
        const facts = readObservations(observations, freshness, TREND_MINUTES, NOW);
        const refs = (list: readonly { readonly reference: string | undefined }[]) => list.map((m) => m.reference);
        const vitals = freshness.vitalSignsMinutes;
        const trend = Math.max(vitals, TREND_MINUTES);
        expect(refs(facts.spo2Percent)).toStrictEqual(expected(items, 0, vitals));
        expect(refs(facts.fio2Fraction)).toStrictEqual(expected(items, 1, vitals));
        expect(refs(facts.o2FlowLPerMin)).toStrictEqual(expected(items, 2, vitals));
        expect(refs(facts.respRatePerMin)).toStrictEqual(expected(items, 3, vitals));
        expect(refs(facts.trendReadings.spo2Percent)).toStrictEqual(expected(items, 0, trend));
        expect(refs(facts.trendReadings.fio2Fraction)).toStrictEqual(expected(items, 1, trend));
        expect(refs(facts.trendReadings.o2FlowLPerMin)).toStrictEqual(expected(items, 2, trend));
      }),
      { numRuns: 300 },
    );
  });

  it('lists the same current readings whatever the trend window, each with its own time, as the trend lists them', () => {
    // Trend windows shorter than, equal to and longer than the 240 min vitals window (a local choice).
    fc.assert(
      fc.property(sent, fc.constantFrom(0, 120, 240, 270, 360, 600), (items, trendMinutes) => {
        const observations = items.map(([k, steps], i) => {
          const [code, value, unit] = KINDS[k] ?? KINDS[0];
          return observation(idOf(i), code, value, unit, minutesAgo(steps * 30));
        });
        const facts = readObservations(observations, freshness, trendMinutes, NOW);
        const vitals = freshness.vitalSignsMinutes;
        // The values as read: SpO2 94 %, FiO2 28 % as 0.28 (UCUM), flow 2 L/min.
        const lists = [
          [facts.spo2Percent, facts.trendReadings.spo2Percent, 0, 94],
          [facts.fio2Fraction, facts.trendReadings.fio2Fraction, 1, 0.28],
          [facts.o2FlowLPerMin, facts.trendReadings.o2FlowLPerMin, 2, 2],
        ] as const;
        for (const [current, trend, kind, value] of lists) {
          expect(current.map((m) => m.reference)).toStrictEqual(expected(items, kind, vitals));
          expect(trend.map((m) => m.reference)).toStrictEqual(expected(items, kind, Math.max(vitals, trendMinutes)));
          expect(current).toStrictEqual(trend.slice(0, current.length));
          for (const m of current) {
            expect(m.atMs).toBe(Date.parse(m.at));
            expect(m.value).toBe(value);
          }
        }
      }),
      { numRuns: 300 },
    );
  });
});
