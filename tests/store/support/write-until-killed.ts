// Child process for the kill -9 test: records feedback as fast as it can and, after each commit,
// prints the card number it just had acknowledged. The test kills it mid-stream.
// Usage: write-until-killed <SQLite|PostgreSQL> <place: a store file, or a schema of TEST_DATABASE_URL>
import { STORE_KINDS } from './store-kinds.js';
import { accepted, advisory, EHR } from './fixtures.js';

const [kindName, place] = process.argv.slice(2);
const kind = STORE_KINDS.find((k) => k.name === kindName);
if (kind === undefined || place === undefined) {
  throw new Error('usage: write-until-killed <SQLite|PostgreSQL> <place>');
}
const store = await kind.openAt(place);
for (let n = 1; n <= 100_000; n += 1) {
  await store.recordAdvisories([advisory(n)]);
  await store.recordFeedback(EHR, [accepted(n, '2026-03-14T09:41:00Z')], new Date('2026-03-14T10:00:00Z'), {
    maxRecordsPerClientPerDay: 1_000_000,
  });
  process.stdout.write(`${String(n)}\n`);
}
