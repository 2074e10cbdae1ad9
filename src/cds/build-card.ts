import type { Assessment } from '../core/assessment/types.js';
import { formatFlow, formatRange } from '../core/assessment/format.js';
import type { Policy } from '../core/policy.js';
import type { Facts, Finding, OrderChange } from '../core/types.js';
import { CANONICAL_BASE } from '../fhir/codes.js';
import { planOrderChange, type ChangePlan } from '../fhir/apply-change.js';
import type { FhirResource } from '../fhir/gathered-data.js';
import { TextReadings } from '../fhir/text-readings.js';
import { compactDetail, type CompactDetailRenderer } from './card-detail.js';
import { deviceLabel, findingSourceKeys } from './card-workings.js';
import {
  bindFixedValues,
  compiledCardTemplate,
  escapeMarkdown,
  renderCompiled,
  type BasedOnKind,
  type CardTemplate,
  type CompiledText,
  type Rendered,
} from './card-templates.js';
import { oncePerPolicyAndKey } from './once-per-policy.js';
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
  /**
   * The call's detail renderer (`prepareCompactDetail` over the same facts, policy and clock), so the
   * sections its cards share are built once; without it, the detail is built for this card alone.
   */
  readonly compactDetail?: CompactDetailRenderer;
  /**
   * The call's plans (one {@link CallPlans} for all its cards), so the changes a later card carries are
   * planned once per call; without it, this card plans its own.
   */
  readonly plans?: CallPlans;
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

/**
 * The card's `source`, the same object for every card of a rule under one policy file: keyed by rule
 * id and content hash (a rule id holds no line break). Frozen, as cards of many calls share it.
 */
function cardSource(policy: Policy, policyContentHash: string | undefined, ruleId: string): Card['source'] {
  return sourceOnce(policy, policyContentHash === undefined ? ruleId : `${ruleId}\n${policyContentHash}`);
}

const sourceOnce = oncePerPolicyAndKey((policy, key): Card['source'] => {
  const [ruleId = '', policyContentHash] = key.split('\n');
  // The link of the guideline the card cites, else of the primary.
  const url = policy.references[citedGuidelineKey(policy, ruleId)]?.url ?? policy.references[policy.basisKey]?.url;
  return Object.freeze({
    label: sourceLabel(policy, policyContentHash, ruleId),
    ...(url === undefined ? {} : { url }),
    topic: Object.freeze({ system: RULE_TOPIC_SYSTEM, code: ruleId }),
  });
});

type CardOverrideReasons = NonNullable<Card['overrideReasons']>;

/** Per template (a local wording file may give a rule other reasons), per policy and rule id. */
const OVERRIDE_REASONS = new WeakMap<CardTemplate, (policy: Policy, ruleId: string) => CardOverrideReasons>();

