import { dirname, resolve } from 'node:path';
import { z } from 'zod';
import { parseHookRequest } from '../cds/parse-hook-request.js';
import { CDS_SERVICES } from '../cds/services.js';
import { formatRange } from '../core/assessment/format.js';
import { RULES } from '../core/rules/index.js';
import type { Indicator } from '../core/types.js';
import { describeBreach, describeBreachPath, findJsonLimitBreach } from '../http/json-limits.js';
import { locateDocument, type TextPosition } from '../policy/locate.js';
import { nearest, RETIRED_RULE_IDS } from '../policy/rule-ids.js';
import { requestMoment } from './retime-request.js';

/**
 * A hospital's own regression case for `policy test`: one YAML file holding a saved hook request, the
 * moment to evaluate it at and what the policy's cards should be. The format is strict (an unknown
 * key is an error, with its line and column), so a misspelt expectation never passes silently.
 * This module reads and checks a case and compares a run's cards with it; it prints nothing.
 *
 * Matching (docs/policy.md, "Test it against your own cases"): every expected card must be shown with
 * its indicator (and, when the case says so, with or without a one-click suggestion); every `absent`
 * rule must not be shown; `advisedTarget` is the one range the cards advise (or `none`). Cards the case
 * does not mention are allowed, unless `only: true` asks for exactly the listed cards, so that a new
 * card appearing after a policy or software change is caught.
 */

const RULE_TITLES: ReadonlyMap<string, string> = new Map(RULES.map((rule) => [rule.id, rule.title]));

const ISO_DATE_TIME = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:\d{2})$/;

const IndicatorSchema = z.enum(['info', 'warning', 'critical']);

const ExpectedCardSchema = z.strictObject({
  rule: z.string().min(1),
  indicator: IndicatorSchema,
  /** true: the card must offer a one-click change; false: it must not; absent: either. */
  suggestion: z.boolean().optional(),
});

const RangeSchema = z
  .strictObject({ lowPercent: z.number().min(0).max(100), highPercent: z.number().min(0).max(100) })
  .refine((range) => range.lowPercent <= range.highPercent, { message: 'lowPercent must not be above highPercent' });

const EVALUATE_AT_FORMS =
  "must be 'request', an ISO 8601 date-time with its offset (2026-11-30T09:40:00Z) or { minutesAfterRequest: N }";

const EvaluateAtSchema = z.union(
  [
    z.literal('request'),
    z.string().refine((text) => ISO_DATE_TIME.test(text) && Number.isFinite(Date.parse(text)), EVALUATE_AT_FORMS),
    z.strictObject({ minutesAfterRequest: z.number().finite() }),
  ],
  { error: EVALUATE_AT_FORMS },
);

const ExpectSchema = z.strictObject({
  cards: z.array(ExpectedCardSchema).default([]),
  absent: z.array(z.string().min(1)).default([]),
  advisedTarget: z.union([z.literal('none'), RangeSchema]).optional(),
  only: z.boolean().default(false),
});

export const PolicyCaseSchema = z.strictObject({
  name: z.string().trim().min(1).max(200),
  description: z.string().optional(),
  /** A path to a saved request (JSON), relative to the case file, or the request itself. */
  request: z.union([z.string().min(1), z.record(z.string(), z.unknown())], {
    error: 'must be a path to a JSON request file, relative to this case file, or the request itself',
  }),
  evaluateAt: EvaluateAtSchema.default('request'),
  expect: ExpectSchema,
});

export type PolicyCase = z.infer<typeof PolicyCaseSchema>;
export type ExpectedCard = z.infer<typeof ExpectedCardSchema>;

/** The keys allowed at each place, for "did you mean" on an unknown key. */
function allowedKeys(path: readonly PropertyKey[]): readonly string[] {
  const shapeKeys = (schema: { shape: Record<string, unknown> }): string[] => Object.keys(schema.shape);
  if (path.length === 0) return shapeKeys(PolicyCaseSchema);
  if (path[0] === 'expect' && path.length === 1) return shapeKeys(ExpectSchema);
  if (path[0] === 'expect' && path[1] === 'cards') return shapeKeys(ExpectedCardSchema);
  if (path[0] === 'expect' && path[1] === 'advisedTarget') return ['lowPercent', 'highPercent'];
  if (path[0] === 'evaluateAt') return ['minutesAfterRequest'];
  return [];
}

