import { createPublicKey, type JsonWebKey } from 'node:crypto';
import { readFileSync } from 'node:fs';
import express from 'express';
import jwt from 'jsonwebtoken';

/**
 * The HTTP baseline of issue 9: a bare express 5 app that does what any hook endpoint must do and
 * nothing of this service's own work. It parses the same body, verifies the same ES384 bearer token
 * with jsonwebtoken (signature, issuer, audience, exp/iat, a jti present; the KeyObject built once at
 * start) and answers with a fixed answer of the same bytes as the service's answer to that call. The
 * bench tells it which answer by the `x-bench-case` header. No middleware beyond the JSON parser, no
 * logging. Run by the bench in its own process on 127.0.0.1 and a free port; it prints one listening
 * line.
 *
 *   node BUILD/bench/token-baseline-server.js CONFIG.json     (--runner dist: from the bench's build, as the service runs)
 *   node --import tsx bench/token-baseline-server.ts CONFIG.json   (--runner tsx, and the smoke tests)
 */

export interface TokenBaselineConfig {
  readonly issuer: string;
  readonly publicUrl: string;
  readonly publicJwk: Readonly<Record<string, unknown>>;
  readonly bodyLimitBytes: number;
  /** The service's answer text for each case, as the check call before the load received it. */
  readonly answers: Readonly<Record<string, string>>;
}

const configFile = process.argv[2];
if (configFile === undefined) {
  process.stderr.write('usage: token-baseline-server.ts CONFIG.json\n');
  process.exit(2);
}
const config = JSON.parse(readFileSync(configFile, 'utf8')) as TokenBaselineConfig;
const publicKey = createPublicKey({ key: config.publicJwk as JsonWebKey, format: 'jwk' });
// Parsed once: res.json serialises the answer on every call, as the service serialises its own.
const answers = new Map(Object.entries(config.answers).map(([name, text]) => [name, JSON.parse(text) as unknown]));

const app = express();
app.disable('x-powered-by');
app.set('etag', false);
app.use(express.json({ limit: config.bodyLimitBytes }));
app.get('/healthz', (_req, res) => {
  res.json({ status: 'ok' });
});
app.post('/cds-services/:id', (req, res) => {
  const header = req.headers.authorization ?? '';
  const token = header.startsWith('Bearer ') ? header.slice('Bearer '.length) : '';
  let payload: jwt.JwtPayload | string;
  try {
    payload = jwt.verify(token, publicKey, {
      algorithms: ['ES384'],
      audience: `${config.publicUrl}/cds-services/${req.params.id}`,
      issuer: config.issuer,
      clockTolerance: 60,
    });
  } catch {
    res.status(401).json({ error: 'invalid token' });
    return;
  }
  const answer = answers.get(String(req.headers['x-bench-case']));
  // Touch the parsed body so the parse cannot be skipped as unused.
  const body = req.body as { hookInstance?: unknown } | undefined;
  if (typeof payload === 'string' || typeof payload.jti !== 'string' || typeof body?.hookInstance !== 'string' || answer === undefined) {
    res.status(400).json({ error: 'bad call' });
    return;
  }
  res.json(answer);
});

const server = app.listen(0, '127.0.0.1', () => {
  const address = server.address();
  const port = typeof address === 'object' && address !== null ? address.port : 0;
  process.stdout.write(`${JSON.stringify({ url: `http://127.0.0.1:${port}`, msg: 'token baseline listening' })}\n`);
});
const stop = (): void => {
  server.close();
  server.closeAllConnections();
};
process.once('SIGTERM', stop);
process.once('SIGINT', stop);
