import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { observationCodeOf } from '../../src/fhir/read-observation-values.js';
import { pruneEmpty } from '../../src/fhir/text-slots.js';
import { addedR4Problems, protocolProblems } from './support/conformance.js';
import { orderSignRequest, oxygenOrder } from './larkspur-fixtures.js';
import { listenApp, post, type Answer, type AppServer } from './support/app-server.js';
import { buildTestApp } from './test-app.js';

/**
 * Values a well-formed request can still carry that a reader might trip on: numbers as strings,
 * NaN-like values, impossible dates, duplicate ids, references to nothing, prototype keys, bytes
 * that are not UTF-8. Each is read tolerantly (200, cards that conform to CDS Hooks 2.0 §5.3, and
 * suggestions that add no FHIR R4 schema fault to the draft they copy) and what was not used is said
 * on a card, never a 5xx.
 */

const SERVICE = '/cds-services/oxygen-order-sign';
/** cards/data-set-aside.yaml with one item. */
const SET_ASIDE = '1 item(s) of patient data were set aside and not used in these checks';

type Json = Record<string, any>;  

let server: AppServer;
let baseline: string[];

function summaries(answer: Answer): string[] {
  return ((answer.body as { cards?: { summary: string }[] }).cards ?? []).map((card) => card.summary);
}

/** 200 with cards that pass §5.3 and our schema, and suggestions that add no R4 fault of their own. */
async function call(body: unknown): Promise<Answer> {
  const answer = await post(`${server.url}${SERVICE}`, body);
  expect(answer.status).toBe(200);
  expect(protocolProblems(answer.body)).toStrictEqual([]);
  const sent: unknown = typeof body === 'string' ? JSON.parse(body) : Buffer.isBuffer(body) ? JSON.parse(body.toString('utf8')) : body;
  expect(addedR4Problems(answer.body, sent)).toStrictEqual([]);
  return answer;
}

function mutated(mutate: (request: Json) => void): Json {
  const request = orderSignRequest() as Json;
  mutate(request);
  return request;
}

const spo2Of = (request: Json): Json => request['prefetch'].observations.entry[0].resource;
const draftOf = (request: Json): Json => request['context'].draftOrders.entry[0].resource;

beforeAll(async () => {
  server = await listenApp((await buildTestApp()).app);
  baseline = summaries(await post(`${server.url}${SERVICE}`, orderSignRequest()));
});

afterAll(async () => {
  await server.close();
});

