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

export class TextReadings {
  readonly #statements = new Map<string, TargetStatements>();
  readonly #flows = new Map<string, FlowsRead>();

  /** The target ranges and bounds the text states (read-target-text.ts). */
  targetStatements(text: string): TargetStatements {
    let read = this.#statements.get(text);
    if (read === undefined) {
      read = findTargetStatements(text);
      this.#statements.set(text, read);
    }
    return read;
  }

  /** The flows the text states, and the ordered one, as readSettingText picks it. */
  flows(text: string): FlowsRead {
    let read = this.#flows.get(text);
    if (read === undefined) {
      read = readFlows(text);
      this.#flows.set(text, read);
    }
    return read;
  }
}
