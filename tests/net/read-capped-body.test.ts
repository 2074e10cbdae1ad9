import { describe, expect, it } from 'vitest';
import { readCappedBody } from '../../src/net/read-capped-body.js';

function streamed(chunks: readonly string[]): { response: Response; pulled: () => number } {
  let pulled = 0;
  const encoder = new TextEncoder();
  const body = new ReadableStream<Uint8Array>({
    pull(controller) {
      const next = chunks[pulled];
      pulled += 1;
      if (next === undefined) {
        controller.close();
      } else {
        controller.enqueue(encoder.encode(next));
      }
    },
  });
  return { response: new Response(body), pulled: () => pulled };
}

describe('readCappedBody', () => {
  it('returns a body within the cap as UTF-8 text', async () => {
    expect(await readCappedBody(new Response('{"resourceType":"Bundle"}'), 1024)).toBe('{"resourceType":"Bundle"}');
  });

  it('refuses a declared Content-Length over the cap without reading', async () => {
    const response = new Response('x'.repeat(10), { headers: { 'content-length': '5000' } });
    expect(await readCappedBody(response, 100)).toBeUndefined();
  });

  describe('edge cases', () => {
    it('stops reading a streamed body as soon as it passes the cap', async () => {
      const { response, pulled } = streamed(Array.from({ length: 1000 }, () => 'x'.repeat(100)));
      expect(await readCappedBody(response, 250)).toBeUndefined();
      expect(pulled()).toBeLessThan(10);
    });

    it('accepts a body of exactly the cap', async () => {
      expect(await readCappedBody(new Response('abcde'), 5)).toBe('abcde');
    });

    it('reads an empty body as empty text', async () => {
      expect(await readCappedBody(new Response(null), 5)).toBe('');
    });
  });
});
