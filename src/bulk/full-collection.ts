import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';

/**
 * A way to ask V8 for a full garbage collection from a long batch job. V8 collects the old generation
 * lazily and, on a busy machine, its concurrent marking falls behind, so a replay's peak memory would
 * follow the machine's load and the export's length rather than what the replay holds (about 25 MB
 * live, whatever the size). Collecting every few hundred orders keeps the peak near that. Costs a few
 * tens of milliseconds each time. `--expose-gc` set at run time gives new contexts a `gc` function
 * (node:v8 setFlagsFromString); where that is not available the collector does nothing.
 */
export function fullCollector(): () => void {
  const exposed = (globalThis as { gc?: unknown }).gc;
  if (typeof exposed === 'function') {
    return exposed as () => void;
  }
  try {
    setFlagsFromString('--expose-gc');
    const gc: unknown = runInNewContext('gc');
    return typeof gc === 'function' ? (gc as () => void) : () => undefined;
  } catch {
    return () => undefined;
  }
}
