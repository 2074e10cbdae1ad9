import type { Card } from '../../../src/cds/schemas.js';
import type { OxygenOrder } from '../../../src/core/types.js';
import type { FhirResource } from '../../../src/fhir/gathered-data.js';
import { readOxygenOrder } from '../../scenarios/support/oxygen-level.js';
import { ruleOf } from '../../scenarios/support/run-scenario.js';

/** One suggested update of the draft, with the orders before and after as the service reads them. */
export interface SuggestedUpdate {
  readonly ruleId: string;
  readonly label: string;
  readonly resource: FhirResource;
  readonly before: OxygenOrder;
  readonly after: OxygenOrder;
}

/** Every update action that replaces the draft, read back through the service's order reader. */
export function suggestedUpdates(cards: readonly Card[], draft: FhirResource): readonly SuggestedUpdate[] {
  const before = readOxygenOrder(draft);
  if (before === undefined) return [];
  return cards.flatMap((card) =>
    (card.suggestions ?? []).flatMap((suggestion) =>
      (suggestion.actions ?? []).flatMap((action) => {
        const resource = action.resource as FhirResource | undefined;
        if (action.type !== 'update' || resource === undefined || resource.id !== draft.id) return [];
        const after = readOxygenOrder(resource);
        return after === undefined ? [] : [{ ruleId: ruleOf(card), label: suggestion.label, resource, before, after }];
      }),
    ),
  );
}

/** "rule: label" for a failure message. */
export function describeUpdate(u: SuggestedUpdate): string {
  const show = (o: OxygenOrder) =>
    `${o.device ?? '?'} ${o.flowLPerMin ?? '-'} L/min FiO2 ${o.setFio2Fraction ?? '-'}`;
  return `${u.ruleId}: '${u.label}' (${show(u.before)} -> ${show(u.after)})`;
}
