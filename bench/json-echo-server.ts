import { readFileSync } from 'node:fs';
import express from 'express';

/**
 * The floor for a JSON call of a given size: a bare express 5 app that parses the posted JSON and
 * answers with a fixed JSON body, here the service's own response to the same request, so bytes in
 * and out match the order-sign case it is compared with. No middleware, no validation, no logging.
 * Run by the bench in its own process on 127.0.0.1 and a free port; it prints one listening line.
 *
 *   node BUILD/bench/json-echo-server.js REPLY.json     (--runner dist: from the bench's build, as the service runs)
 *   node --import tsx bench/json-echo-server.ts REPLY.json   (--runner tsx, and the smoke tests)
 */

const replyFile = process.argv[2];
if (replyFile === undefined) {
  process.stderr.write('usage: json-echo-server.ts REPLY.json\n');
  process.exit(2);
}
const reply: unknown = JSON.parse(readFileSync(replyFile, 'utf8'));

const app = express();
app.disable('x-powered-by');
app.set('etag', false);
app.use(express.json({ limit: '1mb' }));
app.get('/healthz', (_req, res) => {
  res.json({ status: 'ok' });
});
app.post('/echo', (req, res) => {
  // Touch the parsed body so the parse cannot be skipped as unused.
  const size = typeof req.body === 'object' && req.body !== null ? Object.keys(req.body as object).length : 0;
  res.status(size > 0 ? 200 : 400).json(reply);
});

const server = app.listen(0, '127.0.0.1', () => {
  const address = server.address();
  const port = typeof address === 'object' && address !== null ? address.port : 0;
  process.stdout.write(`${JSON.stringify({ url: `http://127.0.0.1:${port}`, msg: 'json-echo listening' })}\n`);
});
const stop = (): void => {
  server.close();
  server.closeAllConnections();
};
process.once('SIGTERM', stop);
process.once('SIGINT', stop);
