import { findFlowMentions, isOrderedSetting, type FlowMention } from './read-setting-text.js';
import { findTargetStatements, type TargetStatements } from './read-target-text.js';

/**
 * What planning a change reads in an order's words, kept per text. Writing a change reads each text
 * slot before the rewrite and again after it, to see whether the words now state the new value; most
 * slots come out of a rewrite unchanged, and a later suggestion of the same call plans its change on
 * the texts the earlier one wrote. Each reading is a pure function of the text alone, so one reading
 * per distinct text answers every ask. Made per call (build-card.ts) or per plan, never kept longer:
 * order words differ from call to call.
 */

export interface FlowsRead {
  /** Every flow written in the text. */
  readonly all: readonly FlowMention[];
  /** The one the reader takes as the ordered flow (the first outside history, plans and step sizes). */
  readonly ordered: FlowMention | undefined;
}

/** The flows of one text, read afresh. */
export function readFlows(text: string): FlowsRead {
  const all = findFlowMentions(text);
  return { all, ordered: all.find((m) => isOrderedSetting(text, m)) };
}

/** `read(text)`, read once for each distinct text. */
function oncePerText<T>(read: (text: string) => T): (text: string) => T {
  const held = new Map<string, T>();
  return (text) => {
    let value = held.get(text);
    if (value === undefined) {
      value = read(text);
      held.set(text, value);
    }
    return value;
  };
}

export class TextReadings {
  /** The target ranges and bounds the text states (read-target-text.ts). */
  readonly targetStatements: (text: string) => TargetStatements = oncePerText(findTargetStatements);

  /** The flows the text states, and the ordered one, as readSettingText picks it. */
  readonly flows: (text: string) => FlowsRead = oncePerText(readFlows);
}
