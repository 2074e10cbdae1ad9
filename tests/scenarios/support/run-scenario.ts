import { readFileSync } from 'node:fs';
import { evaluateHook } from '../../../src/cds/evaluate-hook.js';
import type { Card } from '../../../src/cds/schemas.js';
import type { Policy } from '../../../src/core/policy.js';
import type { FhirResource } from '../../../src/fhir/gathered-data.js';
import { parsePolicyText } from '../../../src/policy/parse-policy.js';
import { loadRepositoryCards } from '../../cds/support/load-cards.js';
import { NOW } from './fhir.js';
import { compareOxygen, readOxygenOrder } from './oxygen-level.js';
import { buildScenario, type Expectation, type Indicator, type Scenario } from './scenario.js';

/**
 * Runs a scenario through evaluateHook in-process (bundled policy, fixed clock) and checks each
 * expectation. The outcome carries a readable report: the story, what was expected (with source)
 * and what came back, so a failing scenario can be reconciled without re-running it by hand.
 */

export function loadPolicy(file: 'bts-2017' | 'tsanz-2015'): Policy {
  const parsed = parsePolicyText(readFileSync(new URL(`../../../policies/based-on-${file}.yaml`, import.meta.url), 'utf8'));
  if (parsed.kind !== 'ok') throw new Error(`policies/based-on-${file}.yaml does not parse`);
  return parsed.policy;
}

const TEMPLATES = loadRepositoryCards();
const POLICIES = { 'bts-2017': loadPolicy('bts-2017'), 'tsanz-2015': loadPolicy('tsanz-2015') };
const RANK: Readonly<Record<Indicator, number>> = { info: 0, warning: 1, critical: 2 };

export interface ScenarioOutcome {
  readonly cards: readonly Card[];
  /** One line per unmet expectation; empty when the scenario passes. */
  readonly problems: readonly string[];
  readonly report: string;
}

export function ruleOf(card: Card): string {
  return card.source.topic?.code ?? '(no rule id)';
}

export function evaluateScenario(
  s: Scenario,
  options: { readonly policy?: 'bts-2017' | 'tsanz-2015'; readonly drafts?: readonly FhirResource[] } = {},
): { readonly cards: readonly Card[]; readonly drafts: readonly FhirResource[] } {
  const built = buildScenario(s, options.drafts);
  const policy = POLICIES[options.policy ?? s.policy];
  const result = evaluateHook(
    { serviceId: built.serviceId, request: built.request, data: built.data },
    { policy, templates: TEMPLATES, now: NOW },
  );
  return { cards: result.response.cards, drafts: built.drafts };
}

/** Each suggested update with the draft it replaces, for the oxygen-direction checks. */
function suggestedChanges(cards: readonly Card[], drafts: readonly FhirResource[]) {
  return cards.flatMap((card) =>
    (card.suggestions ?? []).flatMap((suggestion) =>
      (suggestion.actions ?? []).flatMap((action) => {
        const resource = action.resource as FhirResource | undefined;
        const draft = drafts.find((d) => resource !== undefined && d.resourceType === resource.resourceType && d.id === resource.id);
        return action.type === 'update' && resource !== undefined && draft !== undefined
          ? [{ card, label: suggestion.label, resource, draft }]
          : [];
      }),
    ),
  );
}

