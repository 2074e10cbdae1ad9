import { evaluateOrder } from '../core/engine.js';
import type { Assessment } from '../core/assessment/types.js';
import type { Policy } from '../core/policy.js';
import type { HookName, OrderChange } from '../core/types.js';
import { RULES } from '../core/rules/index.js';
import { extractFacts } from '../fhir/extract-facts.js';
import { findDraftResource } from '../fhir/find-order-resource.js';
import type { GatheredData } from '../fhir/gathered-data.js';
import type { AdvisorySeries, StoredIndicator } from '../store/store.js';
import { advisorySeries } from './advisory-series.js';
import { buildCardReport, CallPlans } from './build-card.js';
import { prepareCompactDetail } from './card-detail.js';
import type { CardTemplates } from './card-templates.js';
import { cardClock } from './card-time.js';
import { prepareWorkings } from './card-workings.js';
import {
  OrderSelectContextSchema,
  OrderSignContextSchema,
  PatientViewContextSchema,
  type CdsRequest,
  type OrderSelectContext,
  type OrderSignContext,
  type CdsResponse,
} from './schemas.js';
import { isValidatedContext } from './parse-hook-request.js';
import { findService } from './services.js';

/**
 * The pure path from a validated hook call to its response, shared by the http layer and the CLI:
 * read the facts, run the rules, build one card per finding in the engine's order. The caller
 * validates first (`parseHookRequest`) and gathers the prefetch or FHIR data; anything left wrong
 * here is a programmer error and throws.
 */
export interface HookEvaluation {
  readonly response: CdsResponse;
  /** Rule ids that produced cards, in card order, each once: for the request's log line. */
  readonly ruleIds: readonly string[];
  readonly policyId: string;
  readonly policyVersion: string;
  /** Template or policy slips found while building cards (no patient data): log them as warnings. */
  readonly problems: readonly string[];
  /**
   * The full workings of each card (inputs, calculations, set aside, sources, cautions) in card
   * order, when asked for with `workings: true`; the cards themselves carry only a compact detail.
   */
  readonly workings?: readonly CardWorkings[];
  /** What the audit trail records of each card, in card order (see audit-records.ts). */
  readonly audit: HookAudit;
}

/** The facts of one card the audit trail keeps: what was shown, why, and what its chart plots. */
export interface CardAudit {
  readonly cardUuid: string;
  readonly suggestionUuids: readonly string[];
  readonly ruleId: string;
  readonly ruleVersion: number;
  readonly indicator: StoredIndicator;
  readonly summary: string;
  readonly detail: string;
  /** The finding's values, as the card's template interpolated them. */
  readonly keyNumbers: Readonly<Record<string, string>>;
  readonly workings: string;
  readonly series: AdvisorySeries;
}

export interface HookAudit {
  /** The patient's ward or unit, when the encounter named one. */
  readonly unit: string | undefined;
  readonly cards: readonly CardAudit[];
}

export interface CardWorkings {
  readonly cardUuid: string;
  readonly ruleId: string;
  readonly markdown: string;
}

/**
 * The orders a hook call is about, as a Bundle, and the selections. order-sign and order-select carry
 * them in `context.draftOrders`; patient-view has none, so its orders on record stand in for them: the
 * rules' subject is the active oxygen order, and a suggestion's `update` carries that whole resource
 * revised (src/fhir/apply-change.ts). Exported for the bench, which times the facts phase alone.
 */
export function readOrderContext(
  hook: HookName,
  context: unknown,
  data: GatheredData,
): { readonly draftOrders: unknown; readonly selections: readonly string[] | undefined } {
  // A context parseHookRequest validated is not checked again; one built some other way is.
  const validated = isValidatedContext(context, hook);
  if (hook === 'patient-view') {
    if (!validated && !PatientViewContextSchema.safeParse(context).success) {
      throw new Error('evaluateHook: the request context was not validated (use parseHookRequest first)');
    }
    return { draftOrders: { resourceType: 'Bundle', entry: data.activeOrders.map((resource) => ({ resource })) }, selections: undefined };
  }
  const checked: OrderSignContext | OrderSelectContext | undefined = validated
    ? (context as OrderSignContext | OrderSelectContext)
    : checkOrderContext(hook, context);
  if (checked === undefined) {
    throw new Error('evaluateHook: the request context was not validated (use parseHookRequest first)');
  }
  const selections = 'selections' in checked ? (checked.selections as readonly string[]) : undefined;
  return { draftOrders: checked.draftOrders, selections };
}

function checkOrderContext(hook: 'order-sign' | 'order-select', context: unknown): OrderSignContext | OrderSelectContext | undefined {
  const parsed =
    hook === 'order-select' ? OrderSelectContextSchema.safeParse(context) : OrderSignContextSchema.safeParse(context);
  return parsed.success ? parsed.data : undefined;
}

