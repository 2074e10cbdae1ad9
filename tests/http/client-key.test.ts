import express from 'express';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { allowEveryRequest, requireAuthentication, type Authenticate } from '../../src/http/auth.js';
import { clientKeyOf } from '../../src/http/client-key.js';
import { requestContext } from '../../src/http/request-context.js';
import { createLogger } from '../../src/log/logger.js';

/** Whose share of the evaluation slots a call counts against (src/http/client-key.ts). */

async function keyFor(authenticate: Authenticate): Promise<unknown> {
  const app = express();
  const beginContext = requestContext(createLogger({ level: 'silent' }), () => 'req-1');
  app.use((req, res, next) => {
    beginContext(req, res);
    next();
  });
  app.use(requireAuthentication(authenticate));
  app.get('/key', (req, res) => {
    res.json({ key: clientKeyOf(req, res) });
  });
  return (await request(app).get('/key')).body;
}

const fromIssuer =
  (iss: string, tenant?: string): Authenticate =>
  () =>
    Promise.resolve({
      kind: 'allowed',
      client: iss,
      iss,
      ...(tenant === undefined ? {} : { tenant }),
      fhirServers: { kind: 'loopback-only' },
    });

describe('the client a call counts against', () => {
  it("is the caller's address in the demo, where every caller shares one made-up client", async () => {
    // supertest calls over loopback; the address is IPv4 or IPv4-mapped IPv6 as the socket reports it.
    expect(await keyFor(allowEveryRequest)).toMatchObject({ key: expect.stringMatching(/^address:(::ffff:)?127\.0\.0\.1$/) });
  });

  it("is the token's issuer in production, whatever address it calls from", async () => {
    expect(await keyFor(fromIssuer('https://ehr.larkspur-bay.example'))).toStrictEqual({
      key: 'iss:https://ehr.larkspur-bay.example',
    });
  });

  describe('edge cases', () => {
    it('ignores the tenant claim, which a client could vary to widen its share', async () => {
      const one = await keyFor(fromIssuer('https://ehr.larkspur-bay.example', 'ward-4'));
      const other = await keyFor(fromIssuer('https://ehr.larkspur-bay.example', 'made-up-tenant'));
      expect(one).toStrictEqual(other);
    });
  });
});