function check(e: Expectation, cards: readonly Card[], drafts: readonly FhirResource[]): string | undefined {
  const withRule = (id: string) => cards.filter((c) => ruleOf(c) === id);
  switch (e.kind) {
    case 'fires': {
      const found = withRule(e.ruleId);
      if (found.some((c) => c.indicator === e.indicator)) return undefined;
      const got = found.length === 0 ? 'no such card' : `got ${found.map((c) => c.indicator).join(', ')}`;
      return `expected ${e.indicator} ${e.ruleId}: ${got}`;
    }
    case 'fires-one-of': {
      const found = cards.filter((c) => e.ruleIds.includes(ruleOf(c)));
      if (found.some((c) => c.indicator === e.indicator)) return undefined;
      const got = found.length === 0 ? 'none of them' : `got ${found.map((c) => `${c.indicator} ${ruleOf(c)}`).join(', ')}`;
      return `expected ${e.indicator} from one of ${e.ruleIds.join(' | ')}: ${got}`;
    }
    case 'silent': {
      const found = withRule(e.ruleId);
      return found.length === 0 ? undefined : `expected no ${e.ruleId}: got ${found.map((c) => c.indicator).join(', ')}`;
    }
    case 'at-most': {
      const over = cards.filter((c) => RANK[c.indicator] > RANK[e.indicator]);
      return over.length === 0 ? undefined : `expected nothing above ${e.indicator}: got ${over.map((c) => `${c.indicator} ${ruleOf(c)}`).join(', ')}`;
    }
    case 'once': {
      const found = withRule(e.ruleId);
      return found.length <= 1 ? undefined : `expected at most one ${e.ruleId} card: got ${found.length}`;
    }
    case 'says': {
      const found = withRule(e.ruleId);
      const text = (c: Card): string => [c.summary, c.detail ?? '', ...(c.suggestions ?? []).map((x) => x.label)].join('\n');
      if (found.some((c) => e.pattern.test(text(c)))) return undefined;
      return found.length === 0 ? `expected ${e.ruleId} to say ${String(e.pattern)}: no such card` : `expected ${e.ruleId} to say ${String(e.pattern)}: it does not`;
    }
    case 'never-says': {
      const hit = cards.find((c) => e.pattern.test(`${c.summary}\n${c.detail ?? ''}`));
      return hit === undefined ? undefined : `expected no card to say ${String(e.pattern)}: ${ruleOf(hit)} does`;
    }
    case 'one-fio2': {
      const figures = new Set(cards.flatMap((c) => [...c.summary.matchAll(/FiO2 (?:about |of )?(0\.\d+)/g)].map((m) => Number(m[1]))));
      return figures.size <= 1 ? undefined : `expected one FiO2 across the summaries: got ${[...figures].join(', ')}`;
    }
    case 'short-detail': {
      const long = cards.filter((c) => (c.detail ?? '').split('\n').length > e.maxLines);
      return long.length === 0 ? undefined : `expected details of at most ${e.maxLines} lines: ${long.map((c) => `${ruleOf(c)} ${(c.detail ?? '').split('\n').length}`).join(', ')}`;
    }
    case 'suggestions-keep': {
      const lost = suggestedChanges(cards, drafts).filter((s) => !JSON.stringify(s.resource).includes(e.text));
      return lost.length === 0 ? undefined : `expected every suggestion to keep '${e.text}': '${lost[0]?.label ?? ''}' (${ruleOf(lost[0]!.card)}) does not`;
    }
    case 'suggestions-lose': {
      const kept = suggestedChanges(cards, drafts).filter((s) => JSON.stringify(s.resource).includes(e.text));
      return kept.length === 0 ? undefined : `expected no suggestion to still say '${e.text}': '${kept[0]?.label ?? ''}' (${ruleOf(kept[0]!.card)}) does`;
    }
    case 'no-more-oxygen':
    case 'no-less-oxygen': {
      const forbidden = e.kind === 'no-more-oxygen' ? 'more' : 'less';
      const bad = suggestedChanges(cards, drafts).filter((s) => {
        const before = readOxygenOrder(s.draft);
        const after = readOxygenOrder(s.resource);
        return before !== undefined && after !== undefined && compareOxygen(before, after) === forbidden;
      });
      return bad.length === 0 ? undefined : `expected no suggestion giving ${forbidden} oxygen: '${bad[0]?.label ?? ''}' (${ruleOf(bad[0]!.card)})`;
    }
  }
}

function describeExpectation(e: Expectation): string {
  switch (e.kind) {
    case 'fires':
      return `${e.indicator} ${e.ruleId}`;
    case 'fires-one-of':
      return `${e.indicator} from one of ${e.ruleIds.join(' | ')}`;
    case 'silent':
      return `no ${e.ruleId}`;
    case 'suggestions-lose':
      return `suggestions no longer say '${e.text}'`;
    case 'at-most':
      return `nothing above ${e.indicator}`;
    case 'once':
      return `at most one ${e.ruleId}`;
    case 'says':
      return `${e.ruleId} says ${String(e.pattern)}`;
    case 'never-says':
      return `no card says ${String(e.pattern)}`;
    case 'suggestions-keep':
      return `suggestions keep '${e.text}'`;
    case 'one-fio2':
      return 'one FiO2 figure across the summaries';
    case 'short-detail':
      return `every card detail at most ${e.maxLines} lines`;
    case 'no-more-oxygen':
      return 'no suggestion gives more oxygen';
    case 'no-less-oxygen':
      return 'no suggestion gives less oxygen';
  }
}

export function runScenario(s: Scenario): ScenarioOutcome {
  const { cards, drafts } = evaluateScenario(s, { policy: s.policy });
  const problems = s.expect.flatMap((e) => {
    const problem = check(e, cards, drafts);
    return problem === undefined ? [] : [`${problem}   [${e.source}]`];
  });
  const lines = [
    `scenario ${s.id} (${s.pov}, ${s.hook}, ${s.policy}${s.benign ? ', benign' : ''}): ${s.story}`,
    'expected:',
    ...s.expect.map((e) => `  ${check(e, cards, drafts) === undefined ? 'ok  ' : 'MISS'} ${describeExpectation(e)}   [${e.source}]`),
    'got:',
    ...(cards.length === 0 ? ['  (no cards)'] : []),
    ...cards.flatMap((c) => [
      `  ${c.indicator.padEnd(8)} ${ruleOf(c)}: ${c.summary}`,
      ...(c.suggestions ?? []).map((sg) => `           suggests: ${sg.label}`),
    ]),
  ];
  return { cards, problems, report: lines.join('\n') };
}
