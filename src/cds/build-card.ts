import type { Assessment } from '../core/assessment/types.js';
import { formatFlow, formatRange } from '../core/assessment/format.js';
import type { Policy } from '../core/policy.js';
import type { Facts, Finding, OrderChange } from '../core/types.js';
import { CANONICAL_BASE } from '../fhir/codes.js';
import { planOrderChange } from '../fhir/apply-change.js';
import type { FhirResource } from '../fhir/gathered-data.js';
import { compactDetail } from './card-detail.js';
import { deviceLabel, findingSourceKeys } from './card-workings.js';
import { escapeMarkdown, renderTemplate, type CardTemplate } from './card-templates.js';
import { citedGuidelineKey, offeredOverrideReasons, policyCardValues } from './policy-card-text.js';
import type { Card, Suggestion } from './schemas.js';
import { cardUuid, suggestionUuid } from './stable-uuid.js';

/**
 * System of the override-reason codes in `cards/<rule-id>.yaml` and the policy's `overrideReasons`
 * (CDS Hooks 2.0 §Card, overrideReasons).
 */
export const OVERRIDE_REASON_SYSTEM = `${CANONICAL_BASE}/CodeSystem/override-reason`;
/** System of `source.topic`: the rule id that produced the card. */
export const RULE_TOPIC_SYSTEM = `${CANONICAL_BASE}/CodeSystem/rule`;
/** CDS Hooks 2.0 §Card: summary "fewer than 140 characters". */
export const SUMMARY_MAX_LENGTH = 139;
/** Hex characters of the policy file's sha256 shown on a card: enough to tell two files apart at a glance. */
export const SHORT_HASH_LENGTH = 12;

export interface CardBuildContext {
  readonly template: CardTemplate;
  readonly policy: Policy;
  /**
   * sha256 (hex) of the policy file's bytes, computed where the file was read; its first
   * {@link SHORT_HASH_LENGTH} characters go on the source label, so an edited file that kept its id and
   * version is still told apart.
   */
  readonly policyContentHash?: string;
  readonly hookInstance: string;
  /** The draft resource `finding.orderReference` points at, when there is one. */
  readonly draftResource: FhirResource | undefined;
  readonly facts: Facts;
  readonly assessment: Assessment;
  readonly now: Date;
  /** 0 for the first finding of a rule about an order in this call, 1 for the next, … */
  readonly occurrence?: number;
  /**
   * Changes offered by earlier cards of this response for the same order. An `update` replaces the
   * whole resource (CDS Hooks 2.0 §Action), so each later suggestion carries them too: accepting two
   * suggestions never undoes the first.
   */
  readonly earlierChanges?: readonly OrderChange[];
  /** What the action's description calls the order: `draft order` (default) or `active order` (patient-view). */
  readonly orderWord?: 'draft order' | 'active order';
}

/** A flow change and a device change both set the flow; the later one wins. */
function overlaps(a: OrderChange, b: OrderChange): boolean {
  const touchesFlow = (c: OrderChange): boolean => c.kind === 'set-flow' || c.kind === 'set-device';
  return a.kind === b.kind || (touchesFlow(a) && touchesFlow(b));
}

/**
 * `source.label` (CDS Hooks 2.0 §Source: "a short, human-readable label"): the policy by title, id,
 * version and short content hash, then the guideline it rests on; when the policy has the rule's card
 * cite another guideline (`clinicalBasis.ruleCitations`), that one too: `· TSANZ 2015; cites BTS 2017`.
 */
export function sourceLabel(policy: Policy, policyContentHash: string | undefined, ruleId?: string): string {
  const hash = policyContentHash === undefined ? '' : ` #${policyContentHash.slice(0, SHORT_HASH_LENGTH)}`;
  const basis = policy.references[policy.basisKey];
  const citedKey = ruleId === undefined ? policy.basisKey : citedGuidelineKey(policy, ruleId);
  const cites = citedKey === policy.basisKey ? '' : `; cites ${policy.references[citedKey]?.label ?? citedKey}`;
  return `${policy.title} (${policy.id} v${policy.version}${hash}) · ${basis?.label ?? policy.basisKey}${cites}`;
}

