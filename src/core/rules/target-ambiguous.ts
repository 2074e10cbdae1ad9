import { formatRange, joinWords } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { expectsTarget } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/**
 * The order's target is written as two ranges, a range on a condition, or bounds that do not make one
 * range ("88–92 % if drowsy, otherwise 94–98 %", "94–98 % until the gas is back").
 *
 * Rationale: BTS 2017 asks for one target range a patient, written on the order, so that every nurse
 * titrates to the same goal; a condition the nurse must judge at the bedside ("until the gas is back")
 * leaves it open which range is in force. The other checks read the range that allows the most oxygen
 * (so `target-above-hypercapnic-range` still fires for an at-risk patient) and this card says so.
 * Asks for one range and offers no one-click change: which range is meant is the prescriber's to say.
 * Fires only where a range applies and the order is a titration (not comfort, stop or room air).
 * Source: BTS 2017 (prescribing to a target range; Tables 1–4).
 */
export const rule: Rule = {
  id: 'target-ambiguous',
  title: 'Target written as two ranges or with a condition',
  version: 1,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, target } = assessment;
    const note = order?.targetNote;
    if (order === undefined || note?.kind !== 'ambiguous' || !expectsTarget(order) || target.kind !== 'range') {
      return [];
    }
    const written =
      note.ranges.length === 0
        ? 'single bounds that do not make one range'
        : note.ranges.length === 1
          ? `${formatRange(note.ranges[0] ?? target.range)} with a condition or a contradicting bound`
          : `${joinWords(note.ranges.map(formatRange))}`;
    const checkedRange =
      order.target === undefined
        ? 'no range (none could be read)'
        : `${formatRange(order.target)}, the reading that allows the most oxygen`;
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          writtenText: note.text,
          rangesWritten: written,
          checkedRange,
          advisedRange: formatRange(target.range),
          targetReason: target.reason,
        },
        sourceKeys: [target.sourceKey, policy.basisKey, 'local-policy'],
      }),
    ];
  },
};
