import { OVERRIDE_REASON_SYSTEM } from '../cds/build-card.js';
import type { CardTemplates } from '../cds/card-templates.js';
import { offeredOverrideReasons } from '../cds/policy-card-text.js';
import type { Policy } from '../core/policy.js';

/** The display of an override reason code, when the rule's card file lists it; else undefined. */
export type ReasonDisplay = (ruleId: string, code: string, system?: string) => string | undefined;

/**
 * Override reason displays as the cards offer them: `cards/<rule-id>.yaml` (`overrideReasons`) merged
 * with the policy's (policy-card-text.ts), the same words the EHR offered the clinician. A code under
 * another system, or one neither the card file nor the policy lists now, has no display and is shown
 * as its code.
 */
export function reasonDisplaysFrom(templates: CardTemplates, policy?: Policy): ReasonDisplay {
  return (ruleId, code, system) => {
    if (system !== undefined && system !== OVERRIDE_REASON_SYSTEM) {
      return undefined;
    }
    const template = templates.get(ruleId);
    const offered = policy === undefined ? (template?.overrideReasons ?? []) : offeredOverrideReasons(policy, ruleId, template);
    return offered.find((reason) => reason.code === code)?.display;
  };
}

/** "Agreed ceiling of care (ceiling-of-care)", or the bare code when its display is not known. */
export function describeReason(display: ReasonDisplay, ruleId: string, code: string, system?: string): string {
  const shown = display(ruleId, code, system);
  return shown === undefined ? code : `${shown} (${code})`;
}