export interface CaseProblem {
  /** Dot path inside the case file, `(file)` for the file as a whole. */
  readonly path: string;
  readonly message: string;
  readonly line: number;
  readonly column: number;
}

/** A case ready to run: the validated case, its request body and the moment to evaluate at. */
export interface ReadyCase {
  readonly kind: 'ready';
  readonly file: string;
  readonly policyCase: PolicyCase;
  readonly serviceId: string;
  readonly body: unknown;
  readonly now: Date;
}

export interface BrokenCase {
  readonly kind: 'broken';
  readonly file: string;
  /** The case's name, when the file got far enough to give one. */
  readonly name: string | undefined;
  readonly problems: readonly CaseProblem[];
}

export type LoadedCase = ReadyCase | BrokenCase;

const dotted = (path: readonly PropertyKey[]): string => (path.length === 0 ? '(root)' : path.map(String).join('.'));

/** The reason a file could not be read, without the stack or the file's contents. */
function readFailure(error: unknown): string {
  const code = (error as { code?: unknown } | null)?.code;
  return typeof code === 'string' ? `cannot be read (${code})` : 'cannot be read';
}

function schemaProblems(issues: readonly z.core.$ZodIssue[], value: unknown): { path: PropertyKey[]; message: string }[] {
  return issues.flatMap((issue) => {
    const path = issue.path.map((step) => (typeof step === 'symbol' ? String(step) : step));
    if (issue.code === 'unrecognized_keys') {
      return issue.keys.map((key) => {
        const guess = nearest(key, allowedKeys(path.filter((step) => typeof step === 'string')));
        return {
          path: [...path, key],
          message: `unknown key '${key}'${guess === undefined ? '' : `; did you mean '${guess}'?`}`,
        };
      });
    }
    let held: unknown = value;
    for (const step of path) {
      held = held !== null && typeof held === 'object' ? (held as Record<PropertyKey, unknown>)[step] : undefined;
    }
    if (held === undefined) {
      return [{ path, message: 'is missing' }];
    }
    if (issue.code === 'invalid_value' && path.at(-1) === 'indicator') {
      return [{ path, message: 'must be one of info, warning, critical' }];
    }
    // zod's own messages name the expected type or bound, never the value found.
    return [{ path, message: issue.message }];
  });
}

/** Rule ids in the case that the service does not have, and contradictions between lists. */
function expectationProblems(policyCase: PolicyCase): { path: PropertyKey[]; message: string }[] {
  const problems: { path: PropertyKey[]; message: string }[] = [];
  const known = [...RULE_TITLES.keys()];
  const checkId = (id: string, path: PropertyKey[]): void => {
    if (RULE_TITLES.has(id)) return;
    const retired = RETIRED_RULE_IDS[id];
    if (retired !== undefined) {
      problems.push({ path, message: `rule id '${id}' is retired; its advice now comes from '${retired.replacedBy}'` });
      return;
    }
    const guess = nearest(id, known);
    problems.push({ path, message: `no rule has the id '${id}'${guess === undefined ? '' : `; did you mean '${guess}'?`}` });
  };
  const seen = new Set<string>();
  policyCase.expect.cards.forEach((card, index) => {
    checkId(card.rule, ['expect', 'cards', index, 'rule']);
    if (seen.has(card.rule)) {
      problems.push({ path: ['expect', 'cards', index, 'rule'], message: `rule '${card.rule}' is listed twice` });
    }
    seen.add(card.rule);
  });
  policyCase.expect.absent.forEach((id, index) => {
    checkId(id, ['expect', 'absent', index]);
    if (seen.has(id)) {
      problems.push({ path: ['expect', 'absent', index], message: `rule '${id}' is both expected and forbidden` });
    }
  });
  const { cards, absent, advisedTarget, only } = policyCase.expect;
  if (cards.length === 0 && absent.length === 0 && advisedTarget === undefined && !only) {
    problems.push({
      path: ['expect'],
      message: 'expects nothing, so it could never fail: list cards, absent rules, an advisedTarget, or only: true',
    });
  }
  return problems;
}