/** The card's `overrideReasons`, built once per template, policy and rule, and frozen as cards share them. */
function cardOverrideReasons(policy: Policy, ruleId: string, template: CardTemplate): CardOverrideReasons {
  let forTemplate = OVERRIDE_REASONS.get(template);
  if (forTemplate === undefined) {
    forTemplate = oncePerPolicyAndKey(
      (p, id) =>
        // The card type is zod's, which has no readonly arrays; frozen all the same, so a change fails loudly.
        Object.freeze(
          offeredOverrideReasons(p, id, template).map((reason) =>
            Object.freeze({ code: reason.code, system: OVERRIDE_REASON_SYSTEM, display: reason.display }),
          ),
        ) as CardOverrideReasons,
    );
    OVERRIDE_REASONS.set(template, forTemplate);
  }
  return forTemplate(policy, ruleId);
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

/**
 * The values a card's texts are filled from: the finding's, and the policy's (the guideline cited),
 * whose names are its own (policy-card-text.ts) and win a clash. Passed to the renderer as two records
 * rather than merged into a new one per card.
 */
interface CardValues {
  readonly finding: Readonly<Record<string, string>>;
  readonly policy: Readonly<Record<string, string>>;
}

function renderWithValues(compiled: CompiledText, values: CardValues, mode: 'markdown' | 'plain'): Rendered {
  return renderCompiled(compiled, values.finding, mode, values.policy);
}

/**
 * A card text ready for a finding's values: the policy's values (the same on every card of the rule)
 * filled in once, or, when one is blank and must be reported missing in its place, given at each render.
 */
interface CardText {
  readonly compiled: CompiledText;
  readonly policyValues: Readonly<Record<string, string>> | undefined;
}

interface CardTexts {
  /** The policy's values for the rule (policy-card-text.ts), for the texts rendered per card. */
  readonly policyValues: Readonly<Record<string, string>>;
  readonly summary: CardText;
  readonly detail: CardText;
}

function cardText(compiled: CompiledText, policyValues: Readonly<Record<string, string>>, mode: 'markdown' | 'plain'): CardText {
  const bound = bindFixedValues(compiled, policyValues, mode);
  return bound === undefined ? { compiled, policyValues } : { compiled: bound, policyValues: undefined };
}

/** Per template (a local wording file may give a rule its own), per policy and rule id. */
const CARD_TEXTS = new WeakMap<CardTemplate, (policy: Policy, ruleId: string) => CardTexts>();

/** The summary and detail of a rule's cards under one policy, its values filled in once. */
function cardTexts(template: CardTemplate, policy: Policy, ruleId: string): CardTexts {
  let forTemplate = CARD_TEXTS.get(template);
  if (forTemplate === undefined) {
    const compiled = compiledCardTemplate(template);
    forTemplate = oncePerPolicyAndKey((p, id): CardTexts => {
      const policyValues = policyCardValues(p, id);
      return {
        policyValues,
        summary: cardText(compiled.summary, policyValues, 'plain'),
        detail: cardText(compiled.detail, policyValues, 'markdown'),
      };
    });
    CARD_TEXTS.set(template, forTemplate);
  }
  return forTemplate(policy, ruleId);
}

function renderCardText(text: CardText, finding: Finding, mode: 'markdown' | 'plain'): Rendered {
  return renderCompiled(text.compiled, finding.values, mode, text.policyValues);
}

/** "ruleId: summary placeholder 'name' has no value" for each name a render found no value for. */
function reportMissing(problems: string[], ruleId: string, part: string, rendered: Rendered): void {
  for (const name of rendered.missing) {
    problems.push(`${ruleId}: ${part} placeholder '${name}' has no value`);
  }
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

/**
 * The plans of one call's suggestions, by resource and change. A later card about an order carries the
 * changes of the cards before it, each planned on the resource the one before made (buildSuggestion),
 * so the first card's plan is the second card's first step: each step is planned once per call, not
 * once per card. A plan is a new copy that nothing changes afterwards. Made per call (evaluateHook), so
 * no plan outlives its call.
 */
export class CallPlans {
  private readonly byResource = new Map<FhirResource, Map<OrderChange, ChangePlan>>();
  /** The words the plans read, shared: a later plan reads the texts an earlier one wrote. */
  private readonly readings = new TextReadings();

  plan(resource: FhirResource, change: OrderChange): ChangePlan {
    let byChange = this.byResource.get(resource);
    if (byChange === undefined) {
      byChange = new Map();
      this.byResource.set(resource, byChange);
    }
    let plan = byChange.get(change);
    if (plan === undefined) {
      plan = planOrderChange(resource, change, { readings: this.readings });
      byChange.set(change, plan);
    }
    return plan;
  }
}

function buildSuggestion(
  finding: Finding,
  ctx: CardBuildContext,
  values: CardValues,
  uuid: string,
  problems: string[],
): SuggestionOutcome {
  const change = finding.change;
  if (change === undefined) {
    return NONE;
  }
  if (ctx.draftResource === undefined) {
    problems.push(`${finding.ruleId}: change offered but its order is not in draftOrders; suggestion left out`);
    return NONE;
  }
  const plans = ctx.plans ?? new CallPlans();
  // Earlier changes the words cannot take were never offered, so they are not carried either.
  let resource: FhirResource = ctx.draftResource;
  const carried: OrderChange[] = [];
  for (const earlier of ctx.earlierChanges ?? []) {
    if (overlaps(earlier, change)) {
      continue;
    }
    const plan = plans.plan(resource, earlier);
    if (plan.kind === 'cannot-copy') {
      problems.push(`${finding.ruleId}: the draft order could not be copied whole; suggestion left out`);
      return NONE;
    }
    if (plan.kind === 'changed') {
      resource = plan.resource;
      carried.push(earlier);
    }
  }
  const plan = plans.plan(resource, change);
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
  // Each change is put in words once, for the label and the action's description alike.
  const described = describeChange(change);
  const carriedDescribed = carried.map(describeChange);
  let label = described;
  const compiledLabel = compiledCardTemplate(ctx.template).suggestionLabel;
  if (compiledLabel === undefined) {
    problems.push(`${finding.ruleId}: template has no suggestionLabel`);
  } else {
    const rendered = renderWithValues(compiledLabel, values, 'plain');
    reportMissing(problems, finding.ruleId, 'suggestionLabel', rendered);
    label = rendered.text;
  }
  if (plan.leftAsWritten.length > 0) {
    label = `${label}${leftAsWrittenNote(plan.leftAsWritten)}`;
  }
  if (carried.length > 0) {
    label = `${label} (keeps: ${carriedDescribed.map(lowerFirst).join('; ')})`;
  }
  return {
    withheldReason: undefined,
    suggestion: {
      label,
      uuid: suggestionUuid(uuid, 0),
      isRecommended: true,
      actions: [
        { type: 'update', description: `${[...carriedDescribed, described].join('; ')} on the ${ctx.orderWord ?? 'draft order'}.`, resource: changed },
      ],
    },
  };
}

/** The `basedOn` of a template that lists none: one array, so the call's detail renderer sees one list. */
const NO_INPUTS: readonly BasedOnKind[] = Object.freeze([]);

/**
 * Builds the card for one finding (CDS Hooks 2.0 §Card Attributes), with any problems found.
 * Pure. Optional fields are omitted rather than sent empty (§Use of JSON).
 */
export function buildCardReport(finding: Finding, ctx: CardBuildContext): CardReport {
  const problems: string[] = [];
  const uuid = cardUuid(ctx.hookInstance, finding.ruleId, finding.orderReference, ctx.occurrence ?? 0);

  const texts = cardTexts(ctx.template, ctx.policy, finding.ruleId);
  const values: CardValues = { finding: finding.values, policy: texts.policyValues };
  const summary = renderCardText(texts.summary, finding, 'plain');
  const detail = renderCardText(texts.detail, finding, 'markdown');
  reportMissing(problems, finding.ruleId, 'summary', summary);
  reportMissing(problems, finding.ruleId, 'detail', detail);

  for (const key of findingSourceKeys(finding)) {
    if (ctx.policy.references[key] === undefined) {
      problems.push(`${finding.ruleId}: source key '${key}' is not in the policy references`);
    }
  }

  const { suggestion, withheldReason } = buildSuggestion(finding, ctx, values, uuid, problems);
  const renderDetail =
    ctx.compactDetail ?? ((input) => compactDetail({ ...input, facts: ctx.facts, policy: ctx.policy, now: ctx.now }));
  const withheld = withheldReason === undefined ? '' : `\n\nNo one-click change is offered: ${escapeMarkdown(withheldReason)}`;
  const cardSummary = truncateSummary(summary.text.trim());
  const cardDetail = renderDetail({
    ruleText: `${detail.text.trim()}${withheld}`,
    basedOn: ctx.template.basedOn ?? NO_INPUTS,
    finding,
    assessment: ctx.assessment,
  });
  const source = cardSource(ctx.policy, ctx.policyContentHash, finding.ruleId);
  const overrideReasons = cardOverrideReasons(ctx.policy, finding.ruleId, ctx.template);
  // Two literal shapes, one with a suggestion and one without, in the order the card is sent in, rather
  // than one literal spreading a short-lived object into it.
  const card: Card =
    suggestion === undefined
      ? { uuid, summary: cardSummary, detail: cardDetail, indicator: finding.indicator, source, overrideReasons }
      : {
          uuid,
          summary: cardSummary,
          detail: cardDetail,
          indicator: finding.indicator,
          source,
          suggestions: [suggestion],
          selectionBehavior: 'at-most-one',
          overrideReasons,
        };
  return { card, problems };
}

/** Builds the card for one finding; see {@link buildCardReport} for the problems found on the way. */
export function buildCard(finding: Finding, ctx: CardBuildContext): Card {
  return buildCardReport(finding, ctx).card;
}
