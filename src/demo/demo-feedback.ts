import { OVERRIDE_REASON_SYSTEM } from '../cds/build-card.js';
import type { CardTemplates } from '../cds/card-templates.js';
import type { AdvisoryRecord, FeedbackInput } from '../store/store.js';
import type { DemoAnswer } from './demo-requests.js';
import { seededSequence } from './seeded-sequence.js';

/**
 * What the demo's clinicians did with the cards of the shift: accepted a suggestion, overrode the card
 * with one of the reasons its card file offers (cards/<rule-id>.yaml, coded in the service's own
 * override-reason system), or have not answered yet. Invented, deterministic for a given seed, pure.
 *
 * Shares are chosen so every answer appears: a card with a suggestion is accepted about half the time
 * and overridden about a quarter; a card without one is overridden about a third of the time (nothing
 * to accept), except a critical one. The oxygenation summary is information only and is left without
 * feedback. The titration round's cards have planned answers, so a reviewer sees a step down taken,
 * one declined with its reason, and some still open.
 */

export const DEMO_FEEDBACK_SEED = 20_261_204;

/** Rules whose cards are context rather than advice: a clinician has nothing to accept or override. */
const NO_FEEDBACK_RULES: ReadonlySet<string> = new Set(['oxygenation-summary']);

/** One feedback item and the moment it was received. */
export interface DemoFeedback {
  readonly item: FeedbackInput;
  readonly receivedAt: Date;
}

/**
 * `planned` holds the answers the demo's story fixes, by hookInstance then rule id (the titration
 * round's cards); every other card's answer is drawn from the seeded sequence.
 */
export function buildDemoFeedback(
  records: readonly AdvisoryRecord[],
  templates: CardTemplates,
  now: Date,
  planned: ReadonlyMap<string, Readonly<Record<string, DemoAnswer>>> = new Map(),
  seed: number = DEMO_FEEDBACK_SEED,
): DemoFeedback[] {
  const next = seededSequence(seed);
  const feedback: DemoFeedback[] = [];
  for (const record of records) {
    // Drawn for every card, so one card's answer does not shift every later card's.
    const roll = next();
    const pick = next();
    const delayMin = 2 + Math.floor(next() * 25);
    if (NO_FEEDBACK_RULES.has(record.ruleId)) {
      continue;
    }
    const at = new Date(Math.min(Date.parse(record.issuedAt) + delayMin * 60_000, now.getTime()));
    const outcomeTimestamp = at.toISOString();
    const hasSuggestion = record.suggestionUuids.length > 0;
    const acceptShare = hasSuggestion ? 0.5 : 0;
    // A critical card with nothing to accept is answered by reviewing the patient, not by a click.
    const overrideShare = hasSuggestion ? 0.25 : record.indicator === 'critical' ? 0 : 0.35;
    const reasons = templates.get(record.ruleId)?.overrideReasons ?? [];
    const first = record.suggestionUuids[0];
    const plan = planned.get(record.hookInstance)?.[record.ruleId];
    if (plan !== undefined) {
      const answer = plannedFeedback(record, plan, reasons, outcomeTimestamp);
      if (answer !== undefined) {
        feedback.push({ item: answer, receivedAt: at });
      }
    } else if (roll < acceptShare && first !== undefined) {
      feedback.push({
        item: { serviceId: record.serviceId, cardUuid: record.cardUuid, outcome: 'accepted', acceptedSuggestionIds: [first], outcomeTimestamp },
        receivedAt: at,
      });
    } else if (roll < acceptShare + overrideShare && reasons.length > 0) {
      const reason = reasons[Math.floor(pick * reasons.length)] ?? reasons[0];
      feedback.push({
        item: {
          serviceId: record.serviceId,
          cardUuid: record.cardUuid,
          outcome: 'overridden',
          acceptedSuggestionIds: [],
          ...(reason === undefined ? {} : { overrideReason: { system: OVERRIDE_REASON_SYSTEM, code: reason.code } }),
          outcomeTimestamp,
        },
        receivedAt: at,
      });
    }
  }
  return feedback;
}

/** A planned answer as a feedback item; a plan naming a suggestion or reason the card lacks is a slip. */
function plannedFeedback(
  record: AdvisoryRecord,
  plan: DemoAnswer,
  reasons: readonly { readonly code: string }[],
  outcomeTimestamp: string,
): FeedbackInput | undefined {
  const base = { serviceId: record.serviceId, cardUuid: record.cardUuid, outcomeTimestamp };
  switch (plan.outcome) {
    case 'none':
      return undefined;
    case 'accepted': {
      const first = record.suggestionUuids[0];
      if (first === undefined) {
        throw new Error(`demo: a planned acceptance of ${record.ruleId}, whose card offers no suggestion`);
      }
      return { ...base, outcome: 'accepted', acceptedSuggestionIds: [first] };
    }
    case 'overridden':
      if (!reasons.some((reason) => reason.code === plan.reasonCode)) {
        throw new Error(`demo: ${record.ruleId} offers no override reason '${plan.reasonCode}'`);
      }
      return {
        ...base,
        outcome: 'overridden',
        acceptedSuggestionIds: [],
        overrideReason: { system: OVERRIDE_REASON_SYSTEM, code: plan.reasonCode },
      };
  }
}
