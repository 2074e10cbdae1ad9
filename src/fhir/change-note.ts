/**
 * The marked note a suggestion appends to an order text it edited where the text also held values it
 * did not change (a contingency plan, an escalation flow, another SpO2 threshold). The note is for the
 * nurse and the prescriber reading the order; the reader skips it, so it never becomes part of what
 * the order is read to say.
 */

export const CHANGE_NOTE_OPEN = '[Advisory change:';
const CHANGE_NOTE = /\s*\[Advisory change:[^\]]*\]/g;

/** "[Advisory change: flow now 2 L/min. Also written here and not changed: 4 L/min. Check them before signing.]" */
export function changeNote(what: string, leftAsWritten: readonly string[]): string {
  const left = leftAsWritten.map((v) => v.replace(/[[\]]/g, '')).join('; ');
  return `${CHANGE_NOTE_OPEN} ${what}. Also written here and not changed: ${left}. Check them before signing.]`;
}

/** The text without any change notes. */
export function currentWords(text: string): string {
  return text.replace(CHANGE_NOTE, '');
}