export function evaluateHook(
  input: { readonly serviceId: string; readonly request: CdsRequest; readonly data: GatheredData },
  deps: {
    readonly policy: Policy;
    /** sha256 (hex) of the policy file's bytes, read where the file was loaded; shown on every card. */
    readonly policyContentHash?: string;
    readonly templates: CardTemplates;
    readonly now: Date;
    /** Also render each card's full workings (the CLI's `--workings`); off for the live service. */
    readonly workings?: boolean;
  },
): HookEvaluation {
  const service = findService(input.serviceId);
  if (service === undefined) {
    throw new Error(`evaluateHook: unknown service '${input.serviceId}' (answer 404 before calling)`);
  }
  const hook = service.hook;
  if (input.request.hook !== hook) {
    throw new Error(`evaluateHook: service '${service.id}' answers ${hook}, not the request's hook`);
  }
  const { draftOrders, selections } = readOrderContext(hook, input.request.context, input.data);

  const facts = extractFacts({ hook, draftOrders, selections, data: input.data }, deps.policy, deps.now);
  const evaluation = evaluateOrder(facts, deps.policy, { hook, now: deps.now });
  const { assessment, assessments, findings } = evaluation;
  // A draft may hold two subject orders; each card shows the inputs of its own order's assessment.
  const assessmentFor = (reference: string | undefined) =>
    assessments.find((candidate) => candidate.order !== undefined && candidate.order.reference === reference) ??
    assessment;

  const seen = new Map<string, number>();
  const offered = new Map<string, OrderChange[]>();
  const problems: string[] = [];
  const workings: CardWorkings[] = [];
  const audit: CardAudit[] = [];
  // What the cards of this call share is built once: its clock, each assessment's inputs and chart.
  const clock = cardClock(deps.now, deps.policy.site.timeZone);
  const renderWorkings = prepareWorkings(facts, deps.policy, deps.now, clock);
  const renderDetail = prepareCompactDetail(facts, deps.policy, clock);
  const plans = new CallPlans();
  // Several cards may be about one order: the draft bundle is searched once per order reference.
  const draftByReference = new Map<string, ReturnType<typeof findDraftResource>>();
  const draftResourceFor = (reference: string): ReturnType<typeof findDraftResource> => {
    if (!draftByReference.has(reference)) {
      draftByReference.set(reference, findDraftResource(draftOrders, reference));
    }
    return draftByReference.get(reference);
  };
  const seriesByAssessment = new Map<Assessment, AdvisorySeries>();
  const seriesFor = (cardAssessment: Assessment): AdvisorySeries => {
    let series = seriesByAssessment.get(cardAssessment);
    if (series === undefined) {
      series = advisorySeries(facts, cardAssessment, deps.now);
      seriesByAssessment.set(cardAssessment, series);
    }
    return series;
  };
  const cards = findings.map((finding) => {
    const template = deps.templates.get(finding.ruleId);
    if (template === undefined) {
      throw new Error(`evaluateHook: no card template for rule '${finding.ruleId}' (check missingTemplates at start-up)`);
    }
    const key = `${finding.ruleId}\n${finding.orderReference ?? ''}`;
    const occurrence = seen.get(key) ?? 0;
    seen.set(key, occurrence + 1);
    const cardAssessment = assessmentFor(finding.orderReference);
    const report = buildCardReport(finding, {
      template,
      policy: deps.policy,
      ...(deps.policyContentHash === undefined ? {} : { policyContentHash: deps.policyContentHash }),
      hookInstance: input.request.hookInstance,
      draftResource:
        finding.orderReference === undefined ? undefined : draftResourceFor(finding.orderReference),
      facts,
      assessment: cardAssessment,
      now: deps.now,
      occurrence,
      earlierChanges: finding.orderReference === undefined ? [] : (offered.get(finding.orderReference) ?? []),
      orderWord: hook === 'patient-view' ? 'active order' : 'draft order',
      compactDetail: renderDetail,
      plans,
    });
    if (finding.change !== undefined && finding.orderReference !== undefined && report.card.suggestions !== undefined) {
      offered.set(finding.orderReference, [...(offered.get(finding.orderReference) ?? []), finding.change]);
    }
    problems.push(...report.problems);
    const markdown = renderWorkings(finding, cardAssessment);
    if (deps.workings === true) {
      workings.push({ cardUuid: report.card.uuid ?? '', ruleId: finding.ruleId, markdown });
    }
    audit.push({
      cardUuid: report.card.uuid ?? '',
      suggestionUuids: (report.card.suggestions ?? []).flatMap((s) => (s.uuid === undefined ? [] : [s.uuid])),
      ruleId: finding.ruleId,
      ruleVersion: finding.ruleVersion,
      indicator: report.card.indicator,
      summary: report.card.summary,
      detail: report.card.detail ?? '',
      keyNumbers: finding.values,
      workings: markdown,
      series: seriesFor(cardAssessment),
    });
    return report.card;
  });

  return {
    response: { cards },
    ruleIds: [...new Set(findings.map((finding) => finding.ruleId))],
    policyId: deps.policy.id,
    policyVersion: deps.policy.version,
    problems,
    ...(deps.workings === true ? { workings } : {}),
    audit: { unit: facts.encounterUnit, cards: audit },
  };
}

/** Rule ids in the registry with no card template; the http layer refuses to start if any. */
export function missingTemplates(templates: CardTemplates): string[] {
  return RULES.map((rule) => rule.id).filter((id) => !templates.has(id));
}
