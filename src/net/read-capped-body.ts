/**
 * Reads at most `maxBytes` of a fetch response body as UTF-8; undefined when it is longer. A declared
 * Content-Length over the cap is refused before reading, and a streamed body is cancelled as soon as
 * it passes the cap, so the rest is never downloaded. Shared by the FHIR client and the JWKS fetch.
 */
export async function readCappedBody(response: Response, maxBytes: number): Promise<string | undefined> {
  const declared = Number(response.headers.get('content-length') ?? Number.NaN);
  if (Number.isFinite(declared) && declared > maxBytes) {
    await response.body?.cancel();
    return undefined;
  }
  if (response.body === null) {
    return '';
  }
  const reader = (response.body as ReadableStream<Uint8Array>).getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) {
      return Buffer.concat(chunks).toString('utf8');
    }
    total += value.byteLength;
    if (total > maxBytes) {
      await reader.cancel();
      return undefined;
    }
    chunks.push(value);
  }
}
