/**
 * The running totals of a simulation: advisories by rule and indicator under the baseline and the new
 * policy, the orders whose advice changed (counts by kind, a bounded sample of examples), the orders
 * skipped and why, and a histogram of SpO2 at order time. Memory is bounded whatever the number of
 * orders: counters, a fixed number of examples per kind, one bin per SpO2 percent. Pure.
 */

export type Indicator = 'info' | 'warning' | 'critical';

export interface Advisory {
  readonly ruleId: string;
  readonly indicator: Indicator;
}

/**
 * How one order's advice changed from the baseline to the new policy:
 * - `added`: new advisories (rule and indicator), none gone;
 * - `removed`: advisories gone, none new;
 * - `indicator-changed`: the same rules, at another indicator;
 * - `replaced`: some advisories gone and others new.
 */
export type ChangeKind = 'added' | 'removed' | 'indicator-changed' | 'replaced';
export const CHANGE_KINDS: readonly ChangeKind[] = ['added', 'removed', 'indicator-changed', 'replaced'];

export type SkipReason =
  | 'no-authored-on'
  | 'no-patient'
  | 'required-data-missing'
  | 'request-not-valid'
  | 'evaluation-failed';

export const SKIP_REASONS: Readonly<Record<SkipReason, string>> = {
  'no-authored-on': 'the order has no authoredOn, so it cannot be placed in time',
  'no-patient': 'the order names no patient',
  'required-data-missing': 'the export holds no Patient for it, so the service would answer 412',
  'request-not-valid': 'the hook request built from it is not valid (e.g. an id outside FHIR rules)',
  'evaluation-failed': 'the engine failed on it (a bug: please report it with the order reference)',
};

export interface ChangedOrderExample {
  readonly orderReference: string;
  readonly authoredOn: string;
  readonly ward: string | undefined;
  readonly spo2Percent: number | undefined;
  /** `rule-id (indicator)`, in card order. */
  readonly before: readonly string[];
  readonly after: readonly string[];
}

const adviceKey = (a: Advisory): string => `${a.ruleId}\t${a.indicator}`;
const shown = (a: Advisory): string => `${a.ruleId} (${a.indicator})`;

function countKeys(advice: readonly Advisory[]): Map<string, number> {
  const counts = new Map<string, number>();
  for (const a of advice) counts.set(adviceKey(a), (counts.get(adviceKey(a)) ?? 0) + 1);
  return counts;
}

/** The kind of change between two orders' advice, or undefined when it is the same (as multisets). */
export function changeKind(before: readonly Advisory[], after: readonly Advisory[]): ChangeKind | undefined {
  const old = countKeys(before);
  const now = countKeys(after);
  const keys = new Set([...old.keys(), ...now.keys()]);
  let gained = false;
  let lost = false;
  for (const key of keys) {
    const difference = (now.get(key) ?? 0) - (old.get(key) ?? 0);
    if (difference > 0) gained = true;
    if (difference < 0) lost = true;
  }
  if (!gained && !lost) return undefined;
  if (!lost) return 'added';
  if (!gained) return 'removed';
  const rules = (advice: readonly Advisory[]): string => advice.map((a) => a.ruleId).sort().join('\n');
  return rules(before) === rules(after) ? 'indicator-changed' : 'replaced';
}

export interface RuleIndicatorCount {
  readonly ruleId: string;
  readonly indicator: Indicator;
  readonly baseline: number;
  readonly proposed: number;
}

export interface TallySnapshot {
  readonly ordersSeen: number;
  readonly ordersEvaluated: number;
  readonly ordersChanged: number;
  readonly changedByKind: Readonly<Record<ChangeKind, number>>;
  readonly examples: Readonly<Record<ChangeKind, readonly ChangedOrderExample[]>>;
  readonly skipped: Readonly<Record<SkipReason, number>>;
  /** Sorted by rule id, then indicator (critical, warning, info). */
  readonly byRuleIndicator: readonly RuleIndicatorCount[];
  readonly advisories: { readonly baseline: number; readonly proposed: number };
  /** Orders by the patient's current SpO2 at order time, one bin per whole percent (index = percent). */
  readonly spo2Histogram: readonly number[];
  /** Orders with no current SpO2 at order time. */
  readonly noCurrentSpo2: number;
}

