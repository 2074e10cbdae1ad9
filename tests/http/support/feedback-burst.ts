// A second process that sends feedback as fast as the service answers, several requests in flight,
// and prints one line per item the service acknowledged with a 200, as soon as it is acknowledged.
// Usage: node --import tsx feedback-burst.ts <feedback url> <card uuid,...> <count> <in flight>
const [url = '', cardList = '', countText = '0', inFlightText = '1'] = process.argv.slice(2);
const cards = cardList.split(',');
const count = Number(countText);
const inFlight = Number(inFlightText);
let next = 0;

async function sendOne(n: number): Promise<void> {
  const card = cards[n % cards.length];
  // One distinct decision per item: a changed outcome or time is a new record, not a repeat.
  const outcomeTimestamp = new Date(Date.UTC(2026, 11, 4, 8, 0, 0) + n * 1000).toISOString();
  const item =
    n % 2 === 0
      ? { card, outcome: 'overridden', outcomeTimestamp }
      : { card, outcome: 'accepted', outcomeTimestamp };
  const response = await fetch(url, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ feedback: [item] }),
  });
  await response.arrayBuffer();
  if (response.status === 200) {
    process.stdout.write(`${JSON.stringify({ card, outcomeTimestamp })}\n`);
  }
}

async function worker(): Promise<void> {
  while (next < count) {
    const n = next;
    next += 1;
    try {
      await sendOne(n);
    } catch {
      // The service was killed: nothing more can be acknowledged.
      return;
    }
  }
}

await Promise.all(Array.from({ length: inFlight }, () => worker()));
