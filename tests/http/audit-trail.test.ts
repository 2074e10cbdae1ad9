import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import type { Card } from '../../src/cds/schemas.js';
import { ENV_DEFAULTS } from '../../src/config/env-config.js';
import { DEMO_CLIENT } from '../../src/http/auth.js';
import { STORE_FILE_NAME } from '../../src/store/open-store.js';
import type { Store } from '../../src/store/store.js';
import { openTempStore, testPatientKey } from '../helpers/temp-store.js';
import { loadExamples } from './support/fuzz-requests.js';
import { buildTestApp } from './test-app.js';

/**
 * The audit trail: every card a hook call returns is committed to the store before the answer goes
 * out, with no patient identifier in the stored row; and a store that fails never blocks the advice.
 */

const examples = loadExamples();

/** Every advisory row as the database holds it, as JSON text: what an operator with the file sees. */
function rawAdvisoryRows(dataDir: string): Record<string, unknown>[] {
  const db = new Database(join(dataDir, STORE_FILE_NAME), { readonly: true });
  try {
    return db.prepare('SELECT * FROM advisory').all() as Record<string, unknown>[];
  } finally {
    db.close();
  }
}

function isSortedByTime(items: readonly { readonly at: string }[]): boolean {
  return items.every((item, index) => index === 0 || Date.parse(items[index - 1]?.at ?? '') <= Date.parse(item.at));
}

describe('the audit trail of the hook route', () => {
  it.each(examples.map((example) => [example.file, example] as const))(
    'records every card of %s, once, with no patient identifier in the stored row',
    async (_file, example) => {
      const { store, dataDir } = openTempStore();
      const { app } = await buildTestApp({ store, clock: () => example.now });
      const response = await request(app).post(`/cds-services/${example.serviceId}`).send(example.body);
      expect(response.status).toBe(200);
      const cards = (response.body as { cards: Card[] }).cards;
      expect(cards.length).toBeGreaterThan(0);

      const rows = rawAdvisoryRows(dataDir);
      expect(rows.map((row) => row['card_uuid']).sort()).toStrictEqual(cards.map((card) => card.uuid).sort());
      for (const card of cards) {
        const advisory = await store.getAdvisory(card.uuid ?? '');
        expect(advisory).toBeDefined();
        if (advisory === undefined) continue;
        expect([advisory.summary, advisory.indicator, advisory.detail]).toStrictEqual([
          card.summary,
          card.indicator,
          card.detail ?? '',
        ]);
        expect(advisory.suggestionUuids).toStrictEqual((card.suggestions ?? []).map((s) => s.uuid));
        expect(advisory.ruleId).toBe(card.source.topic?.code);
        expect([advisory.serviceId, advisory.hook, advisory.hookInstance]).toStrictEqual([
          example.serviceId,
          example.body['hook'],
          example.body['hookInstance'],
        ]);
        expect(advisory.client).toStrictEqual({ iss: DEMO_CLIENT.iss });
        expect(advisory.issuedAt).toBe(example.now.toISOString());
        expect(advisory.workings).toContain('Inputs');
        expect(isSortedByTime(advisory.series.spo2)).toBe(true);
        expect(isSortedByTime(advisory.series.oxygen)).toBe(true);
        expect(new Set(advisory.series.spo2.map((p) => `${p.at} ${p.spo2Percent}`)).size).toBe(advisory.series.spo2.length);
      }
      for (const row of rows) {
        const text = JSON.stringify(row);
        for (const secret of example.secrets) {
          expect(text, `${example.file}: a stored row holds '${secret}'`).not.toContain(secret);
        }
      }
    },
  );

  it('names the policy by id, version and the sha256 of the file it was read from', async () => {
    const example = examples.find((e) => e.file === 'order-sign-pneumonia-above-target.json');
    if (example === undefined) throw new Error('example missing');
    const { store } = openTempStore();
    const { app } = await buildTestApp({ store, clock: () => example.now });
    const response = await request(app).post(`/cds-services/${example.serviceId}`).send(example.body);
    const first = (response.body as { cards: Card[] }).cards[0];
    const advisory = await store.getAdvisory(first?.uuid ?? '');
    // FIPS 180-4 SHA-256 of the bundled policy file's bytes, as node:crypto computes it
    const expected = createHash('sha256').update(readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY)).digest('hex');
    expect(advisory?.policy).toStrictEqual({ id: 'based-on-bts-2017', version: '1.0.0', contentHash: expected });
  });

  it('keys one patient alike across calls and another patient apart, without their ids', async () => {
    const [one, two] = examples.filter((e) => e.serviceId === 'oxygen-order-sign');
    if (one === undefined || two === undefined) throw new Error('examples missing');
    const { store } = openTempStore();
    const keys = async (example: typeof one, hookInstance: string): Promise<string[]> => {
      const { app } = await buildTestApp({ store, clock: () => example.now });
      const response = await request(app)
        .post(`/cds-services/${example.serviceId}`)
        .send({ ...example.body, hookInstance });
      const cards = (response.body as { cards: Card[] }).cards;
      const advisories = await Promise.all(cards.map((card) => store.getAdvisory(card.uuid ?? '')));
      return [...new Set(advisories.map((a) => a?.patientKey ?? 'missing'))];
    };
    const first = await keys(one, '0e7c5d8a-1111-4c1e-9c3b-7a2f0d4e5b61');
    const again = await keys(one, '0e7c5d8a-2222-4c1e-9c3b-7a2f0d4e5b61');
    const other = await keys(two, '0e7c5d8a-3333-4c1e-9c3b-7a2f0d4e5b61');
    const patientId = (one.body['context'] as { patientId: string }).patientId;
    expect(first).toStrictEqual([testPatientKey({ patientId })]);
    expect(again).toStrictEqual(first);
    expect(other).toHaveLength(1);
    expect(other).not.toStrictEqual(first);
  });

  describe('edge cases', () => {
    it('still answers 200 with the cards when the store fails, and logs card uuids and rule ids only', async () => {
      const example = examples.find((e) => e.file === 'order-sign-pneumonia-above-target.json');
      if (example === undefined) throw new Error('example missing');
      const { store: real } = openTempStore();
      const failing: Store = {
        ...real,
        recordAdvisories: () => Promise.reject(Object.assign(new Error(`disk full for ${example.secrets.join(' ')}`), { code: 'SQLITE_FULL' })),
      };
      const { app, log } = await buildTestApp({ store: failing, clock: () => example.now });
      const first = await request(app).post(`/cds-services/${example.serviceId}`).send(example.body);
      const second = await request(app).post(`/cds-services/${example.serviceId}`).send(example.body);
      // CDS Hooks 2.0: the service advises and never blocks; the audit trail must not block it either
      expect([first.status, second.status]).toStrictEqual([200, 200]);
      const cards = (first.body as { cards: Card[] }).cards;
      expect(cards.length).toBeGreaterThan(0);
      const failures = log.lines().filter((line) => line['audit'] === 'write-failed');
      expect(failures.map((line) => line['auditFailures'])).toStrictEqual([1, 2]);
      expect(failures[0]).toMatchObject({
        level: 50,
        requestId: 'req-1',
        cardUuids: cards.map((card) => card.uuid),
        ruleIds: cards.map((card) => card.source.topic?.code),
        errorType: 'Error',
        errorCode: 'SQLITE_FULL',
      });
      for (const secret of example.secrets) {
        expect(log.text()).not.toContain(secret);
      }
    });
  });
});
