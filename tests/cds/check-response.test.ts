import { describe, expect, it } from 'vitest';
import { checkCdsResponse } from '../../src/cds/check-response.js';
import { conformanceProblems, expectConformant } from '../helpers/card-conformance.js';
import { cloneJson, loadJsonFixture } from '../helpers/load-fixture.js';

// A response built from the CDS Hooks 2.0 response tables (cds-hooks.md §5); the reference holds no
// full example from the specification itself (see tests/fixtures/cds/README.md).
type Json = Record<string, any>;  
const good = loadJsonFixture('cds/conformant-response.json') as Json;

function broken(mutate: (body: Json) => void): Json {
  const body = cloneJson(good);
  mutate(body);
  return body;
}

describe('checkCdsResponse', () => {
  it('passes the conformant fixture, which also validates against the R4 schema', () => {
    expect(checkCdsResponse(good)).toStrictEqual([]);
    expectConformant(good);
  });

  it('passes an empty card list', () => {
    // CDS Hooks 2.0 §CDS Service Response: {"cards": []} means no guidance
    expect(checkCdsResponse({ cards: [] })).toStrictEqual([]);
  });

  // Each row breaks one §5.3 rule (cds-hooks.md §5.3) and expects exactly that breach.
  it.each<[string, (body: Json) => void, string[]]>([
    [
      'summary of 140 characters', // CDS Hooks 2.0 #card-attributes: fewer than 140 characters
      (b) => { b.cards[0].summary = 'x'.repeat(140); },
      ['cards[0].summary: must be fewer than 140 characters'],
    ],
    ['missing summary', (b) => { delete b.cards[1].summary; }, ['cards[1].summary: is required']],
    [
      'indicator hard-stop', // pre-1.0 value, invalid in 2.0
      (b) => { b.cards[0].indicator = 'hard-stop'; },
      ['cards[0].indicator: must be one of info, warning, critical'],
    ],
    ['missing source.label', (b) => { b.cards[1].source = { url: 'https://x.example/' }; }, ['cards[1].source.label: is required']],
    [
      'suggestions without selectionBehavior',
      (b) => { delete b.cards[0].selectionBehavior; },
      ['cards[0].selectionBehavior: is required with suggestions and must be at-most-one or any'],
    ],
    [
      'two recommended suggestions under at-most-one',
      (b) => { b.cards[1].selectionBehavior = 'at-most-one'; b.cards[1].suggestions[0].isRecommended = true; b.cards[1].suggestions[1].isRecommended = true; },
      ['cards[1].suggestions: at most one suggestion may be recommended when selectionBehavior is at-most-one'],
    ],
    [
      'an action without description',
      (b) => { delete b.cards[0].suggestions[0].actions[0].description; },
      ['cards[0].suggestions[0].actions[0].description: is required'],
    ],
    [
      'an action with an unknown type',
      (b) => { b.systemActions[0].type = 'patch'; },
      ['systemActions[0].type: must be one of create, update, delete'],
    ],
    [
      'an update without its resource',
      (b) => { delete b.cards[0].suggestions[0].actions[0].resource; },
      ['cards[0].suggestions[0].actions[0].resource: is required; create and update actions carry the whole FHIR resource'],
    ],
    [
      'a create without its resource',
      (b) => { delete b.cards[1].suggestions[0].actions[1].resource; },
      ['cards[1].suggestions[0].actions[1].resource: is required; create and update actions carry the whole FHIR resource'],
    ],
    [
      'a delete without resourceId',
      (b) => { delete b.cards[1].suggestions[0].actions[0].resourceId; },
      ['cards[1].suggestions[0].actions[0].resourceId: is required for a delete action'],
    ],
    [
      'a delete carrying a resource',
      (b) => { b.cards[1].suggestions[0].actions[0].resource = { resourceType: 'ServiceRequest', id: 'lb-o2-0002' }; },
      ['cards[1].suggestions[0].actions[0].resource: must be absent on a delete action'],
    ],
    [
      'appContext on an absolute link',
      (b) => { b.cards[0].links[0].appContext = 'x'; },
      ['cards[0].links[0].appContext: is allowed only on smart links'],
    ],
    [
      'a link with an unknown type',
      (b) => { b.cards[0].links[0].type = 'popup'; },
      ['cards[0].links[0]: needs label, url and a type of absolute or smart'],
    ],
    [
      'an override reason without display',
      (b) => { delete b.cards[0].overrideReasons[0].display; },
      ['cards[0].overrideReasons[0].display: is required'],
    ],
    ['a null optional field', (b) => { b.cards[1].detail = null; }, ['cards[1].detail: is null; omit an optional field that has no value']],
    ['an empty string', (b) => { b.cards[0].detail = ''; }, ['cards[0].detail: is an empty string']],
    ['an empty links array', (b) => { b.cards[0].links = []; }, ['cards[0].links: is an empty array']],
    [
      'an empty object inside a FHIR resource',
      (b) => { b.cards[0].suggestions[0].actions[0].resource.code = {}; },
      ['cards[0].suggestions[0].actions[0].resource.code: is an empty object'],
    ],
    ['a card without uuid', (b) => { delete b.cards[1].uuid; }, ['cards[1].uuid: is required (feedback needs it)']],
    [
      'a suggestion without uuid',
      (b) => { delete b.cards[1].suggestions[1].uuid; },
      ['cards[1].suggestions[1].uuid: is required (feedback needs it)'],
    ],
    [
      'two cards with the same uuid',
      (b) => { b.cards[1].uuid = b.cards[0].uuid; },
      ['cards[1].uuid: repeats the uuid of cards[0].uuid'],
    ],
    [
      'a suggestion reusing a card uuid',
      (b) => { b.cards[1].suggestions[0].uuid = b.cards[0].uuid; },
      ['cards[1].suggestions[0].uuid: repeats the uuid of cards[0].uuid'],
    ],
  ])('fails a response with %s', (_name, mutate, expected) => {
    expect(checkCdsResponse(broken(mutate))).toStrictEqual(expected);
  });

  describe('edge cases', () => {
    it('fails a body without a cards array', () => {
      expect(checkCdsResponse({ card: [] })).toStrictEqual(['cards: is required and must be an array']);
      expect(checkCdsResponse(null)).toStrictEqual(['cards: is required and must be an array']);
    });

    it('counts summary length in characters, not bytes', () => {
      // 139 en dashes: 139 characters, 417 UTF-8 bytes; still under the limit
      expect(checkCdsResponse(broken((b) => { b.cards[0].summary = '–'.repeat(139); }))).toStrictEqual([]);
    });

    it('fails a card that is not an object', () => {
      expect(checkCdsResponse({ cards: ['x'] })).toStrictEqual(['cards[0]: must be an object']);
    });
  });
});

describe('conformanceProblems', () => {
  it('adds R4 schema errors for resources inside actions', () => {
    // R4 JSON schema: ServiceRequest has no property "target" (cds-hooks.md §9)
    const body = broken((b) => { b.cards[0].suggestions[0].actions[0].resource.target = '88-92'; });
    expect(checkCdsResponse(body)).toStrictEqual([]);
    expect(conformanceProblems(body)).toStrictEqual([
      "cards[0].suggestions[0].actions[0].resource R4: (root) should NOT have additional properties 'target'",
    ]);
  });

  it('adds strict response-schema issues the checklist does not cover', () => {
    const body = broken((b) => { b.cards[0].sumary = 'typo'; });
    expect(conformanceProblems(body)).toStrictEqual(['schema cards.0: Unrecognized key: "sumary"']);
  });
});
