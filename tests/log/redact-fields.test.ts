import fc from 'fast-check';
import { pino } from 'pino';
import { describe, expect, it } from 'vitest';
import { REDACT_PATHS } from '../../src/log/logger.js';
import { compileRedaction } from '../../src/log/redact-fields.js';
import { createMemoryLog } from './memory-log.js';

// Invented demo values (Larkspur Bay General Hospital); none is a real person or token.
const PATIENT_ID = 'lbgh-pt-000417';
const TOKEN = 'lbgh-demo-access-token-7f3a9c';
const CENSOR = '[Redacted]';

const redact = compileRedaction(REDACT_PATHS, CENSOR);

/** What pino's own `redact` option writes for `line`: the behaviour the compiled walk replaces. */
function pinoRedacted(line: Record<string, unknown>): unknown {
  const log = createMemoryLog();
  pino({ base: null, timestamp: false, redact: { paths: [...REDACT_PATHS], censor: CENSOR } }, log.stream).info(line);
  const { level: _level, ...rest } = log.lines()[0] ?? {};
  return rest;
}

function ourRedacted(line: Record<string, unknown>): unknown {
  return JSON.parse(JSON.stringify(redact(line))) as unknown;
}

// Keys the paths name, and others, at every depth a path reaches and one beyond.
const KEYS = ['id', 'name', 'patientId', 'context', 'prefetch', 'headers', 'authorization', 'req', 'body', 'a', 'b'];
const lineArbitrary = fc.letrec((tie) => ({
  value: fc.oneof({ depthSize: 'small' }, fc.string(), fc.integer(), fc.boolean(), fc.constant(null), tie('object')),
  object: fc.dictionary(fc.constantFrom(...KEYS), tie('value'), { maxKeys: 5 }),
})).object;

describe('compileRedaction', () => {
  it('blanks what pino redaction blanks for any line of plain objects', () => {
    fc.assert(
      fc.property(lineArbitrary, (line) => {
        expect(ourRedacted(line)).toStrictEqual(pinoRedacted(line));
      }),
      { numRuns: 300 },
    );
  });

  it('never changes the object it is given', () => {
    const line = { patientId: PATIENT_ID, nested: { access_token: TOKEN } };
    const before = structuredClone(line);
    const out = redact(line);
    expect(line).toStrictEqual(before);
    expect(out).toStrictEqual({ patientId: CENSOR, nested: { access_token: CENSOR } });
  });

  it('passes a line with nothing to blank on as the same object', () => {
    const line = { requestId: 'req-1', route: 'service', fhirFallback: { used: false, keysFetched: [] } };
    expect(redact(line)).toBe(line);
  });

  describe('edge cases', () => {
    it('blanks a named key inside array entries a wildcard reaches', () => {
      const line = { resources: [{ resourceType: 'Patient', id: PATIENT_ID }] };
      expect(redact(line)).toStrictEqual({ resources: [{ resourceType: 'Patient', id: CENSOR }] });
    });

    it('reads bracketed keys such as set-cookie', () => {
      const only = compileRedaction(['res.headers["set-cookie"]'], CENSOR);
      expect(only({ res: { headers: { 'set-cookie': 'sid=lbgh', vary: 'Origin' } } })).toStrictEqual({
        res: { headers: { 'set-cookie': CENSOR, vary: 'Origin' } },
      });
    });

    it('leaves objects that are not plain (an Error) whole for their serializer', () => {
      const error = new Error('store failed');
      const line = { failure: error };
      expect(redact(line).failure).toBe(error);
    });

    it('leaves a key that is present but undefined absent from the line, as pino does', () => {
      expect(JSON.stringify(redact({ patientId: undefined, route: 'service' }))).toBe('{"route":"service"}');
    });

    it('refuses an empty path when compiled', () => {
      expect(() => compileRedaction([''], CENSOR)).toThrow(/empty path/);
    });
  });
});
