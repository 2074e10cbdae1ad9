import { readFileSync } from 'node:fs';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { requestMoment } from '../../../src/cli/retime-request.js';
import { expectConformant } from '../../helpers/card-conformance.js';
import { startFhirServer } from '../fhir-test-server.js';
import { buildTestApp } from '../test-app.js';

// examples/patient-view-pneumonia-weaning.json: an invented Larkspur Bay patient recovering from
// community-acquired pneumonia, on 4 L/min by nasal cannula with SpO2 97-99 % hourly for 7 h, target
// 94-98 % (BTS 2017, Tables 1-3). Called through the HTTP app as an EHR would on opening the record.
const PATH = '/cds-services/oxygen-titration-review';
const example = JSON.parse(
  readFileSync(new URL('../../../examples/patient-view-pneumonia-weaning.json', import.meta.url), 'utf8'),
) as Record<string, unknown>;
const moment = requestMoment(example);

function copy(): Record<string, unknown> {
  return JSON.parse(JSON.stringify(example)) as Record<string, unknown>;
}

describe('POST /cds-services/oxygen-titration-review (patient-view)', () => {
  it('is listed in discovery on the patient-view hook', async () => {
    const { app } = await buildTestApp();
    const response = await request(app).get('/cds-services').expect(200);
    const service = (response.body as { services: { id: string; hook: string; prefetch: Record<string, string> }[] }).services.find(
      (s) => s.id === 'oxygen-titration-review',
    );
    expect(service?.hook).toBe('patient-view');
    // Observations time-sorted and paged (cds-hooks.md §3.3: _sort=-date, _count); every order type.
    expect(service?.prefetch['observations']).toContain('&_sort=-date&_count=100');
    expect(Object.keys(service?.prefetch ?? {})).toContain('deviceRequests');
  });

  it('offers a convalescent patient above 94-98 % on 4 L/min one step down on the active order, and no warning', async () => {
    expect(moment?.toISOString()).toBe('2026-12-02T14:00:00.000Z');
    const { app } = await buildTestApp({ clock: () => moment ?? new Date() });
    const response = await request(app).post(PATH).send(example).expect(200);
    expectConformant(response.body);
    const cards = (response.body as { cards: Record<string, unknown>[] }).cards;
    // Hourly readings 97, 98, 99, 98, 99, 99, 98, 99 %: 99 % (above 98 %, BTS 2017) holds 1 h at
    // 5 h, 3 h and 2 h ago = 3 h of 7 h observed (43 % < 50 %, local choice), so the review reads
    // this patient as in or above range and stable: ready to step down, information only.
    expect(cards.map((c) => [(c['source'] as { topic: { code: string } }).topic.code, c['indicator']])).toStrictEqual([
      ['ready-to-step-down', 'info'],
    ]);
    const [card] = cards;
    const suggestion = (card?.['suggestions'] as { actions: { type: string; resource: Record<string, unknown> }[] }[])[0];
    const action = suggestion?.actions[0];
    // The update carries the whole active order, revised: same type and id, flow 4 → 3 L/min.
    expect(action?.type).toBe('update');
    expect(action?.resource['resourceType']).toBe('ServiceRequest');
    expect(action?.resource['id']).toBe('o2-order-0013');
    expect(action?.resource['status']).toBe('active');
    expect(action?.resource['patientInstruction']).toBe('Oxygen 3 L/min via nasal cannulae. Target SpO2 94-98%');
  });

  it('answers with no cards for a patient with no active oxygen order', async () => {
    const body = copy();
    const prefetch = body['prefetch'] as Record<string, unknown>;
    prefetch['serviceRequests'] = { resourceType: 'Bundle', type: 'searchset', total: 0 };
    const { app } = await buildTestApp({ clock: () => moment ?? new Date() });
    const response = await request(app).post(PATH).send(body).expect(200);
    expect(response.body).toStrictEqual({ cards: [] });
  });

  it('refuses a context without patientId, naming the path', async () => {
    // CDS Hooks library, patient-view: patientId is REQUIRED.
    const body = copy();
    const context = body['context'] as Record<string, unknown>;
    delete context['patientId'];
    const { app } = await buildTestApp();
    const response = await request(app).post(PATH).send(body).expect(400);
    expect(JSON.stringify(response.body)).toContain('context.patientId');
  });

  it('refuses the order-sign hook on the patient-view service', async () => {
    const { app } = await buildTestApp();
    await request(app).post(PATH).send({ ...copy(), hook: 'order-sign' }).expect(400);
  });

  it('fetches the active orders from the FHIR server, following a next page, when they were not prefetched', async () => {
    // CDS Hooks 2.0 §Prefetch Template: absent keys are fetched with the token; searchsets are paged.
    const prefetch = example['prefetch'] as Record<string, unknown>;
    const order = (prefetch['serviceRequests'] as { entry: unknown[] }).entry;
    const server = await startFhirServer((req, origin) => {
      const url = new URL(req.url, origin);
      if (url.pathname.endsWith('/ServiceRequest') && url.searchParams.get('page') === '2') {
        return { status: 200, body: { resourceType: 'Bundle', type: 'searchset', entry: order } };
      }
      if (url.pathname.endsWith('/ServiceRequest')) {
        return {
          status: 200,
          body: { resourceType: 'Bundle', type: 'searchset', entry: [], link: [{ relation: 'next', url: `${origin}/fhir/ServiceRequest?page=2` }] },
        };
      }
      return { status: 200, body: { resourceType: 'Bundle', type: 'searchset', entry: [] } };
    });
    try {
      const body = copy();
      const sent = body['prefetch'] as Record<string, unknown>;
      delete sent['serviceRequests'];
      delete sent['medicationRequests'];
      delete sent['deviceRequests'];
      body['fhirServer'] = server.baseUrl;
      body['fhirAuthorization'] = {
        access_token: 'lb-demo-token',
        token_type: 'Bearer',
        expires_in: 300,
        scope: 'user/ServiceRequest.read user/MedicationRequest.read user/DeviceRequest.read',
        subject: 'oxygen-order-checker',
      };
      const { app } = await buildTestApp({ clock: () => moment ?? new Date() });
      const response = await request(app).post(PATH).send(body).expect(200);
      const codes = (response.body as { cards: { source: { topic: { code: string } } }[] }).cards.map((c) => c.source.topic.code);
      expect(codes).toStrictEqual(['ready-to-step-down']);
    } finally {
      await server.close();
    }
  });
});
