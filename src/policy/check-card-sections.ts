import type { PolicyCheck, PolicyPath } from './check-policy.js';
import { defaultIndicatorOf, nearest, registeredRuleIds } from './rule-ids.js';

/**
 * Checks on what the cards cite and say, beyond the schema (card-sections-schema.ts): a card may cite
 * only a reference the file has and a guideline the policy says it follows, a rule id must be one that
 * runs, and one list must not offer a reason code twice. Reads the raw document defensively, as
 * check-policy.ts does. Pure.
 */

function get(raw: unknown, path: PolicyPath): unknown {
  let value = raw;
  for (const step of path) {
    if (value === null || typeof value !== 'object') return undefined;
    value = (value as Record<string | number, unknown>)[step];
  }
  return value;
}

function entriesAt(raw: unknown, path: PolicyPath): [string, unknown][] {
  const value = get(raw, path);
  return value !== null && typeof value === 'object' && !Array.isArray(value) ? Object.entries(value) : [];
}

function itemsAt(raw: unknown, path: PolicyPath): unknown[] {
  const value = get(raw, path);
  return Array.isArray(value) ? value : [];
}

function ruleIdCheck(id: string, path: PolicyPath): PolicyCheck[] {
  if (defaultIndicatorOf(id) !== undefined) return [];
  const guess = nearest(id, registeredRuleIds());
  return [
    {
      level: 'error',
      path,
      message: `'${id}' is not a rule id, so this entry would change no card`,
      fix: `${guess === undefined ? '' : `did you mean '${guess}'? `}the rule ids are the section headings of docs/clinical-basis.md`,
    },
  ];
}

function checkClinicalBasis(raw: unknown): PolicyCheck[] {
  if (get(raw, ['clinicalBasis']) === undefined) return [];
  const out: PolicyCheck[] = [];
  const references = entriesAt(raw, ['references']).map(([key]) => key);
  const basis = get(raw, ['basis']);
  const followed = new Set<string>(typeof basis === 'string' ? [basis] : []);
  itemsAt(raw, ['clinicalBasis', 'guidelines']).forEach((key, index) => {
    if (typeof key !== 'string') return;
    followed.add(key);
    if (references.length > 0 && !references.includes(key)) {
      const guess = nearest(key, references);
      out.push({
        level: 'error',
        path: ['clinicalBasis', 'guidelines', index],
        message: `'${key}' is not a key of references`,
        fix: `${guess === undefined ? '' : `did you mean '${guess}'? `}add the guideline under references with its label and link`,
      });
    }
  });
  const cited = (key: unknown, path: PolicyPath): void => {
    if (typeof key === 'string' && !followed.has(key)) {
      out.push({
        level: 'error',
        path,
        message: `'${key}' is not among the guidelines this policy follows, so a card would cite a guideline the policy does not name`,
        fix: 'add it to clinicalBasis.guidelines (and to references), or cite one listed there',
      });
    }
  };
  for (const [ruleId, key] of entriesAt(raw, ['clinicalBasis', 'ruleCitations'])) {
    out.push(...ruleIdCheck(ruleId, ['clinicalBasis', 'ruleCitations', ruleId]));
    cited(key, ['clinicalBasis', 'ruleCitations', ruleId]);
  }
  for (const [topic, key] of entriesAt(raw, ['clinicalBasis', 'topicCitations'])) {
    cited(key, ['clinicalBasis', 'topicCitations', topic]);
  }
  return out;
}

function duplicateCodes(raw: unknown, path: PolicyPath): PolicyCheck[] {
  const seen = new Set<string>();
  return itemsAt(raw, path).flatMap((item, index): PolicyCheck[] => {
    const code = get(item, ['code']);
    if (typeof code !== 'string') return [];
    if (seen.has(code)) {
      return [
        {
          level: 'error',
          path: [...path, index, 'code'],
          message: `'${code}' is offered twice in this list`,
          fix: 'remove one; a code is one reason, with one display',
        },
      ];
    }
    seen.add(code);
    return [];
  });
}

function checkOverrideReasons(raw: unknown): PolicyCheck[] {
  const out = duplicateCodes(raw, ['overrideReasons', 'allCards']);
  for (const [ruleId] of entriesAt(raw, ['overrideReasons', 'byRule'])) {
    out.push(...ruleIdCheck(ruleId, ['overrideReasons', 'byRule', ruleId]));
    out.push(...duplicateCodes(raw, ['overrideReasons', 'byRule', ruleId]));
  }
  return out;
}

/** Every check on the clinical basis and the override reasons, errors only. */
export function checkCardSections(raw: unknown): PolicyCheck[] {
  return [...checkClinicalBasis(raw), ...checkOverrideReasons(raw)];
}