export interface CardReport {
  readonly card: Card;
  /** Programmer or configuration slips found while building (no patient data): for the logs. */
  readonly problems: readonly string[];
}

/**
 * Shortens a summary to under 140 characters at a word boundary, ending with an ellipsis; a
 * clipped sentence is better than a card the client rejects.
 */
export function truncateSummary(summary: string, maxLength = SUMMARY_MAX_LENGTH): string {
  if (summary.length <= maxLength) {
    return summary;
  }
  const room = summary.slice(0, maxLength - 1);
  const space = room.lastIndexOf(' ');
  const cut = space > maxLength / 2 ? room.slice(0, space) : room;
  return `${cut.replace(/[\s,;:.–-]+$/, '')}…`;
}

/** The change in plain words, used as the action's description. */
export function describeChange(change: OrderChange): string {
  switch (change.kind) {
    case 'set-target':
      return `Set the target SpO2 range to ${formatRange(change.range)}`;
    case 'set-flow':
      return `Set the oxygen flow to ${formatFlow(change.flowLPerMin)}`;
    case 'set-device': {
      const setting = change.setFio2Fraction === undefined ? '' : `, FiO2 ${change.setFio2Fraction.toFixed(2)}`;
      return `Change the device: ${deviceLabel(change.device)} at ${formatFlow(change.flowLPerMin)}${setting}`;
    }
    case 'stop-oxygen':
      return 'Stop the oxygen (end the order)';
  }
}

/** The finding's values and the policy's (the guideline cited): the policy's names are its own (policy-card-text.ts). */
function cardValues(finding: Finding, policy: Policy): Record<string, string> {
  return { ...finding.values, ...policyCardValues(policy, finding.ruleId) };
}

function lowerFirst(text: string): string {
  return text.charAt(0).toLowerCase() + text.slice(1);
}

interface SuggestionOutcome {
  readonly suggestion: Suggestion | undefined;
  /** Why a change the finding offers is not a one-click suggestion, for the card's detail. */
  readonly withheldReason: string | undefined;
}

const NONE: SuggestionOutcome = { suggestion: undefined, withheldReason: undefined };

/** "(the order text also gives 4 L/min; left as written and marked for review)". */
function leftAsWrittenNote(values: readonly string[]): string {
  const quoted = values.map((v) => `"${v}"`).join(', ');
  return ` (the order text also gives ${quoted}: left as written and marked for review)`;
}

function buildSuggestion(finding: Finding, ctx: CardBuildContext, uuid: string, problems: string[]): SuggestionOutcome {
  const change = finding.change;
  if (change === undefined) {
    return NONE;
  }
  if (ctx.draftResource === undefined) {
    problems.push(`${finding.ruleId}: change offered but its order is not in draftOrders; suggestion left out`);
    return NONE;
  }
  // Earlier changes the words cannot take were never offered, so they are not carried either.
  let resource: FhirResource = ctx.draftResource;
  const carried: OrderChange[] = [];
  for (const earlier of (ctx.earlierChanges ?? []).filter((e) => !overlaps(e, change))) {
    const plan = planOrderChange(resource, earlier);
    if (plan.kind === 'cannot-copy') {
      problems.push(`${finding.ruleId}: the draft order could not be copied whole; suggestion left out`);
      return NONE;
    }
    if (plan.kind === 'changed') {
      resource = plan.resource;
      carried.push(earlier);
    }
  }
  const plan = planOrderChange(resource, change);
  if (plan.kind === 'cannot-copy') {
    problems.push(`${finding.ruleId}: the draft order could not be copied whole; suggestion left out`);
    return NONE;
  }
  if (plan.kind === 'withheld') {
    return { suggestion: undefined, withheldReason: plan.reason };
  }
  const changed = plan.resource;
  if (changed.resourceType !== ctx.draftResource.resourceType || changed.id !== ctx.draftResource.id) {
    problems.push(`${finding.ruleId}: the changed resource lost its type or id; suggestion left out`);
    return NONE;
  }
  const changes = [...carried, change];
  let label = describeChange(change);
  if (ctx.template.suggestionLabel === undefined) {
    problems.push(`${finding.ruleId}: template has no suggestionLabel`);
  } else {
    const rendered = renderTemplate(ctx.template.suggestionLabel, cardValues(finding, ctx.policy), 'plain');
    problems.push(...rendered.missing.map((name) => `${finding.ruleId}: suggestionLabel placeholder '${name}' has no value`));
    label = rendered.text;
  }
  if (plan.leftAsWritten.length > 0) {
    label = `${label}${leftAsWrittenNote(plan.leftAsWritten)}`;
  }
  if (carried.length > 0) {
    label = `${label} (keeps: ${carried.map((c) => lowerFirst(describeChange(c))).join('; ')})`;
  }
  return {
    withheldReason: undefined,
    suggestion: {
      label,
      uuid: suggestionUuid(uuid, 0),
      isRecommended: true,
      actions: [
        { type: 'update', description: `${changes.map(describeChange).join('; ')} on the ${ctx.orderWord ?? 'draft order'}.`, resource: changed },
      ],
    },
  };
}

