/** Start-up configuration: a missing or bad value is named in one clear line and the process exits 1. */
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { loadEnv, loadWorkerEnv, ConfigError } from '../../server/env.js';

function start(env: Record<string, string>) {
  return spawnSync(process.execPath, ['--import', 'tsx', 'server/index.ts'], {
    env: { ...process.env, SEED_DEMO: 'never', PORT: '0', HOST: '127.0.0.1', ...env },
    encoding: 'utf8',
    timeout: 30_000,
  });
}

describe('configuration', () => {
  it('names the bad variable and the value received', () => {
    expect(() => loadEnv({ PORT: 'eighty', DATA_DIR: os.tmpdir() } as NodeJS.ProcessEnv)).toThrow(ConfigError);
    expect(() => loadEnv({ PORT: 'eighty', DATA_DIR: os.tmpdir() } as NodeJS.ProcessEnv)).toThrow(/PORT="eighty"/);
    expect(() => loadEnv({ QUEUE_URL: 'http://x', DATA_DIR: os.tmpdir() } as NodeJS.ProcessEnv)).toThrow(/QUEUE_URL/);
    expect(() => loadEnv({ SESSION_SECRET: 'short', DATA_DIR: os.tmpdir() } as NodeJS.ProcessEnv)).toThrow(/SESSION_SECRET.*32/);
  });

  it('a run worker: QUEUE_URL required, the job lock checked and quoted, defaults otherwise', () => {
    expect(() => loadWorkerEnv({} as NodeJS.ProcessEnv)).toThrow(/QUEUE_URL=null: QUEUE_URL must be set to redis:\/\/host:port/);
    expect(() => loadWorkerEnv({ QUEUE_URL: 'redis://q:6379', WORKER_LOCK_MS: '500' } as NodeJS.ProcessEnv)).toThrow(/WORKER_LOCK_MS="500"/);
    expect(() => loadWorkerEnv({ QUEUE_URL: 'redis://q:6379', WORKER_LOCK_MS: 'soon' } as NodeJS.ProcessEnv)).toThrow(ConfigError);
    expect(loadWorkerEnv({ QUEUE_URL: 'redis://q:6379' } as NodeJS.ProcessEnv)).toMatchObject({ WORKER_LOCK_MS: 300_000, WORKER_CONCURRENCY: 1, DATA_DIR: 'data' });
    expect(loadWorkerEnv({ QUEUE_URL: 'redis://q:6379', WORKER_LOCK_MS: '5000' } as NodeJS.ProcessEnv).WORKER_LOCK_MS).toBe(5000);
  });

  it('generates a session secret once and keeps it under DATA_DIR', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-env-'));
    const a = loadEnv({ DATA_DIR: dir } as NodeJS.ProcessEnv);
    const b = loadEnv({ DATA_DIR: dir } as NodeJS.ProcessEnv);
    expect(a.SESSION_SECRET.length).toBeGreaterThanOrEqual(32);
    expect(b.SESSION_SECRET).toBe(a.SESSION_SECRET);
    expect(fs.readFileSync(path.join(dir, 'session-secret'), 'utf8')).toBe(a.SESSION_SECRET);
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it('the server refuses to start with an unusable data folder, in one line, without a stack trace', () => {
    const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-env-')), 'plain-file');
    fs.writeFileSync(file, 'not a folder');
    const r = start({ DATA_DIR: path.join(file, 'data') });
    expect(r.status).toBe(1);
    const lines = r.stderr.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/DATA_DIR=.*is not a writable folder/);
    expect(r.stderr).not.toMatch(/\n\s+at /);
  });

  it('the server refuses a bad PORT in one line', () => {
    const r = start({ PORT: '99999', DATA_DIR: fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-env-')) });
    expect(r.status).toBe(1);
    expect(r.stderr.trim()).toMatch(/^configuration error: PORT="99999"/);
  });
});