/** A line and column from a JSON.parse message's character position, when it gives one. */
function jsonErrorPosition(text: string, error: unknown): string {
  const offset = error instanceof SyntaxError ? /position (\d+)/.exec(error.message)?.[1] : undefined;
  if (offset === undefined) return '';
  const before = text.slice(0, Number(offset)).split('\n');
  return ` at line ${before.length}, column ${(before.at(-1)?.length ?? 0) + 1}`;
}

type RequestRead = { readonly kind: 'ok'; readonly body: unknown } | { readonly kind: 'bad'; readonly message: string };

function readRequest(caseFile: string, relative: string, readFile: (path: string) => string): RequestRead {
  const file = resolve(dirname(caseFile), relative);
  let text: string;
  try {
    text = readFile(file);
  } catch (error) {
    return { kind: 'bad', message: `the request file ${relative} ${readFailure(error)}` };
  }
  try {
    return { kind: 'ok', body: JSON.parse(text) };
  } catch (error) {
    // Never the parser's message: from Node 22 on it quotes the text around the fault.
    return { kind: 'bad', message: `the request file ${relative} is not valid JSON${jsonErrorPosition(text, error)}` };
  }
}

const numericSteps = (path: string): PropertyKey[] =>
  path === '(root)' ? [] : path.split('.').map((step) => (/^\d+$/.test(step) ? Number(step) : step));

/**
 * Reads one case file and everything it points to. Never throws for a bad file: the problems come
 * back with their line and column, and the case is reported as failing.
 */
export function loadPolicyCase(file: string, readFile: (path: string) => string): LoadedCase {
  let text: string;
  try {
    text = readFile(file);
  } catch (error) {
    return { kind: 'broken', file, name: undefined, problems: [{ path: '(file)', message: readFailure(error), line: 1, column: 1 }] };
  }
  const doc = locateDocument(text);
  const at = (path: readonly PropertyKey[], message: string): CaseProblem => {
    const position: TextPosition = doc.locate(path);
    return { path: dotted(path), message, line: position.line, column: position.column };
  };
  if (doc.syntaxErrors.length > 0 || doc.value === undefined) {
    // yaml puts the source it stumbled on after a colon ("Unresolved alias (...): name"): drop it.
    const problems = doc.syntaxErrors.map((e) => ({
      path: '(file)',
      message: `YAML syntax: ${(e.message.split(':')[0] ?? '').trim() || 'unreadable'}`,
      ...e.position,
    }));
    return { kind: 'broken', file, name: undefined, problems: problems.length > 0 ? problems : [at([], 'is empty')] };
  }
  const value: unknown = doc.value;
  const rawName = typeof value === 'object' && value !== null ? (value as Record<string, unknown>)['name'] : undefined;
  const name = typeof rawName === 'string' && rawName.trim() !== '' ? rawName.trim() : undefined;
  const broken = (problems: readonly CaseProblem[]): BrokenCase => ({ kind: 'broken', file, name, problems });

  const parsed = PolicyCaseSchema.safeParse(doc.value);
  if (!parsed.success) {
    return broken(schemaProblems(parsed.error.issues, doc.value).map((p) => at(p.path, p.message)));
  }
  const policyCase = parsed.data;
  const expectation = expectationProblems(policyCase);
  if (expectation.length > 0) {
    return broken(expectation.map((p) => at(p.path, p.message)));
  }

  let body: unknown;
  if (typeof policyCase.request === 'string') {
    const read = readRequest(file, policyCase.request, readFile);
    if (read.kind === 'bad') {
      return broken([at(['request'], read.message)]);
    }
    body = read.body;
  } else {
    body = policyCase.request;
  }
  // Inline problems point into the request in this file; a request file's, at the `request` key.
  const where = (issuePath: string): readonly PropertyKey[] =>
    typeof policyCase.request === 'string' ? ['request'] : ['request', ...numericSteps(issuePath)];
  const inRequest = (issuePath: string): string => (typeof policyCase.request === 'string' ? `${issuePath}: ` : '');

  const breach = findJsonLimitBreach(body);
  if (breach !== undefined) {
    return broken([at(['request'], `the request's ${describeBreachPath(breach.path)} ${describeBreach(breach.kind)}`)]);
  }
  const hook = typeof body === 'object' && body !== null ? (body as { hook?: unknown }).hook : undefined;
  const serviceId = CDS_SERVICES.find((service) => service.hook === hook)?.id;
  if (serviceId === undefined) {
    const hooks = CDS_SERVICES.map((service) => service.hook).join(', ');
    return broken([at(where('hook'), `the request's hook is not one this service answers (${hooks})`)]);
  }
  const request = parseHookRequest(serviceId, body);
  if (request.kind === 'invalid') {
    return broken(request.issues.map((issue) => at(where(issue.path), `${inRequest(issue.path)}${issue.message}`)));
  }
  if (request.kind !== 'ok') {
    return broken([at(where('hook'), 'the request cannot be answered by this service')]);
  }

  const { evaluateAt } = policyCase;
  let now: Date;
  if (typeof evaluateAt === 'string' && evaluateAt !== 'request') {
    now = new Date(evaluateAt);
  } else {
    const moment = requestMoment(body);
    if (moment === undefined) {
      return broken([
        at(['evaluateAt'], 'the request names no moment (no authoredOn on its draft orders): give evaluateAt as a date-time'),
      ]);
    }
    now = typeof evaluateAt === 'string' ? moment : new Date(moment.getTime() + evaluateAt.minutesAfterRequest * 60_000);
  }
  return { kind: 'ready', file, policyCase, serviceId, body, now };
}

