import { afterEach, beforeEach, vi } from 'vitest';

// A test that writes to the console is hiding output a reviewer should see as an assertion instead.
const methods = ['log', 'info', 'warn', 'error', 'debug'] as const;
let calls: string[] = [];

beforeEach(() => {
  calls = [];
  for (const method of methods) {
    vi.spyOn(console, method).mockImplementation((...args: unknown[]) => {
      calls.push(`console.${method}: ${args.map(String).join(' ')}`);
    });
  }
});

afterEach(() => {
  vi.restoreAllMocks();
  if (calls.length > 0) {
    throw new Error(`test wrote to the console:\n${calls.join('\n')}`);
  }
});
