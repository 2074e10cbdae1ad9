import type { ConditionFact, ConditionKind, SetAsideNote } from '../core/types.js';
import {
  ICD10_CONDITION_PREFIXES,
  ICD10_HERBICIDE_PREFIX,
  SNOMED_CONDITIONS,
  SYSTEMS,
  isAdverseEffectOrUnderdosing,
  isIcd10System,
} from './codes.js';
import type { FhirResource } from './gathered-data.js';
import { codingsOf, objectAt, wordsOf } from './json.js';

/**
 * Maps the patient's Conditions onto the kinds that change the oxygen target or advice (BTS 2017
 * Tables 3 and 4 and its special situations): by SNOMED CT code, by ICD-10 code prefix, and by the
 * words of `code.text` and `coding.display`. Only active conditions count (clinicalStatus active, recurrence or relapse,
 * or absent with no abatement), except past episodes of NIV, invasive ventilation or hypercapnic
 * failure, which count when resolved too; nothing refuted or entered in error counts.
 */

/** Words for each kind. Matched case-insensitively; a match after "no", "not" or "ruled out" is skipped. */
const TEXT_PATTERNS: ReadonlyArray<readonly [ConditionKind, RegExp]> = [
  ['copd', /\bCOPD\b|\bchronic obstructive (?:pulmonary|lung|airways?) disease\b|\bemphysema\b|\bCOAD\b/i],
  ['bronchiectasis', /\bbronchiectasis\b/i],
  ['cystic-fibrosis', /\bcystic fibrosis\b/i],
  ['chest-wall-deformity', /\bkyphoscoliosis\b|\bscoliosis\b|\bchest wall deformity\b|\bthoracoplasty\b/i],
  [
    'neuromuscular-disease',
    /\bmotor neu?rone? disease\b|\bMND\b|\bamyotrophic lateral sclerosis\b|\bmuscular dystrophy\b|\bmyasthenia\b|\bneuromuscular\b|\bGuillain[- ]Barr[eé]\b|\bspinal muscular atrophy\b|\bmyopathy\b|\bdiaphragm(?:atic)? (?:paralysis|palsy|weakness)\b|\bpost-?polio\b/i,
  ],
  ['obesity-hypoventilation', /\bobesity hypoventilation\b|\bpickwickian\b/i],
  ['morbid-obesity', /\bmorbid(?:ly)? obes(?:e|ity)\b|\bsevere obesity\b|\bclass (?:3|III) obesity\b/i],
  [
    'chronic-hypercapnic-respiratory-failure',
    /\btype (?:2|II) respiratory failure\b|\bhypercapnic respiratory failure\b|\brespiratory failure with hypercapnia\b|\bCO2 retention\b|\bcarbon dioxide retention\b/i,
  ],
  [
    'previous-niv-or-imv',
    /\bhome (?:NIV|BiPAP|ventilation|ventilator)\b|\b(?:previous|prior|history of)\b[^.;]{0,30}\b(?:NIV|intubat\w*|IMV|mechanical(?:ly)? ventilat\w*|invasive ventilation|non-?invasive ventilation)\b|\b(?:required|requiring|needed|needing|treated with|received)\b[^.;]{0,20}\b(?:NIV|BiPAP|intubation|IMV|mechanical ventilation|invasive ventilation|non-?invasive ventilation)\b|\bventilator[- ]dependen\w*\b/i,
  ],
  ['carbon-monoxide-poisoning', /\bcarbon monoxide\b|\bCO poisoning\b|\bcarboxyh(?:a)?emoglobin/i],
  ['paraquat-poisoning', /\bparaquat\b/i],
  ['bleomycin-lung-injury', /\bbleomycin\b/i],
  ['cluster-headache', /\bcluster headache/i],
  ['pneumothorax', /\bpneumothora(?:x|ces)\b/i],
  [
    'sickle-cell-crisis',
    /\bsickle[- ]cell (?:\w+ )?crisis\b|\bsickle crisis\b|\bvaso-?occlusive crisis\b|\bacute chest syndrome\b/i,
  ],
  ['pregnancy', /\bpregnan(?:t|cy)\b(?! test)|\bgravid\b/i],
  // An asthma attack, not asthma as a chronic diagnosis: "asthma" alone, or "severe asthma" and
  // "severe persistent asthma" (chronic severity classes), say nothing about today. The kind marks an
  // illness in which a raised PCO2 means tiring (BTS/SIGN asthma guideline, from memory), so reading
  // every asthmatic as acute would misread a COPD-asthma overlap patient's chronic retention.
  [
    'acute-asthma',
    /\bstatus asthmaticus\b|\b(?:acute|life[- ]threatening|near[- ]fatal)\b(?:\W+\w+){0,2}?\W+asthma\b|\basthma\b(?:(?!\b(?:no|not|without|nil|uncomplicated)\b)[^.;]){0,25}?\b(?:attack|exacerbation|exacerbated|flare)|\b(?:exacerbation|attack|flare)\b(?:\W+\w+){0,2}?\W+asthma\b|\basthma\W+(?:acute|life[- ]threatening|near[- ]fatal)\b/i,
  ],
  [
    'sedative-or-opioid-toxicity',
    /\b(?:opioid|opiate|narcotic|heroin|morphine|diamorphine|methadone|fentanyl|oxycodone|codeine|tramadol|buprenorphine|benzodiazepine|diazepam|midazolam|lorazepam|temazepam|sedative|hypnotic)s?\b(?:\W+\w+){0,2}?\W+(?:overdose|toxicity|poisoning|intoxication|narcosis)\b|\b(?:overdose|toxicity|poisoning|intoxication)\W+(?:of|with|by|from|on)\W+(?:\w+\W+){0,2}?(?:opioid|opiate|narcotic|heroin|morphine|diamorphine|methadone|fentanyl|oxycodone|codeine|tramadol|buprenorphine|benzodiazepine|diazepam|midazolam|lorazepam|temazepam|sedative|hypnotic)s?\b|\bover-?sedat\w*|\bexcessive(?:ly)? sedat\w*|\bopioid[- ]induced (?:respiratory depression|hypoventilation)\b/i,
  ],
  // "ACS" and "MI" alone are left out: in this setting ACS is also acute chest syndrome (sickle
  // cell) and MI mitral insufficiency. The non-ST form comes first so "non-ST" is not read as a negation.
  [
    'acute-coronary-syndrome',
    /\bnon[- ]?ST[- ](?:segment[- ])?elevation (?:myocardial infarction|MI|ACS|acute coronary syndrome)\b|\bN-?STEMI\b|\bSTEMI\b|\bacute coronary syndrome\b|\bmyocardial infarction\b|\bunstable angina\b|\bheart attack\b/i,
  ],
  // Stroke, not TIA: a transient ischaemic attack has resolved by definition and is not named in
  // BTS 2017 Table 3 or BMJ 2018. Heat stroke is not a stroke.
  [
    'stroke',
    /(?<!\bheat[- ]?)\bstroke\b(?! volume)|\bCVA\b|\bcerebrovascular accident\b|\bcerebral infarct(?:ion)?\b|\bintracerebral (?:haemorrhage|hemorrhage|bleed)\b/i,
  ],
  // Hyperventilation, or anxiety or panic with breathlessness (BTS 2017 Table 3); a chronic anxiety
  // or panic disorder alone says nothing about breathlessness today.
  [
    'hyperventilation',
    /\bhyperventilat\w*|\bpanic attack|\bdysfunctional breathing\b|\b(?:anxiety|panic)\b[^.;]{0,30}?\b(?:breathless\w*|dyspn\w*|short(?:ness)? of breath)|\b(?:breathless\w*|dyspn\w*)\b[^.;]{0,30}?\b(?:anxiety|panic)\b/i,
  ],
];

