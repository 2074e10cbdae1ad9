import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { compareCards, loadPolicyCase, type ObservedCard, type PolicyCase } from '../../src/cli/policy-cases.js';
import { RULES } from '../../src/core/rules/index.js';
import { examplePath } from './cli-harness.js';

const read = (path: string): string => readFileSync(path, 'utf8');

/** Writes a case file (and any extra files) into a fresh folder; returns the case file's path. */
function caseFile(text: string, extra: Readonly<Record<string, string>> = {}): string {
  const dir = mkdtempSync(join(tmpdir(), 'policy-case-'));
  for (const [name, content] of Object.entries(extra)) writeFileSync(join(dir, name), content);
  const file = join(dir, 'case.yaml');
  writeFileSync(file, text);
  return file;
}

const KYPHO = examplePath('order-sign-kyphoscoliosis-standard-target');

const validCase = (lines: readonly string[] = []): string =>
  [
    'name: Kyphoscoliosis on the standard range',
    `request: ${KYPHO}`,
    'expect:',
    '  cards:',
    '    - rule: target-above-hypercapnic-range',
    '      indicator: critical',
    ...lines,
  ].join('\n');

function problemsOf(file: string): { path: string; message: string; line: number; column: number }[] {
  const loaded = loadPolicyCase(file, read);
  if (loaded.kind !== 'broken') throw new Error('expected the case to be refused');
  return [...loaded.problems];
}

describe('policy case files: reading', () => {
  it('reads a case that points at a saved request, evaluated at the moment the request describes', () => {
    const loaded = loadPolicyCase(caseFile(validCase()), read);
    expect(loaded.kind).toBe('ready');
    if (loaded.kind !== 'ready') return;
    expect(loaded.serviceId).toBeDefined();
    // The example's draft order is authored at 09:40 UTC on 30 Nov 2026 (examples/, its authoredOn).
    expect(loaded.now.toISOString()).toBe('2026-11-30T09:40:00.000Z');
    // Defaults: the rest of the expectations are empty and extra cards are allowed.
    expect(loaded.policyCase.expect).toEqual({
      cards: [{ rule: 'target-above-hypercapnic-range', indicator: 'critical' }],
      absent: [],
      only: false,
    });
  });

  it('evaluates at a given date-time, or minutes after the request moment', () => {
    const at = loadPolicyCase(caseFile(`${validCase()}\nevaluateAt: 2026-12-02T09:40:00+01:00`), read);
    expect(at.kind === 'ready' && at.now.toISOString()).toBe('2026-12-02T08:40:00.000Z');
    const later = loadPolicyCase(caseFile(`${validCase()}\nevaluateAt: { minutesAfterRequest: 90 }`), read);
    expect(later.kind === 'ready' && later.now.toISOString()).toBe('2026-11-30T11:10:00.000Z');
    const earlier = loadPolicyCase(caseFile(`${validCase()}\nevaluateAt: { minutesAfterRequest: -30 }`), read);
    expect(earlier.kind === 'ready' && earlier.now.toISOString()).toBe('2026-11-30T09:10:00.000Z');
  });

  it('takes a patient-view request, timed by its newest observation', () => {
    const file = caseFile(
      [
        'name: Weaning',
        `request: ${examplePath('patient-view-pneumonia-weaning')}`,
        'expect:',
        '  absent: [target-range-missing]',
      ].join('\n'),
    );
    const loaded = loadPolicyCase(file, read);
    expect(loaded.kind).toBe('ready');
    const body = JSON.parse(read(examplePath('patient-view-pneumonia-weaning'))) as {
      prefetch: { observations: { entry: { resource: { effectiveDateTime: string } }[] } };
    };
    const newest = Math.max(...body.prefetch.observations.entry.map((e) => Date.parse(e.resource.effectiveDateTime)));
    expect(loaded.kind === 'ready' && loaded.now.getTime()).toBe(newest);
  });

  it('takes the request inline', () => {
    const body = JSON.parse(read(KYPHO)) as unknown;
    const file = caseFile(
      ['name: Inline', `request: ${JSON.stringify(body)}`, 'expect:', '  absent: [target-range-missing]'].join('\n'),
    );
    expect(loadPolicyCase(file, read).kind).toBe('ready');
  });
});

