import { readFile } from 'node:fs/promises';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { parseTrustText } from '../../src/security/trust-config.js';

/** docs/security.md promises a complete example trust file; it must load as the service loads it. */
const DOC = fileURLToPath(new URL('../../docs/security.md', import.meta.url));

async function yamlBlocks(): Promise<string[]> {
  const text = await readFile(DOC, 'utf8');
  return [...text.matchAll(/```yaml\n([\s\S]*?)```/g)].map((match) => match[1] ?? '');
}

describe('docs/security.md', () => {
  it('holds one example trust file, and it loads with https required', async () => {
    const blocks = await yamlBlocks();
    expect(blocks.length).toBe(1);
    const parsed = parseTrustText(blocks[0] ?? '', { requireHttps: true });
    expect(parsed.kind === 'ok' ? [...parsed.trust.clients.keys()] : parsed).toStrictEqual([
      'https://ehr.larkspur-bay.example',
      'https://theatres.larkspur-bay.example/',
    ]);
  });

  describe('edge cases', () => {
    it('uses every key name of the trust file in its example', async () => {
      const [example = ''] = await yamlBlocks();
      for (const key of ['iss', 'jwks', 'jwksUrl', 'jkuAllowlist', 'algorithms', 'tenants', 'fhirServers']) {
        expect(example).toMatch(new RegExp(`\\b${key}:`));
      }
    });
  });
});