/**
 * Builds the card for one finding (CDS Hooks 2.0 §Card Attributes), with any problems found.
 * Pure. Optional fields are omitted rather than sent empty (§Use of JSON).
 */
export function buildCardReport(finding: Finding, ctx: CardBuildContext): CardReport {
  const problems: string[] = [];
  const uuid = cardUuid(ctx.hookInstance, finding.ruleId, finding.orderReference, ctx.occurrence ?? 0);

  const values = cardValues(finding, ctx.policy);
  const summary = renderTemplate(ctx.template.summary, values, 'plain');
  const detail = renderTemplate(ctx.template.detail, values, 'markdown');
  for (const [part, rendered] of [['summary', summary], ['detail', detail]] as const) {
    problems.push(...rendered.missing.map((name) => `${finding.ruleId}: ${part} placeholder '${name}' has no value`));
  }

  const unknownKeys = findingSourceKeys(finding).filter((key) => ctx.policy.references[key] === undefined);
  problems.push(...unknownKeys.map((key) => `${finding.ruleId}: source key '${key}' is not in the policy references`));

  // The link of the guideline the card cites, else of the primary.
  const url = ctx.policy.references[citedGuidelineKey(ctx.policy, finding.ruleId)]?.url ?? ctx.policy.references[ctx.policy.basisKey]?.url;
  const source: Card['source'] = {
    label: sourceLabel(ctx.policy, ctx.policyContentHash, finding.ruleId),
    ...(url === undefined ? {} : { url }),
    topic: { system: RULE_TOPIC_SYSTEM, code: finding.ruleId },
  };

  const { suggestion, withheldReason } = buildSuggestion(finding, ctx, uuid, problems);
  const withheld = withheldReason === undefined ? '' : `\n\nNo one-click change is offered: ${escapeMarkdown(withheldReason)}`;
  const card: Card = {
    uuid,
    summary: truncateSummary(summary.text.trim()),
    detail: compactDetail({
      ruleText: `${detail.text.trim()}${withheld}`,
      basedOn: ctx.template.basedOn ?? [],
      finding,
      facts: ctx.facts,
      assessment: ctx.assessment,
      policy: ctx.policy,
      now: ctx.now,
    }),
    indicator: finding.indicator,
    source,
    ...(suggestion === undefined ? {} : { suggestions: [suggestion], selectionBehavior: 'at-most-one' as const }),
    overrideReasons: offeredOverrideReasons(ctx.policy, finding.ruleId, ctx.template).map((reason) => ({
      code: reason.code,
      system: OVERRIDE_REASON_SYSTEM,
      display: reason.display,
    })),
  };
  return { card, problems };
}

/** Builds the card for one finding; see {@link buildCardReport} for the problems found on the way. */
export function buildCard(finding: Finding, ctx: CardBuildContext): Card {
  return buildCardReport(finding, ctx).card;
}