/**
 * Kinds that name an acute illness: "previous stroke", "old MI" or "history of asthma attacks" is a
 * past event, not the illness the patient has now, so those words are not read as the kind.
 */
const ACUTE_KINDS: ReadonlySet<ConditionKind> = new Set([
  'acute-asthma',
  'sedative-or-opioid-toxicity',
  'acute-coronary-syndrome',
  'stroke',
  'hyperventilation',
]);
const PAST = /\b(?:previous|prior|past|old|history of|hx of|h\/o)\W+(?:\w+\W+){0,3}$/i;

const NEGATED = /\b(?:no|not|non|without|denies|ruled out|excluded|negative for)\W+(?:\w+\W+){0,2}$/i;
/** Negation written after the words: "stroke ruled out", "ACS - excluded". */
const NEGATED_AFTER = /^\W*(?:(?:was|is|has been)\W+)?(?:ruled out|excluded)\b/i;
const INACTIVE_CLINICAL = new Set(['inactive', 'remission', 'resolved']);
const UNTRUE_VERIFICATION = new Set(['refuted', 'entered-in-error']);

/**
 * Kinds that record something that happened: a past episode of NIV, invasive ventilation or
 * hypercapnic failure still counts once it has resolved, because BTS 2017 (Tables 2–4) keeps the
 * 88–92 % target for patients with previous NIV/IMV or previous hypercapnic failure. Such an
 * episode is naturally recorded as resolved or inactive.
 */