describe('policy case files: every problem with its line and column, never a crash', () => {
  it('names an unknown key where it stands, with the nearest known key', () => {
    const problems = problemsOf(caseFile(validCase(['      indicater: warning', 'expcet: {}'])));
    expect(problems).toContainEqual({
      path: 'expect.cards.0.indicater',
      message: "unknown key 'indicater'; did you mean 'indicator'?",
      line: 7,
      column: 7,
    });
    expect(problems).toContainEqual({ path: 'expcet', message: "unknown key 'expcet'; did you mean 'expect'?", line: 8, column: 1 });
  });

  it('refuses an indicator that is not one of the three', () => {
    const problems = problemsOf(caseFile(validCase().replace('indicator: critical', 'indicator: severe')));
    expect(problems).toEqual([
      { path: 'expect.cards.0.indicator', message: 'must be one of info, warning, critical', line: 6, column: 7 },
    ]);
  });

  it('refuses a rule id no rule has, suggesting the nearest, and names a retired one', () => {
    const problems = problemsOf(
      caseFile(validCase(['  absent: [target-range-mising, pregnancy-oxygen]'])),
    );
    expect(problems).toEqual([
      {
        path: 'expect.absent.0',
        message: "no rule has the id 'target-range-mising'; did you mean 'target-range-missing'?",
        line: 7,
        column: 12,
      },
      {
        path: 'expect.absent.1',
        message: "rule id 'pregnancy-oxygen' is retired; its advice now comes from 'oxygen-without-hypoxaemia'",
        line: 7,
        column: 33,
      },
    ]);
  });

  it('refuses contradictions and a case that could never fail', () => {
    const both = problemsOf(caseFile(validCase(['  absent: [target-above-hypercapnic-range]'])));
    expect(both.map((p) => p.message)).toEqual(["rule 'target-above-hypercapnic-range' is both expected and forbidden"]);
    const twice = problemsOf(caseFile(validCase(['    - rule: target-above-hypercapnic-range', '      indicator: warning'])));
    expect(twice.map((p) => [p.path, p.line])).toEqual([['expect.cards.1.rule', 7]]);
    const nothing = problemsOf(caseFile(['name: Nothing', `request: ${KYPHO}`, 'expect: {}'].join('\n')));
    expect(nothing).toEqual([
      {
        path: 'expect',
        message: 'expects nothing, so it could never fail: list cards, absent rules, an advisedTarget, or only: true',
        line: 3,
        column: 1,
      },
    ]);
  });

  it('names missing keys and a bad target range', () => {
    const problems = problemsOf(
      caseFile(['request: x.json', 'expect:', '  advisedTarget: { lowPercent: 98, highPercent: 94 }'].join('\n')),
    );
    expect(problems).toContainEqual({ path: 'name', message: 'is missing', line: 1, column: 1 });
    expect(problems).toContainEqual({
      path: 'expect.advisedTarget',
      message: 'lowPercent must not be above highPercent',
      line: 3,
      column: 3,
    });
  });

  it('refuses an evaluation time without an offset, saying what it accepts', () => {
    const problems = problemsOf(caseFile(`${validCase()}\nevaluateAt: 2026-11-30T09:40:00`));
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatchObject({ path: 'evaluateAt', line: 7, column: 1 });
    expect(problems[0]?.message).toContain("must be 'request', an ISO 8601 date-time with its offset");
  });

  it('reports broken YAML at its line and column without quoting the file', () => {
    const secret = 'LBGHSECRET0001';
    // [text, the line the first problem is on at the least]; an unresolved alias is found only when
    // the whole document is read, so it is given at the start of the file.
    const broken: [string, number][] = [
      [`name: A\nrequest: "${secret}\nexpect: [`, 2],
      [`name: A\nrequest: *${secret}`, 1],
      [`name: A\nrequest: |${secret}\n  x`, 2],
      [`name: A\nrequest: x\n${secret}: [`, 3],
      [`name: A\n- ${secret}\n`, 2],
    ];
    for (const [text, line] of broken) {
      const problems = problemsOf(caseFile(text));
      expect(problems.length, text).toBeGreaterThan(0);
      expect(problems[0]?.line, text).toBeGreaterThanOrEqual(line);
      expect(problems[0]?.message, text).toMatch(/^YAML syntax: \S/);
      expect(JSON.stringify(problems), text).not.toContain(secret);
    }
  });

  it('reports a request file that is missing or not JSON at the request key, without quoting it', () => {
    const missing = problemsOf(caseFile(validCase().replace(KYPHO, 'no-such-request.json')));
    expect(missing).toEqual([
      { path: 'request', message: 'the request file no-such-request.json cannot be read (ENOENT)', line: 2, column: 1 },
    ]);
    const secret = 'LBGH-SECRET-0002';
    const notJson = problemsOf(
      caseFile(validCase().replace(KYPHO, 'broken.json'), { 'broken.json': `{\n  "hook": "order-sign",\n  ${secret}\n}` }),
    );
    expect(notJson).toHaveLength(1);
    expect(notJson[0]).toMatchObject({ path: 'request', line: 2, column: 1 });
    expect(notJson[0]?.message).toMatch(/^the request file broken\.json is not valid JSON( at line 3, column 3)?$/);
    expect(JSON.stringify(notJson)).not.toContain(secret);
  });

  it('points an invalid inline request at the field in the case file', () => {
    const body = JSON.parse(read(KYPHO)) as { context: Record<string, unknown> };
    body.context['patientId'] = 'not a FHIR id!';
    const file = caseFile(
      ['name: Inline', 'expect:', '  absent: [target-range-missing]', `request: ${JSON.stringify(body, null, 2).replace(/\n/g, '\n  ')}`].join('\n'),
    );
    const problems = problemsOf(file);
    expect(problems).toHaveLength(1);
    expect(problems[0]?.path).toBe('request.context.patientId');
    const lines = read(file).split('\n');
    expect(lines[(problems[0]?.line ?? 0) - 1]).toContain('"patientId"');
    expect(problems[0]?.message).not.toContain('not a FHIR id!');
  });

  it('refuses a request whose hook the service does not answer', () => {
    const file = caseFile(
      ['name: Wrong hook', 'request: { hook: encounter-start, hookInstance: a, context: {} }', 'expect: { only: true }'].join('\n'),
    );
    const problems = problemsOf(file);
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatchObject({ path: 'request.hook', line: 2, column: 12 });
    expect(problems[0]?.message).toMatch(/^the request's hook is not one this service answers \(.*order-sign.*\)$/);
    expect(problems[0]?.message).not.toContain('encounter-start');
  });

  it('reports an unreadable case file as a problem, not an exception', () => {
    const loaded = loadPolicyCase('/no/such/dir/case.yaml', read);
    expect(loaded).toEqual({
      kind: 'broken',
      file: '/no/such/dir/case.yaml',
      name: undefined,
      problems: [{ path: '(file)', message: 'cannot be read (ENOENT)', line: 1, column: 1 }],
    });
  });
});

describe('comparing a run with a case', () => {
  const INDICATORS = ['info', 'warning', 'critical'] as const;
  const ruleIds = RULES.map((rule) => rule.id);
  // formatRange's form, "88–92 %", as the cards show it.
  // One card per rule, as the engine gives for a single order.
  const observed = fc.uniqueArray(
    fc.record({
      ruleId: fc.constantFrom(...ruleIds),
      indicator: fc.constantFrom(...INDICATORS),
      suggestion: fc.boolean(),
      advisedRange: fc.constantFrom(undefined, '88–92 %', '94–98 %', '92–96 %'),
    }),
    { maxLength: 8, selector: (c) => c.ruleId },
  );

  /** The exact expectation a run meets: every card with its indicator and suggestion, nothing else. */
  function exactly(cards: readonly ObservedCard[]): PolicyCase['expect'] {
    const first = new Map<string, ObservedCard>();
    for (const card of cards) if (!first.has(card.ruleId)) first.set(card.ruleId, card);
    const ranges = [...new Set(cards.flatMap((c) => (c.advisedRange === undefined ? [] : [c.advisedRange])))];
    const [low, high] = (ranges[0] ?? '').match(/\d+/g)?.map(Number) ?? [];
    return {
      cards: [...first.values()].map((c) => ({ rule: c.ruleId, indicator: c.indicator, suggestion: c.suggestion })),
      absent: ruleIds.filter((id) => !first.has(id)),
      only: true,
      ...(ranges.length === 0
        ? { advisedTarget: 'none' as const }
        : ranges.length === 1 && low !== undefined && high !== undefined
          ? { advisedTarget: { lowPercent: low, highPercent: high } }
          : {}),
    };
  }

  it('passes a run that is exactly what the case says, whatever the cards', () => {
    fc.assert(
      fc.property(observed, (cards) => {
        expect(compareCards(exactly(cards), cards)).toEqual([]);
      }),
    );
  });

  it('fails, naming the rule, when any expected card changes indicator or disappears', () => {
    fc.assert(
      fc.property(observed.filter((cards) => cards.length > 0), fc.nat(), (cards, pick) => {
        const expected = exactly(cards);
        const changed = cards[pick % cards.length] as ObservedCard;
        const others = cards.filter((c) => c.ruleId !== changed.ruleId);
        const relabelled = cards.map((c) =>
          c.ruleId === changed.ruleId ? { ...c, indicator: INDICATORS[(INDICATORS.indexOf(c.indicator) + 1) % 3] ?? 'info' } : c,
        );
        expect(compareCards(expected, relabelled).join('\n')).toContain(`(${changed.ruleId}) was shown as`);
        expect(compareCards(expected, others).join('\n')).toContain(`(${changed.ruleId}); it was not shown`);
      }),
    );
  });

  it('lets unlisted cards through by default, and fails them with only: true', () => {
    fc.assert(
      fc.property(observed.filter((cards) => cards.length > 0), (cards) => {
        const extra = cards[0] as ObservedCard;
        const withoutExtra = cards.filter((c) => c.ruleId !== extra.ruleId);
        const expected = { ...exactly(withoutExtra), absent: [], advisedTarget: undefined };
        expect(compareCards({ ...expected, only: false }, cards)).toEqual([]);
        expect(compareCards({ ...expected, only: true }, cards).join('\n')).toContain(
          `an unexpected ${extra.indicator} card`,
        );
      }),
    );
  });

  const card = (ruleId: string, indicator: ObservedCard['indicator'], more: Partial<ObservedCard> = {}): ObservedCard => ({
    ruleId,
    indicator,
    suggestion: false,
    advisedRange: undefined,
    ...more,
  });
  const base: PolicyCase['expect'] = { cards: [], absent: [], only: false };

  it('says in clinical words what differed', () => {
    // BTS 2017, Tables 1-3: 94-98 % for a patient not at risk; TSANZ 2015: 92-96 %.
    const tsanzRun = [card('target-range-missing', 'warning', { suggestion: true, advisedRange: '92–96 %' })];
    expect(compareCards({ ...base, advisedTarget: { lowPercent: 94, highPercent: 98 } }, tsanzRun)).toEqual([
      'the cards advise a target of 92–96 %; the case expects 94–98 %',
    ]);
    expect(compareCards({ ...base, absent: ['target-range-missing'] }, tsanzRun)).toEqual([
      '"No target saturation range on the oxygen order" (target-range-missing) was shown (warning); the case says it must not be',
    ]);
    expect(compareCards({ ...base, cards: [{ rule: 'target-range-missing', indicator: 'warning', suggestion: false }] }, tsanzRun)).toEqual([
      '"No target saturation range on the oxygen order" (target-range-missing) offered a one-click change; the case expects none',
    ]);
    expect(compareCards({ ...base, cards: [{ rule: 'no-recent-spo2', indicator: 'info' }] }, tsanzRun)).toEqual([
      'expected an info card "No recent SpO2 reading" (no-recent-spo2); it was not shown',
    ]);
    expect(compareCards({ ...base, advisedTarget: { lowPercent: 94, highPercent: 98 } }, [])).toEqual([
      'no card advises a target range; the case expects 94–98 %',
    ]);
    expect(compareCards({ ...base, advisedTarget: 'none' }, tsanzRun)).toEqual([
      'the cards advise a target of 92–96 %; the case expects no target advice',
    ]);
  });

  it('fails when the cards disagree on the advised range, even if one of them matches', () => {
    const mixed = [card('target-range-missing', 'warning', { advisedRange: '94–98 %' }), card('lower-range-without-risk', 'info', { advisedRange: '92–96 %' })];
    expect(compareCards({ ...base, advisedTarget: { lowPercent: 94, highPercent: 98 } }, mixed)).toEqual([
      'the cards advise a target of 94–98 % and 92–96 %; the case expects 94–98 %',
    ]);
  });
});
