import { afterEach, beforeEach, vi } from 'vitest';

/** Unexpected console.error fails a test. Tests that expect one call `allowConsoleError()`. */
let allowed = false;
let errors: unknown[][] = [];
export function allowConsoleError() {
  allowed = true;
}

beforeEach(() => {
  allowed = false;
  errors = [];
  vi.spyOn(console, 'error').mockImplementation((...args: unknown[]) => {
    errors.push(args);
  });
});

afterEach(() => {
  vi.restoreAllMocks();
  if (!allowed && errors.length > 0) {
    const first = errors[0].map((a) => (a instanceof Error ? a.stack : String(a))).join(' ');
    throw new Error(`unexpected console.error (${errors.length}x): ${first}`);
  }
});
