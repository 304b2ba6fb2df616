/**
 * The `analyze` command's `main()` run in this process with stdout and stderr captured. Call once at the top
 * of a test file (it registers the capture around every test).
 */
import { afterEach, beforeEach, expect, vi } from 'vitest';
import { main } from '../../server/cli/analyze';

export function captureAnalyze() {
  let out = '';
  let err = '';
  beforeEach(() => {
    out = '';
    err = '';
    vi.spyOn(process.stdout, 'write').mockImplementation((s: string | Uint8Array) => ((out += String(s)), true));
    vi.spyOn(process.stderr, 'write').mockImplementation((s: string | Uint8Array) => ((err += String(s)), true));
  });
  afterEach(() => vi.restoreAllMocks());

  /** exit code and everything written */
  async function run(...args: string[]) {
    out = '';
    err = '';
    const code = await main(args);
    return { code, out, err };
  }
  /** `--json` output of a successful run (exit 0, nothing on stderr, no NaN or Infinity), parsed */
  async function json(...args: string[]) {
    const r = await run(...args, '--json');
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).not.toMatch(/NaN|Infinity/);
    return JSON.parse(r.out);
  }
  return { run, json };
}
