import { readFileSync } from 'node:fs';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { OVERRIDE_REASON_SYSTEM } from '../../../src/cds/build-card.js';
import type { Card } from '../../../src/cds/schemas.js';
import { ENV_DEFAULTS } from '../../../src/config/env-config.js';
import type { Policy } from '../../../src/core/policy.js';
import { parsePolicyText } from '../../../src/policy/parse-policy.js';
import { openTempStore } from '../../helpers/temp-store.js';
import { loadExamples } from '../support/fuzz-requests.js';
import { createPolicyHolder } from '../../../src/live-policy/policy-snapshot.js';
import { bundledSnapshot, buildTestApp } from '../test-app.js';

/**
 * The override reasons a policy sets are offered on the cards, accepted as offered by the feedback
 * route and shown with their words on the review pages; a code no card offers is kept and logged as
 * not offered, as before. Invented Larkspur Bay reasons.
 */

const FEEDBACK = '/cds-services/oxygen-order-sign/feedback';
const example = loadExamples().find((e) => e.file === 'order-sign-pneumonia-above-target.json');
if (example === undefined) throw new Error('example missing');
const NOW = example.now;

const CONSULTANT = { code: 'discussed-with-consultant', display: 'Discussed with the Larkspur Bay consultant on call' };

function larkspurPolicy(merge: 'add' | 'replace'): Policy {
  const text = readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY, 'utf8')
    .replace('  merge: add ', `  merge: ${merge} `)
    .replace('  allCards: []', `  allCards:\n    - { code: ${CONSULTANT.code}, display: "${CONSULTANT.display}" }`);
  const parsed = parsePolicyText(text);
  if (parsed.kind !== 'ok') throw new Error(`policy does not parse: ${JSON.stringify(parsed.problems)}`);
  return parsed.policy;
}

async function issue(policy: Policy) {
  const { store } = openTempStore();
  const holder = createPolicyHolder({ ...(await bundledSnapshot()), policy });
  const { app, log } = await buildTestApp({ store, policy: holder, clock: () => NOW, review: { access: { mode: 'demo' } } });
  const response = await request(app).post('/cds-services/oxygen-order-sign').send(example?.body);
  const cards = (response.body as { cards: Card[] }).cards;
  if (cards.length === 0) throw new Error('expected cards');
  return { app, log, cards };
}

function overridden(cardUuid: string | undefined, code: string): Record<string, unknown> {
  return {
    card: cardUuid,
    outcome: 'overridden',
    overrideReason: { reason: { code, system: OVERRIDE_REASON_SYSTEM } },
    outcomeTimestamp: '2026-11-30T10:02:40Z',
  };
}

const loggedCodes = (log: Awaited<ReturnType<typeof issue>>['log']): unknown[] =>
  log
    .lines()
    .filter((l) => l['route'] === 'feedback')
    .flatMap((l) => (l['feedback'] as { overrideReasonCode?: string }[]).map((item) => item.overrideReasonCode));

describe("the policy's override reasons", () => {
  it('are offered on every card after its own (merge: add), and replace them (merge: replace)', async () => {
    const added = await issue(larkspurPolicy('add'));
    for (const card of added.cards) {
      const codes = (card.overrideReasons ?? []).map((r) => r.code);
      expect(codes.at(-1)).toBe(CONSULTANT.code);
      expect(codes.length).toBeGreaterThan(1);
    }
    const replaced = await issue(larkspurPolicy('replace'));
    for (const card of replaced.cards) {
      expect(card.overrideReasons).toStrictEqual([{ ...CONSULTANT, system: OVERRIDE_REASON_SYSTEM }]);
    }
  });

  it('are accepted as offered by the feedback route and shown with their words on review', async () => {
    const { app, log, cards } = await issue(larkspurPolicy('add'));
    const card = cards[0];
    const response = await request(app).post(FEEDBACK).send({ feedback: [overridden(card?.uuid, CONSULTANT.code)] });
    expect(response.status).toBe(200);
    expect(loggedCodes(log)).toStrictEqual([CONSULTANT.code]);

    const api = await request(app).get(`/review/api/advisories/${card?.uuid ?? ''}`);
    expect(api.status).toBe(200);
    expect(JSON.stringify(api.body)).toContain(`"display":"${CONSULTANT.display}"`);
    const page = await request(app).get(`/review/advisories/${card?.uuid ?? ''}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain(`${CONSULTANT.display} (${CONSULTANT.code})`);
  });

  it('leave a code no card offers recorded and logged as not offered, as before', async () => {
    const { app, log, cards } = await issue(larkspurPolicy('add'));
    const response = await request(app).post(FEEDBACK).send({ feedback: [overridden(cards[0]?.uuid, 'asked-the-registrar')] });
    expect(response.status).toBe(200);
    expect((response.body as { recorded: number }).recorded).toBe(1);
    expect(loggedCodes(log)).toStrictEqual(['(not offered)']);
    const page = await request(app).get(`/review/advisories/${cards[0]?.uuid ?? ''}`);
    // Shown as its bare code: no display is known for it.
    expect(page.text).toContain('asked-the-registrar');
    expect(page.text).not.toContain('asked-the-registrar)');
  });

  it('under the bundled policy, a code only a policy offers is not offered', async () => {
    const bundled = await buildTestApp({ store: openTempStore().store, clock: () => NOW });
    const issued = await request(bundled.app).post('/cds-services/oxygen-order-sign').send(example?.body);
    const bundledCard = (issued.body as { cards: Card[] }).cards[0];
    expect((bundledCard?.overrideReasons ?? []).map((r) => r.code)).not.toContain(CONSULTANT.code);
    await request(bundled.app).post(FEEDBACK).send({ feedback: [overridden(bundledCard?.uuid, CONSULTANT.code)] });
    expect(loggedCodes(bundled.log)).toStrictEqual(['(not offered)']);
  });
});