/** One card of a run, as a case compares it. */
export interface ObservedCard {
  readonly ruleId: string;
  readonly indicator: Indicator;
  readonly suggestion: boolean;
  /** The target range the card advises the order should carry (`88–92 %`), when it advises one. */
  readonly advisedRange: string | undefined;
}

/** The rule's title and id, as a clinician and an integrator each look for it. */
export function ruleWords(ruleId: string): string {
  const title = RULE_TITLES.get(ruleId);
  return title === undefined ? ruleId : `"${title}" (${ruleId})`;
}

const article = (indicator: Indicator): string => (indicator === 'info' ? 'an' : 'a');

/**
 * What differs between a case and the cards a run gave, one sentence each in clinical words; empty
 * when the case passes.
 */
export function compareCards(expected: PolicyCase['expect'], cards: readonly ObservedCard[]): string[] {
  const differences: string[] = [];
  for (const want of expected.cards) {
    const shown = cards.filter((card) => card.ruleId === want.rule);
    if (shown.length === 0) {
      differences.push(`expected ${article(want.indicator)} ${want.indicator} card ${ruleWords(want.rule)}; it was not shown`);
      continue;
    }
    const withIndicator = shown.filter((card) => card.indicator === want.indicator);
    if (withIndicator.length === 0) {
      const got = [...new Set(shown.map((card) => card.indicator))].join(' and ');
      differences.push(`${ruleWords(want.rule)} was shown as ${got}; expected ${want.indicator}`);
      continue;
    }
    if (want.suggestion !== undefined && !withIndicator.some((card) => card.suggestion === want.suggestion)) {
      differences.push(
        want.suggestion
          ? `${ruleWords(want.rule)} offered no one-click change; the case expects one`
          : `${ruleWords(want.rule)} offered a one-click change; the case expects none`,
      );
    }
  }
  for (const id of expected.absent) {
    const shown = cards.filter((card) => card.ruleId === id);
    if (shown.length > 0) {
      const indicators = [...new Set(shown.map((card) => card.indicator))].join(' and ');
      differences.push(`${ruleWords(id)} was shown (${indicators}); the case says it must not be`);
    }
  }
  if (expected.only) {
    const listed = new Set(expected.cards.map((card) => card.rule));
    for (const card of cards.filter((c) => !listed.has(c.ruleId))) {
      differences.push(
        `an unexpected ${card.indicator} card ${ruleWords(card.ruleId)} was shown; the case lists every card it expects (only: true)`,
      );
    }
  }
  if (expected.advisedTarget !== undefined) {
    const advised = [...new Set(cards.flatMap((card) => (card.advisedRange === undefined ? [] : [card.advisedRange])))];
    if (expected.advisedTarget === 'none') {
      if (advised.length > 0) {
        differences.push(`the cards advise a target of ${advised.join(' and ')}; the case expects no target advice`);
      }
    } else {
      const want = formatRange(expected.advisedTarget);
      if (advised.length === 0) {
        differences.push(`no card advises a target range; the case expects ${want}`);
      } else if (advised.length > 1 || advised[0] !== want) {
        differences.push(`the cards advise a target of ${advised.join(' and ')}; the case expects ${want}`);
      }
    }
  }
  return differences;
}
