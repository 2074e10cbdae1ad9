import { createReadStream, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { createInterface } from 'node:readline';

/**
 * Reads a FHIR Bulk Data export directory: every `*.ndjson` file in it, one JSON resource a line
 * (FHIR Bulk Data Access IG, "ndjson" output format), streamed line by line. A line that is not JSON
 * is counted, never echoed: an export holds patient data.
 */

export interface ExportLines {
  readonly files: number;
  readonly unreadableLines: number;
}

export async function readExportDir(dir: string, each: (resource: unknown) => void): Promise<ExportLines> {
  const files = readdirSync(dir)
    .filter((name) => name.endsWith('.ndjson'))
    .sort();
  let unreadableLines = 0;
  for (const name of files) {
    const lines = createInterface({ input: createReadStream(join(dir, name), 'utf8'), crlfDelay: Infinity });
    for await (const line of lines) {
      if (line.trim() === '') {
        continue;
      }
      let resource: unknown;
      try {
        resource = JSON.parse(line);
      } catch {
        unreadableLines += 1;
        continue;
      }
      each(resource);
    }
  }
  return { files: files.length, unreadableLines };
}
