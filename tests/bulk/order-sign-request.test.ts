import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildExportIndex, type ExportIndex } from '../../src/bulk/export-index.js';
import { buildOrderSignRequest, orderSignContext, orderSignPrefetch, recordAsOf } from '../../src/bulk/order-sign-request.js';
import { writeDemoExport } from '../../src/bulk/write-demo-export.js';
import { parseHookRequest } from '../../src/cds/parse-hook-request.js';
import { FHIR_ID_PATTERN } from '../../src/cds/schemas.js';

/**
 * `simulate` builds each order's context and prefetch and gathers them without putting the request
 * through the service's request schema, checking only the ids it carries. That is sound only while
 * every request it builds passes that schema whole: checked here for every order of an invented
 * Larkspur Bay export, whose context and prefetch must come through the schema unchanged.
 */

const work = mkdtempSync(join(tmpdir(), 'order-sign-request-test-'));
let index: ExportIndex;

beforeAll(async () => {
  await writeDemoExport(join(work, 'export'), 60, 5);
  index = await buildExportIndex(join(work, 'export'), { indexDir: work });
});

afterAll(() => {
  index.close();
  rmSync(work, { recursive: true, force: true });
});

describe('the order-sign request a replayed order makes', () => {
  it('passes the service request schema for every order, its context and prefetch unchanged', () => {
    let orders = 0;
    for (const order of index.orders()) {
      orders += 1;
      const record = recordAsOf(index, order);
      const parsed = parseHookRequest('oxygen-order-sign', buildOrderSignRequest(order, record));
      expect(parsed.kind, order.reference).toBe('ok');
      if (parsed.kind !== 'ok') continue;
      expect(parsed.request.context, order.reference).toStrictEqual(orderSignContext(order));
      expect(parsed.request.prefetch, order.reference).toStrictEqual(orderSignPrefetch(record));
      expect(FHIR_ID_PATTERN.test(order.patientId), order.reference).toBe(true);
      if (order.encounterId !== undefined) expect(FHIR_ID_PATTERN.test(order.encounterId), order.reference).toBe(true);
    }
    expect(orders).toBe(60);
  });

  it('carries the order as a draft, whatever status the export gives it now', () => {
    for (const order of index.orders()) {
      const entry = orderSignContext(order).draftOrders.entry;
      expect(entry.map((e) => [e.resource.resourceType, e.resource.id, e.resource['status']])).toStrictEqual([[order.type, order.id, 'draft']]);
    }
  });
});
