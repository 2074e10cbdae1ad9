import { OVERRIDE_REASON_SYSTEM } from '../cds/build-card.js';
import type { CardTemplates } from '../cds/card-templates.js';

/** The display of an override reason code, when the rule's card file lists it; else undefined. */
export type ReasonDisplay = (ruleId: string, code: string, system?: string) => string | undefined;

/**
 * Override reason displays from `cards/<rule-id>.yaml` (`overrideReasons`), the same words the EHR
 * offered the clinician. A code under another system, or one the card file no longer lists, has no
 * display and is shown as its code.
 */
export function reasonDisplaysFrom(templates: CardTemplates): ReasonDisplay {
  return (ruleId, code, system) => {
    if (system !== undefined && system !== OVERRIDE_REASON_SYSTEM) {
      return undefined;
    }
    return templates.get(ruleId)?.overrideReasons.find((reason) => reason.code === code)?.display;
  };
}

/** "Agreed ceiling of care (ceiling-of-care)", or the bare code when its display is not known. */
export function describeReason(display: ReasonDisplay, ruleId: string, code: string, system?: string): string {
  const shown = display(ruleId, code, system);
  return shown === undefined ? code : `${shown} (${code})`;
}
