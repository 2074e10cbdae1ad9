import type { Assessment } from '../../assessment/types.js';
import type { Policy } from '../../policy.js';
import type { Facts, Finding, HookName, Indicator } from '../../types.js';

/** What every rule sees: the facts, the frozen policy, the assessment built once, the hook and the clock. */
export interface RuleContext {
  readonly facts: Facts;
  readonly policy: Policy;
  readonly assessment: Assessment;
  readonly hook: HookName;
  readonly now: Date;
}

/**
 * One advisory. `id` is kebab-case, equals the file name and is never reused; `version` is bumped when
 * `evaluate` changes meaning. `evaluate` is pure and returns no findings when it does not apply.
 */
export interface Rule {
  readonly id: string;
  readonly title: string;
  readonly version: number;
  /** order-select gets only cheap, order-level rules. */
  readonly hooks: readonly HookName[];
  readonly defaultIndicator: Indicator;
  /**
   * Who the advice is for. `adults` (the default when absent): adult target, titration, device or
   * physiology advice from adult guidelines, which the engine does not run for a patient below
   * `population.minimumAgeYears`. `all-ages`: data-quality and order-keeping checks that hold for
   * anyone.
   */
  readonly appliesTo?: 'adults' | 'all-ages';
  readonly evaluate: (ctx: RuleContext) => readonly Finding[];
}
