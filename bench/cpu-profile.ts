import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { SourceMap, type SourceMapPayload, type SourceMapping } from 'node:module';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

/**
 * Reads a V8 `.cpuprofile` (as `node --cpu-prof` writes it) into the few lines the report needs:
 * where the busy time went, by frame (self time), by function including callees, and by area
 * (our source folders, each npm package, node internals, V8 built-ins, the collector).
 */

interface CallFrame {
  readonly functionName: string;
  readonly url: string;
  readonly lineNumber: number;
  readonly columnNumber: number;
}
interface ProfileNode {
  readonly id: number;
  readonly callFrame: CallFrame;
  readonly children?: readonly number[];
}
interface CpuProfile {
  readonly nodes: readonly ProfileNode[];
  readonly samples: readonly number[];
}

export interface FrameShare {
  readonly frame: string;
  readonly area: string;
  /** Percent of busy samples (idle left out). */
  readonly percent: number;
}

export interface ProfileSummary {
  readonly busySamples: number;
  /** Percent of all samples in which the process was idle (waiting on I/O). */
  readonly idlePercent: number;
  readonly topSelf: readonly FrameShare[];
  /** Our own functions (src/) by time including their callees. */
  readonly topInclusive: readonly FrameShare[];
  readonly byArea: readonly { readonly area: string; readonly percent: number }[];
}

const SPECIAL = new Set(['(garbage collector)', '(program)', '(root)', '(idle)']);

export const NATIVE_AREA = 'native (V8 built-ins, node bindings)';

/** Where a frame is, with its line in the file named (1-based) when that line can be trusted. */
interface Location {
  readonly area: string;
  readonly file: string;
  readonly line: number | undefined;
}

const sourceMaps = new Map<string, SourceMap | undefined>();

function sourceMapOf(path: string): SourceMap | undefined {
  if (!sourceMaps.has(path)) {
    const mapFile = `${path}.map`;
    sourceMaps.set(path, existsSync(mapFile) ? new SourceMap(JSON.parse(readFileSync(mapFile, 'utf8')) as SourceMapPayload) : undefined);
  }
  return sourceMaps.get(path);
}

/**
 * `codeRoots` are the folders our TypeScript runs from: `src/` under tsx, or a private build's `dist/`
 * (named back to `src/`, since the emitted files mirror it, with lines mapped through tsc's source
 * maps). Lines of code run through tsx are left out: they are positions in tsx's output.
 */
function locate(frame: CallFrame, codeRoots: readonly string[]): Location {
  const url = frame.url;
  const path = url.startsWith('file://') ? fileURLToPath(url) : url;
  const jsLine = frame.lineNumber >= 0 ? frame.lineNumber + 1 : undefined;
  const modules = path.lastIndexOf('/node_modules/');
  if (modules >= 0) {
    const rest = path.slice(modules + '/node_modules/'.length).split('/');
    const name = rest[0]?.startsWith('@') === true ? `${rest[0]}/${rest[1] ?? ''}` : (rest[0] ?? '?');
    return { area: `npm: ${name}`, file: `${name}/${rest.slice(name.split('/').length).join('/')}`, line: jsLine };
  }
  for (const root of codeRoots) {
    if (path.startsWith(root)) {
      const file = `src/${path.slice(root.length).replace(/\.js$/, '.ts')}`;
      const parts = file.split('/');
      const area = parts.length > 3 ? parts.slice(0, 3).join('/') : parts.slice(0, 2).join('/');
      const entry = path.endsWith('.js') ? sourceMapOf(path)?.findEntry(frame.lineNumber, frame.columnNumber) : undefined;
      const line = entry !== undefined && 'originalLine' in entry ? (entry as SourceMapping).originalLine + 1 : undefined;
      return { area: area.replace(/\.ts$/, ''), file, line };
    }
  }
  if (path.includes('/bench/')) {
    // Named by its source file, whether it ran through tsx or from the bench's build.
    return { area: 'bench harness', file: `bench/${path.slice(path.lastIndexOf('/bench/') + 7).replace(/\.js$/, '.ts')}`, line: undefined };
  }
  if (path.startsWith('node:')) {
    return { area: 'node internals', file: path, line: jsLine };
  }
  return { area: path === '' ? NATIVE_AREA : 'other', file: path, line: jsLine };
}

function frameName(frame: CallFrame, where: Location): string {
  if (SPECIAL.has(frame.functionName)) {
    return frame.functionName;
  }
  const name = frame.functionName === '' ? '(anonymous)' : frame.functionName;
  if (where.file === '') {
    return `${name} (native)`;
  }
  return where.line === undefined ? `${name} ${where.file}` : `${name} ${where.file}:${where.line}`;
}

