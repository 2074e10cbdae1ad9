import { readdirSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { parseAllDocuments } from 'yaml';

/**
 * Reads docker/ for its tests: no container engine runs here (docs/deployment.md), so the files are
 * parsed and checked against the service's own code and configuration instead.
 */

export const ROOT = resolve(import.meta.dirname, '../..');
export const DOCKER_DIR = join(ROOT, 'docker');

export function readDockerFile(...segments: string[]): string {
  return readFileSync(join(DOCKER_DIR, ...segments), 'utf8');
}

/** Every YAML file under docker/, relative to it. */
export function yamlFiles(): string[] {
  const found: string[] = [];
  const walk = (dir: string, prefix: string): void => {
    for (const entry of readdirSync(dir, { withFileTypes: true })) {
      if (entry.isDirectory()) {
        walk(join(dir, entry.name), `${prefix}${entry.name}/`);
      } else if (/\.ya?ml$/.test(entry.name)) {
        found.push(`${prefix}${entry.name}`);
      }
    }
  };
  walk(DOCKER_DIR, '');
  return found.sort();
}

/** The documents of a YAML file, with the parser's errors. */
export function parseYaml(file: string): { docs: unknown[]; errors: string[] } {
  // Merge keys (`<<: *checker`) as Docker Compose reads them.
  const docs = parseAllDocuments(readDockerFile(file), { merge: true });
  const list = Array.isArray(docs) ? docs : [docs];
  return {
    docs: list.map((doc) => doc.toJS() as unknown),
    errors: list.flatMap((doc) => [...doc.errors, ...doc.warnings].map((e) => `${file}: ${e.message}`)),
  };
}

export type Json = Record<string, unknown>;

export function only(file: string): Json {
  const { docs } = parseYaml(file);
  if (docs.length !== 1 || typeof docs[0] !== 'object' || docs[0] === null) {
    throw new Error(`${file}: expected one YAML document`);
  }
  return docs[0] as Json;
}

/** Walks a parsed document by keys and indexes; undefined where the path is missing. */
export function at(value: unknown, ...path: (string | number)[]): unknown {
  let current = value;
  for (const key of path) {
    if (current === null || typeof current !== 'object') {
      return undefined;
    }
    current = (current as Record<string | number, unknown>)[key];
  }
  return current;
}

/** The instructions of one Dockerfile stage: from its FROM to the next, continuation lines joined. */
export interface DockerStage {
  readonly name: string | undefined;
  readonly base: string;
  readonly instructions: readonly { readonly keyword: string; readonly args: string }[];
}

export function dockerStages(text: string): DockerStage[] {
  const lines = text
    .replace(/\\\n/g, ' ')
    .split('\n')
    .map((line) => line.trim())
    .filter((line) => line !== '' && !line.startsWith('#'));
  const stages: { name: string | undefined; base: string; instructions: { keyword: string; args: string }[] }[] = [];
  for (const line of lines) {
    const [keyword = '', ...rest] = line.split(/\s+/);
    const args = rest.join(' ');
    if (keyword.toUpperCase() === 'FROM') {
      const match = /^(\S+)(?:\s+AS\s+(\S+))?$/i.exec(args);
      stages.push({ name: match?.[2], base: match?.[1] ?? args, instructions: [] });
    } else {
      stages.at(-1)?.instructions.push({ keyword: keyword.toUpperCase(), args });
    }
  }
  return stages;
}

/** `ENV A=1 B=2` (the only form the Dockerfile uses) as pairs. */
export function envPairs(args: string): [string, string][] {
  return [...args.matchAll(/([A-Z_][A-Z0-9_]*)=(\S+)/g)].map((m) => [m[1] ?? '', m[2] ?? '']);
}

/**
 * The paths the express app serves, read from src/http (app.ts and routes/): the string literals that
 * start with a slash. A probe naming a path not served there fails its test.
 */
export function servedPaths(): Set<string> {
  const http = join(ROOT, 'src', 'http');
  const files = [join(http, 'app.ts'), ...readdirSync(join(http, 'routes')).map((name) => join(http, 'routes', name))];
  const paths = new Set<string>();
  for (const file of files) {
    for (const match of readFileSync(file, 'utf8').matchAll(/['"`](\/[a-z][a-z0-9/:_-]*)['"`]/g)) {
      paths.add(match[1] ?? '');
    }
  }
  return paths;
}
