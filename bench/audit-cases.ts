import { randomUUID } from 'node:crypto';
import { checkCall, type HookExample } from './cases.js';
import type { ChildServer } from './child-server.js';
import type { HttpContext } from './http-cases.js';
import { loadProblems, runLoad, type LoadResult, type LoadSpec } from './load-test.js';
import { startAuditService } from './service-process.js';

/**
 * What the audit trail costs a hook call, in one run: the order-sign cases against two processes of
 * bench/audit-service.ts that differ only in the audit write (on as shipped, off as a no-op), taking
 * turns so drift over the run falls on both; then the feedback route, one new item per call.
 *
 * Every call carries a fresh hookInstance. A card's uuid is derived from the hookInstance
 * (src/cds/stable-uuid.ts), so a body sent again yields cards already on record and an audit write
 * that inserts nothing; only fresh calls measure the write a real call makes.
 */
export interface AuditPair {
  readonly example: string;
  readonly cards: number;
  readonly on: LoadResult;
  readonly off: LoadResult;
}

export interface AuditMeasurements {
  readonly pairs: readonly AuditPair[];
  readonly feedback: LoadResult;
  /** Distinct cards issued before the feedback load, which its items refer to in turn. */
  readonly feedbackCards: number;
  readonly problems: readonly string[];
}

/** A maker of the example's body, each with a new hookInstance and otherwise the same bytes. */
export function freshHookInstances(body: string, newId: () => string = randomUUID): () => string {
  const hookInstance = (JSON.parse(body) as { hookInstance?: unknown }).hookInstance;
  if (typeof hookInstance !== 'string') {
    throw new Error('the request has no hookInstance to replace');
  }
  const marker = `"hookInstance":${JSON.stringify(hookInstance)}`;
  const at = body.indexOf(marker);
  if (at < 0 || body.indexOf(marker, at + 1) >= 0) {
    throw new Error('the request body must hold its hookInstance once, as compact JSON');
  }
  const before = `${body.slice(0, at)}"hookInstance":"`;
  const after = `"${body.slice(at + marker.length)}`;
  return () => `${before}${newId()}${after}`;
}

export interface IssuedCard {
  readonly uuid: string;
  /** The first override reason the card offers, if any, sent back as a clinician would pick it. */
  readonly reason?: { readonly system?: string; readonly code: string };
}

/**
 * Feedback bodies of one item each, never the same twice: the cards are taken in turn and every item
 * has its own outcome time, so each is a new record (the dedup key includes the outcome time).
 */
export function feedbackBodies(cards: readonly IssuedCard[], startMs: number): () => string {
  if (cards.length === 0) {
    throw new Error('feedback needs at least one issued card');
  }
  let sent = 0;
  return () => {
    const card = cards[sent % cards.length] as IssuedCard;
    const outcomeTimestamp = new Date(startMs + sent).toISOString();
    sent += 1;
    const item =
      card.reason === undefined
        ? { card: card.uuid, outcome: 'overridden', outcomeTimestamp }
        : { card: card.uuid, outcome: 'overridden', overrideReason: { reason: card.reason }, outcomeTimestamp };
    return JSON.stringify({ feedback: [item] });
  };
}

function cardsOf(body: string): IssuedCard[] {
  const parsed = JSON.parse(body) as {
    cards?: { uuid?: string; overrideReasons?: { system?: string; code?: string }[] }[];
  };
  return (parsed.cards ?? []).flatMap((card) => {
    if (card.uuid === undefined) {
      return [];
    }
    const first = card.overrideReasons?.[0];
    if (first?.code === undefined) {
      return [{ uuid: card.uuid }];
    }
    return [{ uuid: card.uuid, reason: first.system === undefined ? { code: first.code } : { system: first.system, code: first.code } }];
  });
}

/** Fresh hook calls made before the feedback load; their cards get a few feedback items each. */
const FEEDBACK_CARD_CALLS = 200;

async function postJson(url: string, body: string): Promise<{ status: number; text: string }> {
  const response = await fetch(url, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body,
    signal: AbortSignal.timeout(10_000),
  });
  return { status: response.status, text: await response.text() };
}

/** One feedback item on `card`; answers what the service said it did with it. */
async function sendFeedback(service: ChildServer, serviceId: string, body: string): Promise<Record<string, unknown>> {
  const answer = await postJson(`${service.url}/cds-services/${serviceId}/feedback`, body);
  if (answer.status !== 200) {
    throw new Error(`feedback answered ${answer.status}: ${answer.text.slice(0, 600)}`);
  }
  return JSON.parse(answer.text) as Record<string, unknown>;
}