const INDICATOR_ORDER: Readonly<Record<Indicator, number>> = { critical: 0, warning: 1, info: 2 };

export class SimulationTally {
  static readonly EXAMPLES_PER_KIND = 5;
  #seen = 0;
  #evaluated = 0;
  readonly #byKey = new Map<string, { ruleId: string; indicator: Indicator; baseline: number; proposed: number }>();
  readonly #changed: Record<ChangeKind, number> = { added: 0, removed: 0, 'indicator-changed': 0, replaced: 0 };
  readonly #examples: Record<ChangeKind, ChangedOrderExample[]> = { added: [], removed: [], 'indicator-changed': [], replaced: [] };
  readonly #skipped: Record<SkipReason, number> = {
    'no-authored-on': 0,
    'no-patient': 0,
    'required-data-missing': 0,
    'request-not-valid': 0,
    'evaluation-failed': 0,
  };
  readonly #spo2 = new Array<number>(101).fill(0);
  #noSpo2 = 0;

  /** Orders the index could not place (no authoredOn, no patient): skipped before replay. */
  skipBeforeReplay(reason: SkipReason, count: number): void {
    this.#skipped[reason] += count;
    this.#seen += count;
  }

  skip(reason: SkipReason): void {
    this.#skipped[reason] += 1;
    this.#seen += 1;
  }

  add(order: {
    readonly orderReference: string;
    readonly authoredOn: string;
    readonly ward: string | undefined;
    readonly spo2Percent: number | undefined;
    readonly baseline: readonly Advisory[];
    readonly proposed: readonly Advisory[];
  }): ChangeKind | undefined {
    this.#seen += 1;
    this.#evaluated += 1;
    for (const [advice, side] of [[order.baseline, 'baseline'], [order.proposed, 'proposed']] as const) {
      for (const a of advice) {
        const key = adviceKey(a);
        const entry = this.#byKey.get(key) ?? { ruleId: a.ruleId, indicator: a.indicator, baseline: 0, proposed: 0 };
        entry[side] += 1;
        this.#byKey.set(key, entry);
      }
    }
    const spo2 = order.spo2Percent === undefined ? undefined : Math.round(order.spo2Percent);
    if (spo2 === undefined || spo2 < 0 || spo2 > 100) this.#noSpo2 += 1;
    else this.#spo2[spo2] = (this.#spo2[spo2] ?? 0) + 1;
    const kind = changeKind(order.baseline, order.proposed);
    if (kind !== undefined) {
      this.#changed[kind] += 1;
      const examples = this.#examples[kind];
      if (examples.length < SimulationTally.EXAMPLES_PER_KIND) {
        examples.push({
          orderReference: order.orderReference,
          authoredOn: order.authoredOn,
          ward: order.ward,
          spo2Percent: order.spo2Percent,
          before: order.baseline.map(shown),
          after: order.proposed.map(shown),
        });
      }
    }
    return kind;
  }

  snapshot(): TallySnapshot {
    const byRuleIndicator = [...this.#byKey.values()]
      .map((e) => ({ ...e }))
      .sort((a, b) => a.ruleId.localeCompare(b.ruleId) || INDICATOR_ORDER[a.indicator] - INDICATOR_ORDER[b.indicator]);
    return {
      ordersSeen: this.#seen,
      ordersEvaluated: this.#evaluated,
      ordersChanged: CHANGE_KINDS.reduce((sum, kind) => sum + this.#changed[kind], 0),
      changedByKind: { ...this.#changed },
      examples: Object.fromEntries(CHANGE_KINDS.map((k) => [k, [...this.#examples[k]]])) as Record<ChangeKind, ChangedOrderExample[]>,
      skipped: { ...this.#skipped },
      byRuleIndicator,
      advisories: {
        baseline: byRuleIndicator.reduce((sum, e) => sum + e.baseline, 0),
        proposed: byRuleIndicator.reduce((sum, e) => sum + e.proposed, 0),
      },
      spo2Histogram: [...this.#spo2],
      noCurrentSpo2: this.#noSpo2,
    };
  }
}
