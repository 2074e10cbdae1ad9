import { describe, expect, it } from 'vitest';
import {
  CdsRequestSchema,
  describeIssues,
  FeedbackRequestSchema,
  OrderSelectContextSchema,
  OrderSelectRequestSchema,
  OrderSignContextSchema,
  OrderSignRequestSchema,
} from '../../src/cds/schemas.js';
import { cloneJson, loadJsonFixture } from '../helpers/load-fixture.js';

// Request fixtures are invented Larkspur Bay General Hospital data, shaped as CDS Hooks 2.0
// §Calling a CDS Service and the Hook Library STU1 order-sign / order-select pages describe.
type Body = Record<string, unknown> & { context: Record<string, unknown> };
const signRequest = loadJsonFixture('cds/order-sign-request.json') as Body;
const selectRequest = loadJsonFixture('cds/order-select-request.json') as Body;

function issuesOf(schema: { safeParse: (v: unknown) => { success: boolean; error?: unknown } }, value: unknown) {
  const result = schema.safeParse(value);
  expect(result.success).toBe(false);
  return describeIssues(result.error as Parameters<typeof describeIssues>[0]);
}

describe('CdsRequestSchema', () => {
  it('accepts an order-sign request with prefetch, a null prefetch value and a token', () => {
    const parsed = CdsRequestSchema.parse(signRequest);
    expect(parsed.hook).toBe('order-sign');
    expect(parsed.prefetch).toStrictEqual(signRequest['prefetch']);
    expect(parsed.prefetch?.['conditions']).toBeNull(); // §Prefetch Template: null = "looked, found nothing"
  });

  it('accepts an order-select request without fhirServer or prefetch', () => {
    expect(CdsRequestSchema.safeParse(selectRequest).success).toBe(true);
  });

  it.each([['hook'], ['hookInstance'], ['context']])('rejects a request without %s, naming it', (field) => {
    // CDS Hooks 2.0 #http-request_1: hook, hookInstance and context are REQUIRED
    const { [field]: _dropped, ...rest } = signRequest;
    expect(issuesOf(CdsRequestSchema, rest)).toStrictEqual([
      { path: field, message: expect.stringContaining('expected') },
    ]);
  });

  it('rejects fhirAuthorization without fhirServer', () => {
    // CDS Hooks 2.0 #http-request_1: fhirServer is REQUIRED when fhirAuthorization is present
    const { fhirServer: _server, ...rest } = signRequest;
    expect(issuesOf(CdsRequestSchema, rest)).toStrictEqual([
      { path: 'fhirServer', message: 'is required when fhirAuthorization is present' },
    ]);
  });

  it('rejects a token_type other than Bearer and a fhirServer that is not http(s)', () => {
    // CDS Hooks 2.0 #passing-the-access-token-to-the-cds-service: token_type is fixed "Bearer"
    const body = cloneJson(signRequest);
    (body['fhirAuthorization'] as Record<string, unknown>)['token_type'] = 'MAC';
    body['fhirServer'] = 'ftp://fhir.larkspur-bay.example';
    expect(issuesOf(CdsRequestSchema, body).map((issue) => issue.path)).toStrictEqual([
      'fhirServer',
      'fhirAuthorization.token_type',
    ]);
  });

  it('rejects an extension that is not an object', () => {
    // CDS Hooks 2.0 §Extensions: the value of extension must be a JSON object
    expect(issuesOf(CdsRequestSchema, { ...signRequest, extension: ['x'] })).toStrictEqual([
      { path: 'extension', message: 'Invalid input: expected record, received array' },
    ]);
  });

  describe('edge cases', () => {
    it('never echoes a value sent in an issue message', () => {
      const body = cloneJson(signRequest);
      const auth = body['fhirAuthorization'] as Record<string, unknown>;
      auth['token_type'] = 'secret-token-type-value';
      auth['expires_in'] = 'secret-expiry';
      body['fhirServer'] = 'secret-server-value';
      const text = JSON.stringify(issuesOf(CdsRequestSchema, body));
      expect(text).not.toContain('secret');
    });

    it('names the body itself as (root)', () => {
      expect(issuesOf(CdsRequestSchema, 'not an object')).toStrictEqual([
        { path: '(root)', message: 'Invalid input: expected object, received string' },
      ]);
    });
  });
});

