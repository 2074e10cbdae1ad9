import { describe, expect, it } from 'vitest';
import { isValidatedContext, parseHookRequest } from '../../src/cds/parse-hook-request.js';
import { cloneJson, loadJsonFixture } from '../helpers/load-fixture.js';

const signRequest = loadJsonFixture('cds/order-sign-request.json') as Record<string, unknown>;
const selectRequest = loadJsonFixture('cds/order-select-request.json') as Record<string, unknown>;

describe('parseHookRequest', () => {
  it('accepts an order-sign body for the order-sign service', () => {
    const result = parseHookRequest('oxygen-order-sign', signRequest);
    expect(result.kind).toBe('ok');
    expect(result.kind === 'ok' ? [result.service.id, result.request.hookInstance] : []).toStrictEqual([
      'oxygen-order-sign',
      '5b0e8f9c-7a41-4d2e-9c1b-1f6a2d3e4b5c',
    ]);
  });

  it('accepts an order-select body for the order-select service', () => {
    expect(parseHookRequest('oxygen-order-select', selectRequest).kind).toBe('ok');
  });

  describe('patient-view (CDS Hooks library: userId, patientId, optional encounterId)', () => {
    const viewRequest = {
      hook: 'patient-view',
      hookInstance: 'd1577c69-dfbe-44ad-ba6d-3e05e953b2ea',
      context: { userId: 'PractitionerRole/lb-rt-0003', patientId: 'lb-pt-0001' },
    };

    it('accepts a patient-view body, with or without encounterId, for the titration review', () => {
      expect(parseHookRequest('oxygen-titration-review', viewRequest).kind).toBe('ok');
      const withEncounter = { ...viewRequest, context: { ...viewRequest.context, encounterId: 'lb-enc-0001' } };
      expect(parseHookRequest('oxygen-titration-review', withEncounter).kind).toBe('ok');
    });

    it('needs userId as a relative reference and patientId as a FHIR id', () => {
      const body = { ...viewRequest, context: { userId: 'lb-rt-0003' } };
      const result = parseHookRequest('oxygen-titration-review', body);
      expect(result.kind === 'invalid' ? result.issues.map((i) => i.path) : []).toStrictEqual(['context.userId', 'context.patientId']);
    });

    it('is refused by the order services, and order hooks by the review', () => {
      expect(parseHookRequest('oxygen-order-sign', viewRequest)).toStrictEqual({ kind: 'unsupported-hook', supportedHooks: ['order-sign'] });
      expect(parseHookRequest('oxygen-titration-review', signRequest)).toStrictEqual({ kind: 'unsupported-hook', supportedHooks: ['patient-view'] });
    });
  });

  it('reports an unknown service id', () => {
    // cds-hooks.md §8: unknown id → 404
    expect(parseHookRequest('no-such-service', signRequest)).toStrictEqual({ kind: 'unknown-service' });
  });

  it('reports a hook the service is not registered for', () => {
    // cds-hooks.md §8 and §12 item 3: a hook this id is not registered for → 400
    expect(parseHookRequest('oxygen-order-sign', selectRequest)).toStrictEqual({
      kind: 'unsupported-hook',
      supportedHooks: ['order-sign'],
    });
  });

  it('names every invalid field by its dot path', () => {
    const body = cloneJson(selectRequest) as { context: Record<string, unknown> };
    body.context['selections'] = ['MedicationRequest/elsewhere'];
    delete body.context['patientId'];
    expect(parseHookRequest('oxygen-order-select', body)).toStrictEqual({
      kind: 'invalid',
      issues: [
        { path: 'context.patientId', message: 'Invalid input: expected string, received undefined' },
        { path: 'context.selections.0', message: 'does not point to an entry in draftOrders' },
      ],
    });
  });

  describe('edge cases', () => {
    it('treats a missing hook as an invalid body, not a hook mismatch', () => {
      const { hook: _h, ...body } = signRequest;
      const result = parseHookRequest('oxygen-order-sign', body);
      expect(result.kind === 'invalid' ? result.issues.map((i) => i.path) : result.kind).toStrictEqual(['hook']);
    });

    it('rejects a body that is not an object', () => {
      expect(parseHookRequest('oxygen-order-sign', [1, 2]).kind).toBe('invalid');
    });
  });
});

describe('isValidatedContext', () => {
  it('knows the context of a request it accepted, for that hook only', () => {
    const result = parseHookRequest('oxygen-order-sign', signRequest);
    const context = result.kind === 'ok' ? result.request.context : undefined;
    expect(isValidatedContext(context, 'order-sign')).toBe(true);
    expect(isValidatedContext(context, 'order-select')).toBe(false);
    expect(isValidatedContext(context, 'patient-view')).toBe(false);
  });

  it('does not know a context it did not build: the body sent, a copy, or a rejected one', () => {
    const result = parseHookRequest('oxygen-order-sign', signRequest);
    const context = result.kind === 'ok' ? result.request.context : {};
    expect(isValidatedContext(signRequest['context'], 'order-sign')).toBe(false);
    expect(isValidatedContext({ ...context }, 'order-sign')).toBe(false);
    const bad = { ...cloneJson(signRequest), context: { patientId: 'lb-pt-0064' } };
    expect(parseHookRequest('oxygen-order-sign', bad).kind).toBe('invalid');
    expect(isValidatedContext(bad.context, 'order-sign')).toBe(false);
    expect(isValidatedContext(undefined, 'order-sign')).toBe(false);
  });
});
