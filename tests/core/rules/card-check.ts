import { readFileSync } from 'node:fs';
import { expect } from 'vitest';
import {
  parseCardTemplate,
  placeholderNames,
  renderTemplate,
  type CardTemplate,
} from '../../../src/cds/card-templates.js';
import { policyCardValues } from '../../../src/cds/policy-card-text.js';
import type { Policy } from '../../../src/core/policy.js';
import type { Finding } from '../../../src/core/types.js';
import { BTS, withPolicy } from '../facts-builder.js';

/** CDS Hooks 2.0: a card summary is fewer than 140 characters. */
export const SUMMARY_LIMIT = 140;

/** Reads and parses `cards/<ruleId>.yaml` with the card layer's own schema. */
export function loadCardTemplate(ruleId: string): CardTemplate {
  const text = readFileSync(new URL(`../../../cards/${ruleId}.yaml`, import.meta.url), 'utf8');
  const parsed = parseCardTemplate(text);
  if (parsed.kind !== 'ok') {
    throw new Error(`cards/${ruleId}.yaml is invalid: ${JSON.stringify(parsed.problems)}`);
  }
  return parsed.template;
}

/**
 * Checks that a finding renders with its rule's card template: every placeholder of the summary and
 * detail (and of the suggestion label when the finding carries a change) is among its values, the
 * summary stays under the CDS Hooks limit, and every source key is in the bundled policy's
 * references. Returns the rendered texts for further assertions.
 */
export function expectCardRenders(finding: Finding): { summary: string; detail: string; label: string | undefined } {
  const template = loadCardTemplate(finding.ruleId);
  // The card builder adds the policy's values (the guideline cited) to the rule's own.
  const values = { ...finding.values, ...policyCardValues(BTS, finding.ruleId) };
  const provided = Object.keys(values);
  const needed = [...placeholderNames(template.summary), ...placeholderNames(template.detail)];
  if (finding.change !== undefined) {
    expect(template.suggestionLabel, `${finding.ruleId} makes a change but has no suggestionLabel`).toBeTypeOf('string');
    needed.push(...placeholderNames(template.suggestionLabel ?? ''));
  }
  expect(needed.filter((name) => !provided.includes(name))).toStrictEqual([]);
  const summary = renderTemplate(template.summary, values, 'plain');
  const detail = renderTemplate(template.detail, values, 'markdown');
  expect([...summary.missing, ...detail.missing]).toStrictEqual([]);
  expect(summary.text.length).toBeLessThan(SUMMARY_LIMIT);
  const keys = [...finding.sourceKeys, ...finding.computations.map((c) => c.sourceKey)];
  expect(keys.filter((key) => BTS.references[key] === undefined)).toStrictEqual([]);
  const label =
    finding.change === undefined || template.suggestionLabel === undefined
      ? undefined
      : renderTemplate(template.suggestionLabel, values, 'plain').text;
  return { summary: summary.text, detail: detail.text, label };
}

/**
 * The sentences of a rendered card that name `guideline` and state `range` without "under this
 * policy" straight after it: each would put a range the policy set in the guideline's mouth. A range
 * the policy or a unit chose (say 88–90 %) is not a guideline's unless the guideline gives it.
 */
export function rangesAttributedTo(detail: string, guideline: string, range: string): readonly string[] {
  return detail
    .replace(/\s+/g, ' ')
    .split(/(?<=\.)\s+/)
    .filter((sentence) => sentence.includes(guideline) && sentence.split(range).slice(1).some((after) => !after.startsWith(' under this policy')));
}

/**
 * At-risk ranges a policy or unit may set for itself (docs/policy.md). BTS 2017 Table 4 gives 88-92 %;
 * 88-90 % (a narrower local band), 86-90 % and 90-92 % are invented local choices, never BTS 2017's.
 */
export const POLICY_AT_RISK_RANGES: readonly (readonly [number, number])[] = [
  [88, 92], // BTS 2017, Table 4: the guideline's own range, still named as the policy's
  [88, 90], // local choice (invented)
  [86, 90], // local choice (invented)
  [90, 92], // local choice (invented)
];

/** The bundled policy with the at-risk range `lowPercent`-`highPercent` and a standard range just above it. */
export function policyWithAtRiskRange(lowPercent: number, highPercent: number): Policy {
  return withPolicy(BTS, {
    targets: { ...BTS.targets, hypercapnicRisk: { lowPercent, highPercent }, standard: { lowPercent: highPercent, highPercent: highPercent + 4 } },
  });
}

/** The card advises the policy's at-risk range and names it as this policy's, never as BTS 2017's. */
export function expectRangeNamedAsPolicys(finding: Finding, lowPercent: number, highPercent: number): void {
  const range = `${lowPercent}–${highPercent} %`;
  expect(finding.values.advisedRange).toBe(range);
  const { detail } = expectCardRenders(finding); // rendered with BTS 2017 as the guideline cited
  expect(detail.replace(/\s+/g, ' ')).toContain(`${range} under this policy`);
  expect(rangesAttributedTo(detail, 'BTS 2017', range)).toStrictEqual([]);
}
