import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePolicyText } from '../../src/policy/parse-policy.js';
import { diffPolicies, policyDiffText, type PolicyChange, type PolicyVersion } from '../../src/policy/policy-diff.js';

const preset = (name: string): string => readFileSync(new URL(`../../policies/${name}`, import.meta.url), 'utf8');
const BTS = preset('based-on-bts-2017.yaml');

function version(text: string): PolicyVersion {
  const parsed = parsePolicyText(text);
  if (parsed.kind !== 'ok') throw new Error(`test policy not valid: ${JSON.stringify(parsed.problems)}`);
  return { policy: parsed.policy, acknowledgements: parsed.acknowledgements, contentHash: createHash('sha256').update(text).digest('hex') };
}

/** The bundled BTS 2017 preset with lines replaced; each replaced text must be there. */
function edited(...edits: readonly (readonly [string, string])[]): string {
  return edits.reduce((text, [from, to]) => {
    expect(text).toContain(from);
    return text.replace(from, to);
  }, BTS);
}

const only = (changes: readonly PolicyChange[]): PolicyChange => {
  expect(changes).toHaveLength(1);
  return changes[0] as PolicyChange;
};

describe('diffPolicies', () => {
  it('finds no clinical change between a policy and itself, nor when only comments and the version differ, but reports the hash', () => {
    const same = diffPolicies(version(BTS), version(BTS));
    expect(same.changes).toStrictEqual([]);
    expect(same.identity).toStrictEqual([]);
    const recommented = edited(['version: "1.0.0"', 'version: "1.0.1"'], ['# Bundled default', '# Reviewed 2026-11-20. Bundled default']);
    const diff = diffPolicies(version(BTS), version(recommented));
    expect(diff.changes).toStrictEqual([]);
    expect(diff.identity.map((c) => c.path)).toStrictEqual(['version', '(content hash)']);
    const text = policyDiffText(diff);
    expect(text).toContain('version: 1.0.0 → 1.0.1');
    expect(text).toMatch(/content hash: [0-9a-f]{12} → [0-9a-f]{12}/);
    expect(text.trimEnd().endsWith('No clinical change.')).toBe(true);
  });

  it('compares the two presets: the BTS 2017 standard range against the TSANZ 2015 one, at-risk range the same', () => {
    const diff = diffPolicies(version(BTS), version(preset('based-on-tsanz-2015.yaml')));
    const ranges = diff.changes.filter((c) => c.heading === 'Target ranges');
    // BTS 2017 Tables 1-3: 94-98 %; TSANZ 2015: 92-96 %. Both use 88-92 % at risk of hypercapnia
    // (BTS 2017 Table 4; TSANZ 2015), so that range does not appear.
    expect(only(ranges).text).toBe('standard target (patients not at risk of hypercapnia): 94–98 % → 92–96 % (both bounds 2 points lower)');
    expect(diff.changes.some((c) => c.path.startsWith('targets.hypercapnicRisk'))).toBe(false);
    expect(diff.changes.find((c) => c.heading === 'Basis and site')?.text).toBe(
      "guideline the policy is based on: 'bts-2017' (BTS 2017) → 'tsanz-2015' (TSANZ 2015)",
    );
    // The TSANZ preset switches off the UK early-warning rule (its comment says why).
    expect(only(diff.changes.filter((c) => c.heading === 'Rules and indicators')).text).toBe('switched off: news2-scale-2 (its cards: info by default)');
    expect(diff.identity.map((c) => c.path)).toStrictEqual(['id', 'title', '(content hash)']);
  });

  describe('each kind of change, under its heading and with its units', () => {
    it.each([
      // [what, edit, heading, text]
      [
        'the standard floor raised',
        ['standard: { lowPercent: 94, highPercent: 98 }', 'standard: { lowPercent: 95, highPercent: 98 }'], // from BTS 2017 Tables 1-3
        'Target ranges',
        'standard target (patients not at risk of hypercapnia): 94–98 % → 95–98 % (lower bound 1 point higher, upper bound unchanged)',
      ],
      [
        'the at-risk range moved',
        ['hypercapnicRisk: { lowPercent: 88, highPercent: 92 }', 'hypercapnicRisk: { lowPercent: 86, highPercent: 90 }'], // from BTS 2017 Table 4
        'Target ranges',
        'target at risk of hypercapnic respiratory failure: 88–92 % → 86–90 % (both bounds 2 points lower)',
      ],
      [
        'the oxygen toxicity range moved',
        ['oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }', 'oxygenToxicityRisk: { lowPercent: 85, highPercent: 90 }'], // from BTS 2017 Table 3
        'Target ranges',
        'target at risk of oxygen toxicity (paraquat, bleomycin): 85–88 % → 85–90 % (lower bound unchanged, upper bound 2 points higher)',
      ],
      [
        'the critical threshold lowered',
        ['criticalSpo2BelowPercent: 85', 'criticalSpo2BelowPercent: 84'], // from BTS 2017 Table 2: below 85 %
        'Thresholds',
        'critical SpO2: below 85 % → below 84 %',
      ],
      [
        'a pressure threshold in another unit',
        ['nivPaco2Above: { value: 6.5, unit: kPa }', "nivPaco2Above: { value: 45, unit: 'mm[Hg]' }"], // from BTS/ICS 2016: 6.5 kPa
        'Thresholds',
        'consider NIV: PaCO2 above 6.5 kPa → PaCO2 above 45 mmHg',
      ],
      [
        'a pH threshold',
        ['invasiveVentilationPhBelow: 7.25', 'invasiveVentilationPhBelow: 7.2'], // from BTS/ICS 2016: 7.25
        'Thresholds',
        'consider invasive ventilation: pH below 7.25 → pH below 7.2',
      ],
      [
        'a window in minutes',
        ['repeatGasMinutes: { from: 30, to: 60 }', 'repeatGasMinutes: { from: 30, to: 45 }'], // from BTS 2017 Tables 2-4
        'Thresholds',
        'repeat blood gas after a change, within: 30–60 min → 30–45 min',
      ],
      [
        'a freshness window',
        ['bloodGasMinutes: 720', 'bloodGasMinutes: 360'], // from the preset (local choice)
        'Freshness windows',
        'a blood gas counts as current for: 720 min → 360 min',
      ],
      [
        'a risk condition removed',
        ['    - morbid-obesity\n', ''], // BTS 2017 Table 4 lists morbid obesity
        'Who is at risk of hypercapnic respiratory failure',
        "risk condition removed: 'morbid-obesity'",
      ],
      [
        'a risk condition added',
        ['    - copd\n', '    - copd\n    - acute-asthma\n'], // not in BTS 2017 Table 4 (validation warns)
        'Who is at risk of hypercapnic respiratory failure',
        "risk condition added: 'acute-asthma'",
      ],
      [
        'the hypercapnia PaCO2 threshold',
        ['hypercapniaPaco2AtLeast: { value: 6.0, unit: kPa }', 'hypercapniaPaco2AtLeast: { value: 6.5, unit: kPa }'], // from BTS 2017 clarification: 6 kPa
        'Who is at risk of hypercapnic respiratory failure',
        'hypercapnia: PaCO2 at or above 6 kPa → PaCO2 at or above 6.5 kPa',
      ],
      [
        'the minimum age',
        ['minimumAgeYears: 16', 'minimumAgeYears: 18'], // common practice: 16
        'Population',
        'minimum age for adult advice: 16 years → 18 years',
      ],
      [
        'a special condition removed',
        ['    - hyperventilation\n', ''], // BTS 2017 Table 3
        'Special conditions',
        "oxygen only if hypoxaemic removed: 'hyperventilation'",
      ],
      [
        'the site altitude',
        ['altitudeM: 40 ', 'altitudeM: 1200 '], // invented site values
        'Basis and site',
        'site altitude: 40 m → 1200 m',
      ],
      [
        'the time zone',
        ['timeZone: Europe/London ', 'timeZone: Australia/Perth '],
        'Basis and site',
        "time zone: 'Europe/London' → 'Australia/Perth'",
      ],
      [
        'a rule switched off',
        ['disabledRules: []', 'disabledRules: [news2-scale-2]'],
        'Rules and indicators',
        'switched off: news2-scale-2 (its cards: info by default)', // its default, info, from its rule (src/core/rules)
      ],
      [
        'an indicator raised',
        ['severity: {}', 'severity: { news2-scale-2: critical }'], // its default, info, from its rule (src/core/rules)
        'Rules and indicators',
        'indicator of news2-scale-2 raised: info → critical',
      ],
      [
        'a titration review setting (no wording of its own: named by its path, unit from its name)',
        ['lookbackHours: 8 ', 'lookbackHours: 12 '], // common practice: one nursing shift
        'Titration review',
        'changed: titrationReview.lookbackHours: 8 h → 12 h',
      ],
      [
        'a caution line added',
        ['more: []', 'more: ["Call critical care outreach on 4444."]'],
        'References and cautions',
        "caution line added: 'Call critical care outreach on 4444.'",
      ],
    ] as const)('%s', (_what, [from, to], heading, text) => {
      const change = only(diffPolicies(version(BTS), version(edited([from, to]))).changes);
      expect(change.heading).toBe(heading);
      expect(change.text).toBe(text);
    });

    it('reads an indicator change against the rule default, and an acknowledgement added with it', () => {
      const lowered = edited([
        'severity: {}',
        'severity: { acute-hypercapnic-acidosis: info }\n' +
          'acknowledgements:\n  - { ruleId: acute-hypercapnic-acidosis, change: lowered, reason: "Outreach reviews every gas within 15 minutes", by: Oxygen committee }',
      ]).replace('acknowledgements: []', '');
      const diff = diffPolicies(version(BTS), version(lowered));
      // acute-hypercapnic-acidosis is critical by default (docs/clinical-basis.md).
      expect(diff.changes.map((c) => c.text)).toStrictEqual([
        'indicator of acute-hypercapnic-acidosis lowered: critical → info; acknowledged',
        'added: acute-hypercapnic-acidosis lowered: Outreach reviews every gas within 15 minutes; by Oxygen committee',
      ]);
      const back = diffPolicies(version(lowered), version(BTS));
      expect(back.changes.map((c) => c.text)).toStrictEqual([
        'indicator of acute-hypercapnic-acidosis raised: info → critical, back to its default',
        'removed: acute-hypercapnic-acidosis lowered: Outreach reviews every gas within 15 minutes; by Oxygen committee',
      ]);
    });

    it('says a rule switched back on, the reverse of switched off', () => {
      const off = edited(['disabledRules: []', 'disabledRules: [news2-scale-2]']);
      expect(only(diffPolicies(version(off), version(BTS)).changes).text).toBe('switched back on: news2-scale-2 (its cards: info by default)');
    });

    it('says when a rule that is critical by default is switched off with the acknowledgement the file records', () => {
      const off = edited(
        ['disabledRules: []', 'disabledRules: [escalated-support-failing]'],
        ['acknowledgements: []', 'acknowledgements: [{ ruleId: escalated-support-failing, change: disabled, reason: "Outreach reviews every patient on high flow hourly" }]'],
      );
      // escalated-support-failing is critical by default (docs/policy.md, Validation).
      expect(diffPolicies(version(BTS), version(off)).changes.map((c) => c.text)).toStrictEqual([
        'switched off: escalated-support-failing (its cards: critical by default); acknowledged',
        'added: escalated-support-failing disabled: Outreach reviews every patient on high flow hourly',
      ]);
    });

    it('calls a pressure rewritten in another unit at the same value the same pressure', () => {
      // 6.5 kPa is 48.75 mmHg (1 kPa = 7.50062 mmHg, UCUM); 45 mmHg is not the same threshold.
      const same = edited(['nivPaco2Above: { value: 6.5, unit: kPa }', "nivPaco2Above: { value: 48.75, unit: 'mm[Hg]' }"]);
      expect(only(diffPolicies(version(BTS), version(same)).changes).text).toBe(
        'consider NIV: PaCO2 above 6.5 kPa → PaCO2 above 48.75 mmHg (the same pressure, written differently)',
      );
      const lower = edited(['nivPaco2Above: { value: 6.5, unit: kPa }', "nivPaco2Above: { value: 45, unit: 'mm[Hg]' }"]);
      expect(only(diffPolicies(version(BTS), version(lower)).changes).text).not.toContain('the same pressure');
    });
  });

  describe('the BTS 2017 and TSANZ 2015 presets: what the cards cite', () => {
    const tsanzText = preset('based-on-tsanz-2015.yaml');
    /** The rules the TSANZ preset lists under clinicalBasis.ruleCitations with BTS 2017. */
    const listedForBts = [...tsanzText.matchAll(/^ {4}([a-z0-9-]+): bts-2017\b/gm)].map((m) => m[1] as string);

    it('moves to TSANZ 2015 exactly the cards the TSANZ preset does not keep on BTS 2017', () => {
      const diff = diffPolicies(version(BTS), version(tsanzText));
      const cite = diff.changes.filter((c) => c.heading === 'What the cards cite');
      // policies/based-on-tsanz-2015.yaml: TSANZ 2015 primary, BTS 2017 and BTS/ICS 2016 followed too; the
      // BTS preset follows NEWS2 (RCP 2017), which the TSANZ preset does not (news2-scale-2 switched off).
      expect(cite.map((c) => c.text).slice(0, 2)).toStrictEqual([
        "guideline no longer followed: 'rcp-news2-2017' (NEWS2 (RCP 2017))",
        "guideline followed added: 'tsanz-2015' (TSANZ 2015)",
      ]);
      const moved = cite.filter((c) => c.path === 'clinicalBasis.ruleCitations');
      const change = only(moved);
      const ruleIds = (change.new as { ruleIds: string[] }).ruleIds;
      expect(listedForBts.length).toBeGreaterThan(0);
      // Invariant: a card moves iff the TSANZ preset leaves it on its primary; listed rules keep BTS 2017.
      for (const ruleId of listedForBts) expect(ruleIds).not.toContain(ruleId);
      expect(ruleIds).toContain('spo2-above-target'); // reduce oxygen above the range: TSANZ 2015 says so too (from memory)
      // The TSANZ preset switches NEWS2 Scale 2 off: it gives no cards, so nothing it would cite is a change.
      expect(ruleIds).not.toContain('news2-scale-2');
      expect(change.text).toBe(`the cards of ${ruleIds.length} rules now cite TSANZ 2015 instead of BTS 2017: ${ruleIds.join(', ')}`);
      // The ventilation thresholds cite BTS/ICS 2016 in both presets, so that line does not appear.
      expect(cite.some((c) => c.path.startsWith('clinicalBasis.topicCitations'))).toBe(false);
      expect(diff.changes.some((c) => c.heading === 'Other changes')).toBe(false);
      // And back: the same cards the other way, with NEWS2 Scale 2, switched back on, citing BTS 2017.
      const back = only(diffPolicies(version(tsanzText), version(BTS)).changes.filter((c) => c.path === 'clinicalBasis.ruleCitations'));
      const backIds = [...ruleIds, 'news2-scale-2'].sort();
      expect(back.text).toBe(`the cards of ${backIds.length} rules now cite BTS 2017 instead of TSANZ 2015: ${backIds.join(', ')}`);
    });

    it('reads the ICU example against the BTS preset without structural fallbacks for the new sections', () => {
      const diff = diffPolicies(version(BTS), version(preset('icu-conservative-example.yaml')));
      expect(diff.changes.some((c) => c.heading === 'Other changes')).toBe(false);
      expect(diff.changes.filter((c) => c.heading === 'What the cards cite').map((c) => c.text)[0]).toBe(
        "guideline followed added: 'icu-oxygen-trials' (ICU oxygen trials)",
      );
    });
  });

  describe('sections added in parallel, each in clinical words', () => {
    const ICU_UNIT = [
      'units:',
      '  - name: ICU',
      '    match: { names: ["Larkspur Bay General Hospital, Intensive Care Unit"], locations: [Location/lbgh-icu] }',
      '    targets: { standard: { lowPercent: 92, highPercent: 96 } }',
    ].join('\n');
    /** The BTS preset with an invented Larkspur Bay ICU on 92–96 % (PILOT 2022 intermediate arm). */
    const withIcu = (...more: readonly (readonly [string, string])[]): string =>
      edited(...more).replace(/^units: \[\].*$/m, ICU_UNIT);
    const texts = (a: string, b: string, heading: string): string[] =>
      diffPolicies(version(a), version(b)).changes.filter((c) => c.heading === heading).map((c) => c.text);

    it('says a unit added or removed, with its ranges and how it is matched', () => {
      expect(texts(BTS, withIcu(), 'Unit overrides')).toStrictEqual([
        'unit added: ICU: standard range 92–96 %; matched by name "Larkspur Bay General Hospital, Intensive Care Unit", location Location/lbgh-icu',
      ]);
      expect(texts(withIcu(), BTS, 'Unit overrides')).toStrictEqual([
        'unit removed: ICU (was standard range 92–96 %; matched by name "Larkspur Bay General Hospital, Intensive Care Unit", location Location/lbgh-icu): ' +
          "its patients get the policy's own ranges",
      ]);
    });

    it("says a unit's range changed with how far each bound moved, and a range it now sets against the policy's", () => {
      // 92-96 % (PILOT 2022 intermediate arm) to 90-94 % (ICU-ROX 2020 lower limit; ICONIC 2023), with the
      // at-risk range capped at 90 % as validation requires (BTS 2017 Table 4 floor of 88 %).
      const lower = withIcu().replace(
        'targets: { standard: { lowPercent: 92, highPercent: 96 } }',
        'targets: { standard: { lowPercent: 90, highPercent: 94 }, hypercapnicRisk: { lowPercent: 88, highPercent: 90 } }',
      );
      expect(texts(withIcu(), lower, 'Unit overrides')).toStrictEqual([
        'ICU standard range: 92–96 % → 90–94 % (both bounds 2 points lower)',
        "ICU at-risk range: the policy's own (88–92 %) → 88–90 %", // BTS 2017, Table 4: 88-92 %
      ]);
    });

    it('says how a unit is matched changed, its cited basis, and the order units are tried in', () => {
      const rematched = withIcu().replace('locations: [Location/lbgh-icu]', 'patterns: ["*Intensive Care*"]');
      expect(texts(withIcu(), rematched, 'Unit overrides')).toStrictEqual([
        'ICU: now also matched by pattern "*Intensive Care*"; no longer matched by location Location/lbgh-icu',
      ]);
      const cited = withIcu().replace('targets: { standard: { lowPercent: 92, highPercent: 96 } }', '$&\n    basis: local-policy');
      expect(texts(withIcu(), cited, 'Unit overrides')).toStrictEqual(["ICU cards cite: 'local-policy' (the default) → 'local-policy' (Local policy)"]);
      const hdu = '  - name: HDU\n    match: { names: ["Larkspur Bay General Hospital, High Dependency Unit"] }\n    targets: { standard: { lowPercent: 92, highPercent: 96 } }';
      const icuFirst = withIcu().replace(ICU_UNIT, `${ICU_UNIT}\n${hdu}`);
      const hduFirst = withIcu().replace(ICU_UNIT, `units:\n${hdu}\n${ICU_UNIT.replace('units:\n', '')}`);
      expect(texts(icuFirst, hduFirst, 'Unit overrides')).toStrictEqual(['order the units are tried in (the first that matches wins): ICU, HDU → HDU, ICU']);
    });

    it('says when the date the policy applies from changed or was dropped', () => {
      const later = edited(['effectiveFrom: 2026-12-01', 'effectiveFrom: 2027-01-04']);
      expect(texts(BTS, later, 'When it applies')).toStrictEqual(['effective from: 2026-12-01 → 2027-01-04']);
      const undated = BTS.replace(/^effectiveFrom: .*\n/m, '');
      expect(texts(BTS, undated, 'When it applies')).toStrictEqual(['effective from: 2026-12-01 → not stated (in effect once loaded)']);
    });

    it('says a device kind no longer stocked or stocked again, and flow limits changed, in L/min', () => {
      const noCpap = BTS.replace(/^ {2}cpap-niv: .*\n/m, '');
      expect(texts(BTS, noCpap, 'Devices stocked')).toStrictEqual([
        'no longer stocked: CPAP or NIV (was 1–15 L/min): no card offers it; an order for it is still checked', // preset: from memory
      ]);
      expect(texts(noCpap, BTS, 'Devices stocked')).toStrictEqual(['now stocked: CPAP or NIV, 1–15 L/min']);
      // BTS 2017 Tables 2 and 4: 1-6 L/min; above about 4 L/min often poorly tolerated.
      const cannula = edited(['nasal-cannula: { flowLPerMin: { from: 1, to: 6 } }', 'nasal-cannula: { flowLPerMin: { from: 1, to: 4 } }']);
      expect(texts(BTS, cannula, 'Devices stocked')).toStrictEqual(['Nasal cannula flow limits: 1–6 L/min → 1–4 L/min']);
      // BTS 2017, Table 2: reservoir mask at 15 L/min; a hospital that runs it at that flow only.
      const reservoir = edited(['reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }', 'reservoir-mask: { flowLPerMin: { from: 15, to: 15 } }']);
      expect(texts(BTS, reservoir, 'Devices stocked')).toStrictEqual(['Reservoir mask flow limits: 10–15 L/min → 15 L/min']);
    });

    it('says a Venturi valve added, removed, or with another minimum flow, and Venturi masks no longer stocked', () => {
      const no24 = BTS.replace(/^ {6}- \{ fio2Percent: 24,.*\n/m, '');
      expect(texts(BTS, no24, 'Devices stocked')).toStrictEqual(['Venturi valve no longer stocked: 24 % (O2 at least 2 L/min): no card offers it']); // BTS 2017, Table 4
      expect(texts(no24, BTS, 'Devices stocked')).toStrictEqual(['Venturi valve now stocked: 24 % (O2 at least 2 L/min)']); // BTS 2017, Table 4
      // 8 L/min: device labelling convention (common practice); 9 L/min an invented local valve's label.
      const other35 = edited(['{ fio2Percent: 35, minimumFlowLPerMin: 8 }', '{ fio2Percent: 35, minimumFlowLPerMin: 9 }']);
      expect(texts(BTS, other35, 'Devices stocked')).toStrictEqual(['Venturi 35 % valve, minimum O2 flow: 8 L/min → 9 L/min']);
      const noVenturi = BTS.replace(/^ {2}venturi-mask:\n {4}settings:.*\n( {6}- .*\n)+/m, '');
      const gone = texts(BTS, noVenturi, 'Devices stocked');
      expect(gone).toHaveLength(1);
      expect(gone[0]).toMatch(/^no longer stocked: Venturi mask \(was valves 24 % \(O2 at least 2 L\/min\), 28 % \(O2 at least 4 L\/min\), .*60 % \(O2 at least 15 L\/min\)\): no card offers it/);
    });

    it("says a guideline added to those followed, a rule's cited guideline changed, and a topic's citation changed", () => {
      // The asthma guideline followed for the acute-asthma card; the ventilation thresholds moved to the primary.
      const niv = edited(
        ['guidelines: [bts-2017, bts-ics-2016, rcp-news2-2017]', 'guidelines: [bts-2017, bts-ics-2016, rcp-news2-2017, bts-sign-asthma]'],
        ['ruleCitations: {}', 'ruleCitations: { hypercapnia-without-chronic-retention: bts-sign-asthma }'],
        ['    ventilation: bts-ics-2016', '    ventilation: bts-2017'],
      );
      expect(texts(BTS, niv, 'What the cards cite')).toStrictEqual([
        "guideline followed added: 'bts-sign-asthma' (BTS/SIGN asthma guideline)",
        'the cards of 1 rule now cite BTS/SIGN asthma guideline instead of BTS 2017: hypercapnia-without-chronic-retention',
        'ventilation thresholds cite: BTS/ICS 2016 → BTS 2017', // BTS/ICS 2016 gives the NIV thresholds
      ]);
    });

    it('says the card wording folder and the override reasons changed, reason by reason', () => {
      const local = edited(
        ['cardWording: {}', 'cardWording: { folder: ./larkspur-cards }'],
        ['  merge: add ', '  merge: replace '],
        ['  allCards: []', '  allCards: [{ code: discussed-with-consultant, display: "Discussed with the consultant on call" }]'],
        ['  byRule: {}', '  byRule: { target-differs-from-policy: [{ code: outreach-agreed-target, display: "Target agreed with outreach" }] }'],
      );
      expect(texts(BTS, local, 'Card wording and override reasons')).toStrictEqual([
        "local card wording folder: none (the bundled wording) → './larkspur-cards'",
        "override reasons merged by: add (after each card file's own reasons) → replace (instead of the card file's, for a rule the policy gives any)",
        'override reason on every card added: "Discussed with the consultant on call" (discussed-with-consultant)',
        'override reason on target-differs-from-policy cards added: "Target agreed with outreach" (outreach-agreed-target)',
      ]);
      const reworded = local.replace('Target agreed with outreach', 'Target agreed with the outreach team');
      expect(texts(local, reworded, 'Card wording and override reasons')).toStrictEqual([
        'override reason on target-differs-from-policy cards reworded: outreach-agreed-target: "Target agreed with outreach" → "Target agreed with the outreach team"',
      ]);
      expect(texts(local, BTS, 'Card wording and override reasons')).toContain(
        'override reason on every card removed: "Discussed with the consultant on call" (discussed-with-consultant)',
      );
    });
  });

  describe('sections without wording of their own (added to the format later)', () => {
    const base = version(BTS);
    const withSections = (extra: Record<string, unknown>): PolicyVersion => ({ policy: { ...base.policy, ...extra } });

    it('shows a change inside a list of named entries by the entry name and path', () => {
      const icu = (low: number, high: number): Record<string, unknown> => ({
        unitOverrides: [
          { name: 'Larkspur ICU', locations: ['ICU'], targets: { standard: { lowPercent: low, highPercent: high } } },
          { name: 'Larkspur HDU', locations: ['HDU'], targets: { standard: { lowPercent: 92, highPercent: 96 } } },
        ],
      });
      // ICU example values: 92-96 % and 90-94 %, as the unit-override example gives them (invented site).
      const change = only(diffPolicies(withSections(icu(92, 96)), withSections(icu(90, 94))).changes);
      expect(change.heading).toBe('Other changes');
      expect(change.text).toBe('changed: unitOverrides[name=Larkspur ICU].targets.standard: 92–96 % → 90–94 %');
    });

    it('shows a section added or removed whole, and a nested value changed, with the unit its name carries', () => {
      const devices = { bedsideKit: { venturi: { minimumFlowLPerMin: { '24': 2, '28': 4 } } } };
      const added = only(diffPolicies(base, withSections(devices)).changes);
      expect(added.kind).toBe('added');
      expect(added.text).toBe('added: bedsideKit: {"venturi":{"minimumFlowLPerMin":{"24":2,"28":4}}}');
      expect(only(diffPolicies(withSections(devices), base).changes).kind).toBe('removed');
      const changed = { bedsideKit: { venturi: { minimumFlowLPerMin: { '24': 2, '28': 6 } } } };
      expect(only(diffPolicies(withSections(devices), withSections(changed)).changes).text).toBe(
        'changed: bedsideKit.venturi.minimumFlowLPerMin.28: 4 L/min → 6 L/min',
      );
    });

    it('shows items added to and removed from a list of plain values', () => {
      const notes = (...r: string[]): PolicyVersion => withSections({ wardNotes: r });
      const diff = diffPolicies(notes('Palliative care', 'Patient declined'), notes('Palliative care', 'Senior review done'));
      expect(diff.changes.map((c) => c.text)).toStrictEqual(["removed: wardNotes: 'Patient declined'", "added: wardNotes: 'Senior review done'"]);
    });

    it('still shows a key added later inside a section that has wording of its own', () => {
      // The device catalogue is worded device by device; a key it does not know still shows, by path.
      const humidifiers = (n: number): PolicyVersion => withSections({ devices: { ...base.policy.devices, humidifierCount: n } });
      const change = only(diffPolicies(humidifiers(4), humidifiers(6)).changes);
      expect(change.heading).toBe('Other changes');
      expect(change.text).toBe('changed: devices.humidifierCount: 4 → 6');
    });
  });
});
