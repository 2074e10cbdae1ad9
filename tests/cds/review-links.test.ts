import { describe, expect, it } from 'vitest';
import { addReviewLinks, REVIEW_LINK_LABEL } from '../../src/cds/review-links.js';
import type { CdsResponse } from '../../src/cds/schemas.js';
import { expectConformant } from '../helpers/card-conformance.js';

const source = { label: 'oxygen-order-checker' };
const response: CdsResponse = {
  cards: [
    { uuid: 'card-1', summary: 'One', indicator: 'warning', source },
    { uuid: 'card-2', summary: 'Two', indicator: 'info', source, links: [{ label: 'Local policy', url: 'https://intranet.larkspur-bay.example/o2', type: 'absolute' }] },
    { summary: 'No uuid', indicator: 'info', source },
  ],
};

describe('addReviewLinks', () => {
  const linkFor = (uuid: string): string => `https://cds.larkspur-bay.example/review/advisories/${uuid}?token=t`;

  it('gives each card with a uuid an absolute link to its own advisory page (CDS Hooks 2.0 §Link)', () => {
    const linked = addReviewLinks(response, linkFor);
    expect(linked.cards[0]?.links).toStrictEqual([{ label: REVIEW_LINK_LABEL, url: linkFor('card-1'), type: 'absolute' }]);
    expect(linked.cards[1]?.links?.map((l) => l.label)).toStrictEqual(['Local policy', REVIEW_LINK_LABEL]);
  });

  it('leaves a card without a uuid as it was, and the input response untouched', () => {
    const linked = addReviewLinks(response, linkFor);
    expect(linked.cards[2]).toBe(response.cards[2]);
    expect(response.cards[0]?.links).toBeUndefined();
  });

  it('keeps a conformant response conformant', () => {
    // The service's own cards always carry a uuid (the checklist requires one for feedback).
    expectConformant(addReviewLinks({ cards: response.cards.slice(0, 2) }, linkFor));
  });
});
