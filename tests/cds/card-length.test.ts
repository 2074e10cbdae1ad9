import { describe, expect, it } from 'vitest';
import { buildCard } from '../../src/cds/build-card.js';
import { placeholderNames } from '../../src/cds/card-templates.js';
import { RULES } from '../../src/core/rules/index.js';
import type { Card } from '../../src/cds/schemas.js';
import { expectConformant } from '../helpers/card-conformance.js';
import { assessment, bundledPolicy, facts, finding, HOOK_INSTANCE, NOW } from './support/card-inputs.js';
import { evaluateExample, loadExampleRequests } from './support/examples.js';
import { loadRepositoryCards } from './support/load-cards.js';

/**
 * Cards short enough to act on in an EHR's side panel (issue 6 class 12: in a real CDS Hooks client
 * the four cards of one order-sign call filled a page 8,470 px tall; the product owner asks for the
 * reason, key numbers, source and cautions "in a dozen lines or so"). The budget counts the policy's
 * two caution lines too, which the bundled policy words in about 380 characters.
 */
const DETAIL_MAX_LINES = 16; // non-blank Markdown lines: about a dozen of the card's own, plus sources and cautions
const DETAIL_MAX_CHARACTERS = 2000;
/** The summary card's job is the numbers (FiO2, P/F with its FiO2, A-a, acid-base, mechanism). */
const NUMBERS_CARD_MAX_CHARACTERS = 2400;
const SUMMARY_MAX_CHARACTERS = 139; // CDS Hooks 2.0 §Card: summary "fewer than 140 characters"

const policy = bundledPolicy();
const templates = loadRepositoryCards();

function budgetProblems(card: Card): string[] {
  const detail = card.detail ?? '';
  const lines = detail.split('\n').filter((line) => line.trim() !== '');
  const problems: string[] = [];
  if (card.summary.length > SUMMARY_MAX_CHARACTERS) problems.push(`summary ${card.summary.length} characters`);
  if (lines.length > DETAIL_MAX_LINES) problems.push(`detail ${lines.length} lines`);
  const maxCharacters =
    card.source.topic?.code === 'oxygenation-summary' ? NUMBERS_CARD_MAX_CHARACTERS : DETAIL_MAX_CHARACTERS;
  if (detail.length > maxCharacters) problems.push(`detail ${detail.length} characters`);
  // The policy's safety lines stay on every card (policies/based-on-bts-2017.yaml cautions; docs/safety.md).
  if (!detail.includes(policy.cautions[0] ?? '\u0000')) problems.push('advisory-only caution missing');
  if (!detail.includes((policy.cautions[1] ?? '\u0000').replace(/\s+$/, ''))) problems.push('pulse oximetry caution missing');
  if (/\d{4}-\d\d-\d\dT\d\d:\d\d/.test(detail)) problems.push('raw ISO time on the card');
  return problems;
}

describe('card length budget', () => {
  describe.each(loadExampleRequests())('every card of examples/$file', ({ body }) => {
    it('fits the side-panel budget and keeps the cautions', async () => {
      const { response } = await evaluateExample(body);
      expect(response.cards.length).toBeGreaterThan(0);
      const report = response.cards.map((card) => [card.source.topic?.code, budgetProblems(card)]);
      expect(report.filter(([, problems]) => (problems ?? []).length > 0)).toStrictEqual([]);
      expectConformant(response);
    });
  });

  // Every rule's template, filled with values of a realistic length (24 characters, about a device and
  // flow or a risk reason) and the fixture's inputs, so a rule no example triggers is held to it too.
  describe.each(RULES.map((rule) => rule.id))('the card template of %s', (ruleId) => {
    it('fits the side-panel budget with typical values', () => {
      const template = templates.get(ruleId);
      expect(template).toBeDefined();
      if (template === undefined) return;
      const names = new Set([
        ...placeholderNames(template.summary),
        ...placeholderNames(template.detail),
        ...placeholderNames(template.suggestionLabel ?? ''),
      ]);
      const values = Object.fromEntries([...names].map((name) => [name, `${name} value`.padEnd(24, '.').slice(0, 24)]));
      const card = buildCard(
        { ...finding, ruleId, values, change: undefined },
        { template, policy, hookInstance: HOOK_INSTANCE, draftResource: undefined, facts, assessment, now: NOW },
      );
      expect(budgetProblems(card)).toStrictEqual([]);
    });
  });
});