export async function measureAudit(ctx: HttpContext): Promise<AuditMeasurements> {
  const { examples, options, progress } = ctx;
  const sign = examples.sign;
  const largest = examples.largestSign;
  progress('starting the audit-on and audit-off services (bench/audit-service.ts)');
  const on = await startAuditService(ctx.root, ctx.built, 'audit-on');
  let off: ChildServer | undefined;
  try {
    off = await startAuditService(ctx.root, ctx.built, 'audit-off');
    const url = (service: ChildServer, example: HookExample): string => `${service.url}/cds-services/${example.serviceId}`;
    const makers = new Map(sign.map((example) => [example.name, freshHookInstances(example.body)]));
    const maker = (example: HookExample): (() => string) => {
      const found = makers.get(example.name);
      if (found === undefined) {
        throw new Error(`${example.name}: no body maker`);
      }
      return found;
    };

    // Both arms must answer every case alike; only the audit write may differ.
    const cardCounts = new Map<string, number>();
    for (const example of sign) {
      const onCheck = await checkCall(url(on, example), { method: 'POST', body: maker(example)() }, 'cards');
      const offCheck = await checkCall(url(off, example), { method: 'POST', body: maker(example)() }, 'cards');
      if (onCheck.items !== offCheck.items) {
        throw new Error(`${example.name}: ${onCheck.items} cards with the audit on, ${offCheck.items} with it off`);
      }
      cardCounts.set(example.name, onCheck.items);
    }
    // The off arm must really record nothing, and the on arm everything: feedback on a card each just
    // issued is matched to a recorded card (unknownCards 0) on one and unmatched on the other.
    for (const [arm, service, expected] of [['audit-on', on, 0], ['audit-off', off, 1]] as const) {
      const issued = cardsOf((await postJson(url(service, largest), maker(largest)())).text);
      const answer = await sendFeedback(service, largest.serviceId, feedbackBodies(issued.slice(0, 1), Date.now())());
      if (answer['unknownCards'] !== expected) {
        throw new Error(`${arm}: feedback on a card it just issued answered ${JSON.stringify(answer)}`);
      }
    }

    const spec = (label: string, service: ChildServer, example: HookExample): LoadSpec => ({
      label,
      url: url(service, example),
      method: 'POST',
      body: example.body,
      makeBody: maker(example),
      connections: options.connections,
      durationS: options.durationS,
      warmupS: options.warmupS,
    });
    progress('priming both audit services');
    for (const service of [on, off]) {
      await runLoad({ ...spec('prime', service, largest), durationS: options.primeS, warmupS: 0 });
    }

    const pairs: AuditPair[] = [];
    const measure = async (label: string, service: ChildServer, example: HookExample): Promise<LoadResult> => {
      const result = await runLoad(spec(label, service, example));
      progress(`${label}: ${Math.round(result.reqPerSec)} req/s, p99 ${result.latencyMs.p99} ms`);
      return result;
    };
    for (const [index, example] of sign.entries()) {
      // Turns alternate (on first, then off first), so a machine getting busier does not favour one arm.
      const onFirst = index % 2 === 0;
      const first = await measure(`${example.name} (audit ${onFirst ? 'on' : 'off'})`, onFirst ? on : off, example);
      const second = await measure(`${example.name} (audit ${onFirst ? 'off' : 'on'})`, onFirst ? off : on, example);
      pairs.push({
        example: example.name,
        cards: cardCounts.get(example.name) ?? 0,
        on: onFirst ? first : second,
        off: onFirst ? second : first,
      });
    }

    // Feedback refers to cards the service issued and recorded, a few items per card as an EHR sends.
    const feedbackCardCalls = FEEDBACK_CARD_CALLS;
    progress(`issuing ${feedbackCardCalls} fresh ${largest.name} calls for the feedback to refer to`);
    const issued: IssuedCard[] = [];
    for (let call = 0; call < feedbackCardCalls; call += 1) {
      const answer = await postJson(url(on, largest), maker(largest)());
      if (answer.status !== 200) {
        throw new Error(`${largest.name} answered ${answer.status} while issuing cards for feedback`);
      }
      issued.push(...cardsOf(answer.text));
    }
    const bodies = feedbackBodies(issued, Date.now() - 60_000);
    const feedbackUrl = `${on.url}/cds-services/${largest.serviceId}/feedback`;
    const probe = bodies();
    const probeAnswer = await sendFeedback(on, largest.serviceId, probe);
    if (probeAnswer['recorded'] !== 1 || probeAnswer['unknownCards'] !== 0) {
      throw new Error(`one new feedback item on an issued card answered ${JSON.stringify(probeAnswer)}`);
    }
    const feedback = await runLoad({
      label: 'POST feedback, one new item a call (audit-on service)',
      url: feedbackUrl,
      method: 'POST',
      body: probe,
      makeBody: bodies,
      connections: options.connections,
      durationS: options.durationS,
      warmupS: options.warmupS,
    });
    progress(`${feedback.label}: ${Math.round(feedback.reqPerSec)} req/s, p99 ${feedback.latencyMs.p99} ms`);

    const problems = [...pairs.flatMap((pair) => [...loadProblems(pair.on), ...loadProblems(pair.off)]), ...loadProblems(feedback)];
    return { pairs, feedback, feedbackCards: issued.length, problems };
  } finally {
    await off?.stop();
    await on.stop();
    progress('stopped the audit services');
  }
}
