import { z } from 'zod';

/**
 * The policy sections that decide what the cards cite and say: the clinical basis (the guidelines the
 * policy follows and which one each rule's card cites), a folder of local card wording, and the
 * override reasons offered on cards. Each has a default equal to the behaviour before these sections
 * existed, so older policy files still load. Cross-checks (keys that exist, rule ids that exist) are in
 * check-card-sections.ts.
 */

const KEBAB = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;

/** Topics a card may cite apart from its rule's main statement: `{{<topic>Guideline}}` in a template. */
export const GUIDELINE_TOPICS = ['ventilation'] as const;
export type GuidelineTopic = (typeof GUIDELINE_TOPICS)[number];

export const ClinicalBasisSchema = z.strictObject({
  /**
   * Reference keys of the guidelines the policy follows, the primary (`basis`) among them. A card may
   * cite only these, so a policy cannot quote a guideline it does not say it follows.
   */
  guidelines: z.array(z.string().min(1)).min(1),
  /**
   * Rule id → reference key of the guideline the rule's card cites (`{{guideline}}`), where the
   * statement is that guideline's rather than the primary's; unlisted rules cite the primary.
   */
  ruleCitations: z.record(z.string(), z.string().min(1)).default({}),
  /** Topic → reference key, for `{{<topic>Guideline}}` (e.g. `ventilation`: the NIV thresholds' guideline). */
  topicCitations: z.partialRecord(z.enum(GUIDELINE_TOPICS), z.string().min(1)).default({}),
});

export const CardWordingSchema = z.strictObject({
  /**
   * A folder of `<rule-id>.yaml` files that replace `cards/<rule-id>.yaml` for those rules; a relative
   * path is taken from the policy file's folder. Absent: the bundled wording for every rule.
   */
  folder: z.string().min(1).optional(),
});

export const PolicyOverrideReasonSchema = z.strictObject({
  code: z.string().regex(KEBAB, 'must be kebab-case, e.g. patient-specific-target'),
  display: z.string().trim().min(1).max(120),
});

/** At most this many reasons on one card, whatever the merge gives: a short list is read, a long one is not. */
export const MAX_OFFERED_REASONS = 6;

export const PolicyOverrideReasonsSchema = z.strictObject({
  /**
   * `add`: the card file's reasons, then `allCards`, then `byRule` (a code given again takes the later
   * display). `replace`: `allCards` then `byRule` instead of the card file's reasons, for a rule where
   * the policy gives any; a rule the policy gives none keeps its card file's.
   */
  merge: z.enum(['add', 'replace']).default('add'),
  allCards: z.array(PolicyOverrideReasonSchema).max(MAX_OFFERED_REASONS).default([]),
  byRule: z.record(z.string(), z.array(PolicyOverrideReasonSchema).min(1).max(MAX_OFFERED_REASONS)).default({}),
});
