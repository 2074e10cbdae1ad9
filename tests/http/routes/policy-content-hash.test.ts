import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import type { Card } from '../../../src/cds/schemas.js';
import { ENV_DEFAULTS } from '../../../src/config/env-config.js';
import { openTempStore } from '../../helpers/temp-store.js';
import { loadExamples } from '../support/fuzz-requests.js';
import { buildTestApp } from '../test-app.js';

// FIPS 180-4 SHA-256 of the exact bytes of the bundled policy file, as node:crypto computes it.
const FULL_HASH = createHash('sha256').update(readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY)).digest('hex');

describe('the policy content hash on cards and log lines', () => {
  const examples = loadExamples();

  it('names the file by its short hash on every card of every example call', async () => {
    const labels: string[] = [];
    for (const example of examples) {
      const { app } = await buildTestApp({ clock: () => example.now });
      const response = await request(app).post(`/cds-services/${example.serviceId}`).send(example.body);
      labels.push(...((response.body as { cards?: Card[] }).cards ?? []).map((card) => card.source.label));
    }
    expect(labels.length).toBeGreaterThan(examples.length);
    for (const label of labels) {
      expect(label).toContain(`(based-on-bts-2017 v1.0.0 #${FULL_HASH.slice(0, 12)})`);
    }
  });

  it('writes the full hash on the hook-call line and on the feedback line', async () => {
    const example = examples.find((e) => e.file === 'order-sign-pneumonia-above-target.json');
    if (example === undefined) throw new Error('example missing');
    const { app, log } = await buildTestApp({ clock: () => example.now, store: openTempStore().store });
    const response = await request(app).post(`/cds-services/${example.serviceId}`).send(example.body);
    const card = (response.body as { cards: Card[] }).cards[0];
    if (card === undefined) throw new Error('expected a card');
    await request(app)
      .post(`/cds-services/${example.serviceId}/feedback`)
      .send({ feedback: [{ card: card.uuid, outcome: 'overridden', outcomeTimestamp: '2026-11-30T10:02:40Z' }] });
    const lines = log.lines().filter((line) => line['route'] === 'service' || line['route'] === 'feedback');
    expect(lines.map((line) => [line['route'], line['status']])).toStrictEqual([
      ['service', 200],
      ['feedback', 200],
    ]);
    for (const line of lines) {
      expect(line['policyContentHash']).toBe(FULL_HASH);
    }
  });
});
