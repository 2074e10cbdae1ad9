import type { CdsResponse } from './schemas.js';

/** The label of the link every card carries to its advisory page. */
export const REVIEW_LINK_LABEL = 'Review this advisory';

/**
 * Adds to each card a link to its advisory page (CDS Hooks 2.0 §Link: `type: "absolute"`, opened by
 * the EHR as a plain URL). `linkFor` makes the absolute URL, with its signed token in production. A
 * card without a uuid cannot be looked up, so it gets no link. Pure: returns a new response.
 */
export function addReviewLinks(response: CdsResponse, linkFor: (cardUuid: string) => string): CdsResponse {
  return {
    ...response,
    cards: response.cards.map((card) =>
      card.uuid === undefined
        ? card
        : { ...card, links: [...(card.links ?? []), { label: REVIEW_LINK_LABEL, url: linkFor(card.uuid), type: 'absolute' as const }] },
    ),
  };
}