function percentages(counts: ReadonlyMap<string, { area: string; count: number }>, total: number, top: number) {
  return [...counts.entries()]
    .sort((a, b) => b[1].count - a[1].count)
    .slice(0, top)
    .map(([frame, { area, count }]) => ({ frame, area, percent: (100 * count) / total }));
}

/** Where the profiled work starts: a file, e.g. `src/http/routes/cds-service.ts`, and perhaps a function in it. */
export interface ProfileStart {
  readonly file: string;
  readonly functionName?: string;
}

/**
 * Samples before the first one inside `startAt` are start-up (module loading, compiling, warm-up)
 * and are left out.
 */
export function summariseProfile(
  profile: CpuProfile,
  codeRoots: readonly string[],
  startAt: ProfileStart,
  top = 10,
): ProfileSummary {
  const parent = new Map<number, number>();
  for (const node of profile.nodes) {
    for (const child of node.children ?? []) {
      parent.set(child, node.id);
    }
  }
  const described = new Map<number, { frame: string; area: string; file: string; functionName: string }>();
  for (const node of profile.nodes) {
    const where = locate(node.callFrame, codeRoots);
    const special = SPECIAL.has(node.callFrame.functionName);
    described.set(node.id, {
      frame: frameName(node.callFrame, where),
      area: special ? node.callFrame.functionName : where.area,
      file: where.file,
      functionName: node.callFrame.functionName,
    });
  }
  const self = new Map<string, { area: string; count: number }>();
  const inclusive = new Map<string, { area: string; count: number }>();
  const areas = new Map<string, { area: string; count: number }>();
  let idle = 0;
  let busy = 0;
  const bump = (map: Map<string, { area: string; count: number }>, key: string, area: string): void => {
    const entry = map.get(key) ?? { area, count: 0 };
    entry.count += 1;
    map.set(key, entry);
  };
  const stackOf = (id: number): number[] => {
    const stack: number[] = [];
    for (let at: number | undefined = id; at !== undefined; at = parent.get(at)) {
      stack.push(at);
    }
    return stack;
  };
  const starts = (at: number): boolean => {
    const frame = described.get(at);
    return (
      frame !== undefined &&
      frame.file === startAt.file &&
      (startAt.functionName === undefined || frame.functionName === startAt.functionName)
    );
  };
  const first = profile.samples.findIndex((id) => stackOf(id).some(starts));
  if (first < 0) {
    throw new Error(`the CPU profile never reached ${startAt.functionName ?? ''} ${startAt.file}`);
  }
  for (const id of profile.samples.slice(first)) {
    const info = described.get(id);
    if (info === undefined || info.frame === '(idle)') {
      idle += 1;
      continue;
    }
    busy += 1;
    bump(self, info.frame, info.area);
    bump(areas, info.area, info.area);
    const seen = new Set<string>();
    for (const at of stackOf(id)) {
      const frame = described.get(at);
      if (frame !== undefined && frame.area.startsWith('src/') && !seen.has(frame.frame)) {
        seen.add(frame.frame);
        bump(inclusive, frame.frame, frame.area);
      }
    }
  }
  if (busy === 0) {
    throw new Error('the CPU profile holds no busy samples');
  }
  return {
    busySamples: busy,
    idlePercent: (100 * idle) / (idle + busy),
    topSelf: percentages(self, busy, top),
    topInclusive: percentages(inclusive, busy, top),
    byArea: percentages(areas, busy, areas.size).map(({ frame, percent }) => ({ area: frame, percent })),
  };
}

/**
 * Every profile `node --cpu-prof --cpu-prof-dir=folder` wrote: one per thread, since a loader such as
 * tsx runs its hooks on a thread of its own.
 */
export function readProfiles(folder: string): CpuProfile[] {
  return readdirSync(folder)
    .filter((file) => file.endsWith('.cpuprofile'))
    .map((file) => JSON.parse(readFileSync(join(folder, file), 'utf8')) as CpuProfile);
}

/** Summarises the profile of the thread that ran the work `startAt` names. */
export function summariseThreadOf(
  profiles: readonly CpuProfile[],
  codeRoots: readonly string[],
  startAt: ProfileStart,
): ProfileSummary {
  const reaches = (profile: CpuProfile): boolean =>
    profile.nodes.some(
      (node) =>
        locate(node.callFrame, codeRoots).file === startAt.file &&
        (startAt.functionName === undefined || node.callFrame.functionName === startAt.functionName),
    );
  const thread = profiles.find(reaches);
  if (thread === undefined) {
    throw new Error(`none of ${profiles.length} CPU profiles reached ${startAt.functionName ?? ''} ${startAt.file}`);
  }
  return summariseProfile(thread, codeRoots, startAt);
}