const PAST_EPISODE_KINDS: ReadonlySet<ConditionKind> = new Set([
  'previous-niv-or-imv',
  'chronic-hypercapnic-respiratory-failure',
]);

/** 'untrue' (refuted or entered in error), 'ended' (resolved, inactive, remission or abated), or 'active'. */
function statusOf(condition: FhirResource): 'untrue' | 'ended' | 'active' {
  const clinical = codingsOf(condition['clinicalStatus']).map((c) => c.code?.toLowerCase());
  const verification = codingsOf(condition['verificationStatus']).map((c) => c.code?.toLowerCase());
  if (verification.some((c) => c !== undefined && UNTRUE_VERIFICATION.has(c))) {
    return 'untrue';
  }
  if (clinical.length === 0) {
    const abated = Object.keys(condition).some((k) => k.startsWith('abatement'));
    return abated ? 'ended' : 'active';
  }
  return clinical.some((c) => c !== undefined && INACTIVE_CLINICAL.has(c)) ? 'ended' : 'active';
}

function icd10Kind(code: string): ConditionKind | undefined {
  const bare = code.replace(/\./g, '').toUpperCase();
  if (isAdverseEffectOrUnderdosing(bare)) {
    return undefined;
  }
  let best: readonly [string, ConditionKind] | undefined;
  for (const entry of ICD10_CONDITION_PREFIXES) {
    if (bare.startsWith(entry[0]) && (best === undefined || entry[0].length > best[0].length)) {
      best = entry;
    }
  }
  return best?.[1];
}

function textMatches(words: readonly string[], pattern: RegExp, acute = false): string | undefined {
  for (const w of words) {
    const m = pattern.exec(w);
    if (m === null) {
      continue;
    }
    const before = w.slice(0, m.index);
    const after = w.slice(m.index + m[0].length);
    if (!NEGATED.test(before) && !NEGATED_AFTER.test(after) && !(acute && PAST.test(before))) {
      return w;
    }
  }
  return undefined;
}

export interface ConditionsRead {
  readonly conditions: readonly ConditionFact[];
  readonly notes: readonly SetAsideNote[];
}

export function readConditions(resources: readonly FhirResource[]): ConditionsRead {
  const conditions: ConditionFact[] = [];
  const notes: SetAsideNote[] = [];
  for (const condition of resources) {
    const status = condition.resourceType === 'Condition' ? statusOf(condition) : 'untrue';
    if (status === 'untrue') {
      continue;
    }
    const reference = condition.id === undefined ? undefined : `Condition/${condition.id}`;
    const code = objectAt(condition, 'code');
    const words = wordsOf(code);
    const display = words[0] ?? codingsOf(code)[0]?.code ?? '(unnamed condition)';
    const found = new Map<ConditionKind, string>();
    for (const coding of codingsOf(code)) {
      const value = coding.code?.trim();
      if (value === undefined) continue;
      const isSnomed = coding.system === SYSTEMS.snomed;
      const isIcd10 = isIcd10System(coding.system);
      const kind = isSnomed ? SNOMED_CONDITIONS[value] : isIcd10 ? icd10Kind(value) : undefined;
      if (kind !== undefined && !found.has(kind)) {
        found.set(kind, `${isSnomed ? 'SNOMED CT' : 'ICD-10'} ${value}`);
      }
      const isHerbicide = isIcd10 && value.replace(/\./g, '').toUpperCase().startsWith(ICD10_HERBICIDE_PREFIX);
      if (isHerbicide && textMatches(words, /paraquat/i) === undefined) {
        notes.push({
          what: display,
          reason: 'unrecognised',
          detail: `ICD-10 ${value} does not say which herbicide; paraquat poisoning was not assumed.`,
          reference,
        });
      }
    }
    for (const [kind, pattern] of TEXT_PATTERNS) {
      const matched = found.has(kind) ? undefined : textMatches(words, pattern, ACUTE_KINDS.has(kind));
      if (matched !== undefined) {
        found.set(kind, `text: '${matched}'`);
      }
    }
    for (const [kind, matchedBy] of found) {
      if (status === 'active') {
        conditions.push({ kind, matchedBy, display, reference });
      } else if (PAST_EPISODE_KINDS.has(kind)) {
        conditions.push({ kind, matchedBy: `${matchedBy}, a past episode`, display, reference });
      }
    }
  }
  return { conditions, notes };
}

