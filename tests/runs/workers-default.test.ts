/** WORKERS defaults to the machine's available parallelism minus one, between 1 and 4 (README "Runs"). */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, afterEach, describe, expect, it, vi } from 'vitest';
import { defaultWorkers, loadEnv } from '../../server/env.js';

const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-workers-'));
afterAll(() => fs.rmSync(dataDir, { recursive: true, force: true }));
afterEach(() => vi.restoreAllMocks());

const envWith = (extra: Record<string, string> = {}) => loadEnv({ NODE_ENV: 'test', DATA_DIR: dataDir, ...extra } as NodeJS.ProcessEnv);

describe('WORKERS default', () => {
  it('is available parallelism − 1, at least 1, at most 4', () => {
    expect([1, 2, 3, 4, 5, 6, 16, 128].map((n) => defaultWorkers(n))).toEqual([1, 1, 2, 3, 4, 4, 4, 4]);
  });

  it('follows os.availableParallelism() when WORKERS is unset', () => {
    const spy = vi.spyOn(os, 'availableParallelism');
    spy.mockReturnValue(3);
    expect(envWith().WORKERS).toBe(2);
    spy.mockReturnValue(8);
    expect(envWith().WORKERS).toBe(4);
    spy.mockReturnValue(1);
    expect(envWith().WORKERS).toBe(1);
    expect(spy).toHaveBeenCalled();
  });

  it('on this machine is its own parallelism − 1 (capped), and an explicit WORKERS wins', () => {
    expect(envWith().WORKERS).toBe(Math.max(1, Math.min(4, os.availableParallelism() - 1)));
    expect(envWith({ WORKERS: '7' }).WORKERS).toBe(7);
  });
});