describe('OrderSignContextSchema', () => {
  it('accepts a draft bundle without Bundle.type and with a non-draft order', () => {
    // Hook Library STU1 order-sign: re-signed orders are not draft; examples omit Bundle.type
    const context = cloneJson(signRequest.context);
    const bundle = context['draftOrders'] as { entry: { resource: Record<string, unknown> }[] };
    const first = bundle.entry[0];
    if (first === undefined) throw new Error('fixture has no entry');
    first.resource['status'] = 'active';
    expect(OrderSignContextSchema.safeParse(context).success).toBe(true);
  });

  it('rejects a context whose draftOrders is not a Bundle, and a patientId that is not a FHIR id', () => {
    const context = { ...signRequest.context, patientId: 'lb pt/0001', draftOrders: { resourceType: 'List' } };
    expect(issuesOf(OrderSignContextSchema, context)).toStrictEqual([
      { path: 'patientId', message: 'must be a FHIR id (letters, digits, - and ., at most 64)' },
      { path: 'draftOrders.resourceType', message: 'Invalid input: expected "Bundle"' },
    ]);
  });

  it('requires userId as a relative reference', () => {
    // Hook Library STU1: userId is Practitioner/<id> or PractitionerRole/<id>
    expect(issuesOf(OrderSignContextSchema, { ...signRequest.context, userId: 'lb-dr-0042' })).toStrictEqual([
      { path: 'userId', message: 'must be a relative reference such as ServiceRequest/123' },
    ]);
  });
});

describe('OrderSelectContextSchema', () => {
  it('accepts selections that point at draftOrders entries', () => {
    expect(OrderSelectContextSchema.safeParse(selectRequest.context).success).toBe(true);
  });

  it('names each selection that points nowhere, with its full path in the request', () => {
    // Hook Library STU1 order-select: each selection points into draftOrders
    const body = cloneJson(selectRequest);
    body.context['selections'] = ['MedicationRequest/lb-mr-0002', 'ServiceRequest/lb-mr-0002', 'MedicationRequest/nope'];
    expect(issuesOf(OrderSelectRequestSchema, body)).toStrictEqual([
      { path: 'context.selections.1', message: 'does not point to an entry in draftOrders' },
      { path: 'context.selections.2', message: 'does not point to an entry in draftOrders' },
    ]);
  });

  it('rejects missing or empty selections', () => {
    const { selections: _s, ...withoutSelections } = selectRequest.context;
    expect(issuesOf(OrderSelectContextSchema, withoutSelections).map((i) => i.path)).toStrictEqual(['selections']);
    expect(issuesOf(OrderSelectContextSchema, { ...selectRequest.context, selections: [] }).map((i) => i.path)).toStrictEqual([
      'selections',
    ]);
  });
});

describe('OrderSignRequestSchema', () => {
  it('accepts the order-sign fixture and rejects it as order-select', () => {
    expect(OrderSignRequestSchema.safeParse(signRequest).success).toBe(true);
    expect(issuesOf(OrderSelectRequestSchema, signRequest).map((i) => i.path)).toStrictEqual([
      'hook',
      'context.selections',
    ]);
  });
});

describe('FeedbackRequestSchema', () => {
  const accepted = {
    card: '2ed6657d-e927-568b-95e1-2665a8aea6a2',
    outcome: 'accepted',
    acceptedSuggestions: [{ id: '886313e1-3b8a-5372-9b90-0c9aee199e5d' }],
    outcomeTimestamp: '2025-03-14T08:07:31Z',
  };

  it.each([
    ['accepted with acceptedSuggestions', accepted],
    ['overridden with no reason', { card: accepted.card, outcome: 'overridden', outcomeTimestamp: accepted.outcomeTimestamp }],
    [
      'overridden with a reason carrying code and system only',
      {
        card: accepted.card,
        outcome: 'overridden',
        overrideReason: { reason: { code: 'patient-specific-target', system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/override-reason' } },
        outcomeTimestamp: accepted.outcomeTimestamp,
      },
    ],
    [
      'overridden with a userComment only',
      { card: accepted.card, outcome: 'overridden', overrideReason: { userComment: 'Agreed with the respiratory team' }, outcomeTimestamp: '2025-03-14T09:07:31+01:00' },
    ],
  ])('accepts feedback %s', (_name, item) => {
    // CDS Hooks 2.0 §Feedback; cds-hooks.md §12 item 8
    expect(FeedbackRequestSchema.safeParse({ feedback: [item] }).success).toBe(true);
  });

  it('rejects accepted without acceptedSuggestions, a bad outcome and a bad timestamp', () => {
    const { acceptedSuggestions: _a, ...noSuggestions } = accepted;
    expect(
      issuesOf(FeedbackRequestSchema, {
        feedback: [noSuggestions, { ...accepted, outcome: 'ignored' }, { ...accepted, outcomeTimestamp: '14/03/2025' }],
      }),
    ).toStrictEqual([
      { path: 'feedback.0.acceptedSuggestions', message: 'is required when outcome is accepted' },
      { path: 'feedback.1.outcome', message: 'Invalid option: expected one of "accepted"|"overridden"' },
      { path: 'feedback.2.outcomeTimestamp', message: 'must be an RFC 3339 date-time' },
    ]);
  });
});

describe('describeIssues with several problems', () => {
  it('lists a cross-field problem together with the others in one pass', () => {
    const { fhirServer: _s, hookInstance: _h, ...rest } = signRequest;
    expect(issuesOf(CdsRequestSchema, rest).map((issue) => issue.path)).toStrictEqual(['hookInstance', 'fhirServer']);
  });
});