describe('hostile values in a well-formed request', () => {
  it('has a card judging the SpO2 of 87 % in the baseline, which the cases below remove', () => {
    // BTS 2017: 87 % is below both the 88-92 % and 94-98 % ranges
    expect(baseline.some((summary) => summary.startsWith('SpO2 87 %'))).toBe(true);
  });

  describe('numbers that are not numbers', () => {
    it.each([
      ['a string "95"', '95'],
      ['the string "NaN"', 'NaN'],
      ['the string "Infinity"', 'Infinity'],
      ['-0', -0],
      ['1e308 (far past the plausible range)', 1e308],
      ['-1e308', -1e308],
      ['5e-324 (the smallest double)', 5e-324],
    ])('sets aside an SpO2 given as %s and says so', async (_name, value) => {
      const answer = await call(mutated((r) => (spo2Of(r)['valueQuantity'].value = value)));
      expect(summaries(answer)).toContain(SET_ASIDE);
      expect(summaries(answer).some((summary) => summary.startsWith('SpO2 '))).toBe(false);
    });

    it('sets aside 1e309, which JSON.parse reads as Infinity', async () => {
      const text = JSON.stringify(orderSignRequest()).replace('"value":87', '"value":1e309');
      expect(text).toContain('1e309');
      const answer = await call(text);
      expect(summaries(answer)).toContain(SET_ASIDE);
    });
  });

  describe('dates that are not dates', () => {
    it.each(['2025-02-30T25:61:00Z', 'yesterday', '', '0000-00-00', '+275760-09-13T00:00:00.000Z'])(
      'sets aside an SpO2 taken at %j',
      async (when) => {
        const answer = await call(mutated((r) => (spo2Of(r)['effectiveDateTime'] = when)));
        expect(summaries(answer)).toContain(SET_ASIDE);
      },
    );

    it('sets aside a birth date of 1951-13-45 and still checks the order', async () => {
      const answer = await call(mutated((r) => (r['prefetch'].patient.birthDate = '1951-13-45')));
      expect(summaries(answer)).toContain(SET_ASIDE);
    });

    it('reads a draft order authored at an impossible time', async () => {
      await call(mutated((r) => (draftOf(r)['authoredOn'] = '2025-02-30T25:61:00Z')));
    });
  });

  describe('ids and references', () => {
    it('gives one set of cards for a draft order sent twice under the same id', async () => {
      const answer = await call(mutated((r) => r['context'].draftOrders.entry.push({ resource: structuredClone(oxygenOrder) })));
      expect(summaries(answer)).toStrictEqual(baseline);
    });

    it('reads references that point nowhere', async () => {
      await call(
        mutated((r) => {
          draftOf(r)['encounter'] = { reference: 'Encounter/lb-enc-nowhere' };
          draftOf(r)['basedOn'] = [{ reference: 'CarePlan/lb-cp-nowhere' }, { reference: '' }, { reference: 42 }];
          spo2Of(r)['hasMember'] = [{ reference: 'Observation/lb-obs-nowhere' }];
        }),
      );
    });

    it('reads resource types it does not know as nothing to check', async () => {
      const answer = await call(
        mutated((r) => {
          r['context'].draftOrders.entry.push({ resource: { resourceType: 'Spaceship', id: 'lb-ss-1' } }, { resource: { resourceType: 'lowercase' } });
          r['prefetch'].observations.entry.push({ resource: { resourceType: 'Spaceship', id: 'lb-ss-2' } });
        }),
      );
      expect(summaries(answer)).toStrictEqual(baseline);
    });
  });

  describe('prototype keys and values', () => {
    it('reads __proto__ and constructor keys anywhere without polluting Object.prototype', async () => {
      const hostile = '"__proto__":{"polluted":"yes"},"constructor":{"prototype":{"polluted":"yes"}},';
      const text = JSON.stringify(orderSignRequest())
        .replace('{"hook"', `{${hostile}"hook"`)
        .replace('"context":{', `"context":{${hostile}`)
        .replace('"resourceType":"ServiceRequest",', `"resourceType":"ServiceRequest",${hostile}`)
        .replace('"resourceType":"Patient",', `"resourceType":"Patient",${hostile}`);
      expect(text.split('__proto__').length).toBe(5);
      const answer = await call(text);
      expect(summaries(answer)).toStrictEqual(baseline);
      expect(({} as { polluted?: unknown }).polluted).toBeUndefined();
      expect(Object.prototype).not.toHaveProperty('polluted');
    });

    // Found by the fuzz suite: codes and units named like Object.prototype members reached
    // Object.prototype through plain lookup tables (src/fhir/codes.ts, src/units/convert.ts) and threw.
    it.each(['constructor', '__proto__', 'toString', 'hasOwnProperty', 'valueOf'])(
      'reads an observation coded or measured in %s as unrecognised',
      async (name) => {
        const coded = await call(mutated((r) => (spo2Of(r)['code'].coding[0].code = name)));
        expect(summaries(coded).some((summary) => summary.startsWith('SpO2 '))).toBe(false);
        const measured = await call(mutated((r) => (spo2Of(r)['valueQuantity'].code = name)));
        expect(summaries(measured)).toContain(SET_ASIDE);
        expect(observationCodeOf({ coding: [{ system: 'http://loinc.org', code: name }] })).toBeUndefined();
      },
    );
  });

  describe('nulls and empty values', () => {
    // Found by the fuzz suite: a draft holding nulls came back with them in the suggestion's update,
    // which CDS Hooks 2.0 (§Use of JSON) and FHIR R4 JSON both forbid.
    it('writes a suggestion without the nulls and empty values the draft arrived with', async () => {
      const answer = await call(
        mutated((r) => {
          draftOf(r)['patientInstruction'] = null;
          draftOf(r)['code'].coding.push(null, {});
          draftOf(r)['note'] = [{ text: null }, []];
          draftOf(r)['requester'] = { reference: null, display: [null, [null]] };
        }),
      );
      const suggested = (answer.body as { cards: { suggestions?: { actions: { resource?: unknown }[] }[] }[] }).cards
        .flatMap((card) => card.suggestions ?? [])
        .flatMap((suggestion) => suggestion.actions.map((action) => action.resource));
      expect(suggested.length).toBeGreaterThan(0);
      for (const resource of suggested) expect(JSON.stringify(resource)).not.toContain('null');
    });

    it('keeps the nulls that align a primitive array with its extensions', () => {
      // FHIR R4 JSON: `given` and `_given` are matched by position, nulls holding the places (from memory)
      const value = { given: ['Arlo', null], _given: [null, { extension: [{ url: 'urn:x', valueString: 'y' }] }], other: [null, 'z'] };
      pruneEmpty(value);
      expect(value).toStrictEqual({ given: ['Arlo', null], _given: [null, { extension: [{ url: 'urn:x', valueString: 'y' }] }], other: ['z'] });
    });
  });

  describe('edge cases', () => {
    it('reads bytes that are not UTF-8 inside a text as replacement characters', async () => {
      const bytes = Buffer.from(JSON.stringify(orderSignRequest()).replace('Oxygen via nasal', 'Oxygen \u0001\u0002 nasal'));
      const at = bytes.indexOf(0x01);
      bytes[at] = 0xff;
      bytes[at + 1] = 0xfe;
      await call(bytes);
    });

    it('reads lone surrogates and control characters in texts', async () => {
      await call(mutated((r) => (draftOf(r)['patientInstruction'] = '\ud800 oxygen \u0000 2 L/min \udfff\u202e')));
    });
  });
});
