import type { Finding } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { givesOxygen } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/**
 * Another oxygen order is active on the record, or the same draft holds more than one oxygen order.
 *
 * Rationale: two live oxygen prescriptions with different devices, flows or targets leave the nurse
 * to guess which governs; it is a common prescribing error. Warning. No change is offered: whether
 * the new order replaces the old one is the prescriber's call, and discontinuing an order is outside
 * the changes this service suggests. Orders that give no oxygen (stop, room air, 0 L/min) are
 * neither checked nor counted: a stop order signed with a new one replaces, it does not duplicate.
 * Source: common practice (medication-safety duplicate checking); the local policy.
 */
export const rule: Rule = {
  id: 'duplicate-oxygen-order',
  title: 'More than one oxygen order',
  version: 3,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  appliesTo: 'all-ages', // holds for patients of any age
  evaluate: ({ assessment, facts }): readonly Finding[] => {
    const { order } = assessment;
    // An order that stops oxygen or puts the patient on room air ends the others, not doubles them.
    if (order === undefined || !givesOxygen(order)) {
      return [];
    }
    const inDraft = facts.orders.filter((o) => o.reference !== order.reference && givesOxygen(o));
    const onRecord = facts.activeOrders.filter((o) => o.reference !== order.reference && givesOxygen(o));
    if (inDraft.length === 0 && onRecord.length === 0) {
      return [];
    }
    // Two or more oxygen orders signed together: one card about the draft (named by its first oxygen
    // order), not one per order.
    const together = inDraft.length > 0;
    const named = together ? (facts.orders.find((o) => givesOxygen(o)) ?? order) : order;
    const others = [
      ...facts.orders
        .filter((o) => o.reference !== named.reference && givesOxygen(o))
        .map((o) => `${describeOrder(o)} (in this draft)`),
      ...onRecord.map((o) => `${describeOrder(o)} (active on record)`),
    ];
    return [
      makeFinding(rule, {
        orderReference: together ? undefined : order.reference,
        values: {
          orderDescription: describeOrder(named),
          otherOrderCount: String(others.length),
          otherOrders: others.join('; '),
        },
        sourceKeys: ['local-policy'],
      }),
    ];
  },
};
