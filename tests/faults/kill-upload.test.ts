/**
 * Faults: the server process is killed (SIGKILL) while an upload is streaming in and while an
 * accepted upload is being decoded and stored; after a restart on the same DATA_DIR nothing half-done remains:
 * no temp file, no store object without its `files` row (orphan), no `files` row without its object, no field
 * pointing at a missing file, and SQLite's integrity check passes. The run-kill case (a run resumes and ends
 * with exactly one measurement per cell, no double count) is tests/runs/restart.test.ts — not repeated here.
 * Full disk at start-up: a tiny tmpfs (root only; skipped cleanly otherwise) must give one clear line, exit 1.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import Database from 'better-sqlite3';
import { loadEnv } from '../../server/env.js';
import { createContext, closeContext } from '../../server/context.js';
import { keyForSha } from '../../server/images/store.js';
import { seedWorld, TEST_PASSWORD, type World } from '../utils/app.js';
import { freePort } from '../e2e/harness.js';
import { tiffPages, twoChannels } from '../security/tiff.js';

let dataDir: string;
let world: World;
const children: ChildProcess[] = [];

beforeAll(async () => {
  dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-faults-'));
  const ctx = await createContext(loadEnv({ NODE_ENV: 'test', DATA_DIR: dataDir, SEED_DEMO: 'never' } as NodeJS.ProcessEnv));
  world = await seedWorld(ctx);
  await closeContext(ctx);
}, 60_000);
afterAll(() => {
  for (const c of children) if (c.exitCode === null) c.kill('SIGKILL');
  fs.rmSync(dataDir, { recursive: true, force: true });
});

interface Srv {
  proc: ChildProcess;
  url: string;
  port: number;
  out: () => string;
}

/** server/index.ts as a child on the prepared DATA_DIR (no demo seed, in-process run queue, local store). */
async function start(): Promise<Srv> {
  const port = await freePort();
  const env: NodeJS.ProcessEnv = { ...process.env, NODE_ENV: 'production', DATA_DIR: dataDir, SEED_DEMO: 'never', PORT: String(port), HOST: '127.0.0.1', WORKERS: '1' };
  delete env.QUEUE_URL;
  delete env.STORE_URL;
  delete env.CLIENT_DIR;
  const proc = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], { env, stdio: ['ignore', 'pipe', 'pipe'] });
  children.push(proc);
  let out = '';
  proc.stdout!.on('data', (d) => (out += d));
  proc.stderr!.on('data', (d) => (out += d));
  const url = `http://127.0.0.1:${port}`;
  for (const t0 = Date.now(); ; ) {
    if (proc.exitCode !== null) throw new Error(`server exited ${proc.exitCode}: ${out}`);
    try {
      if ((await fetch(`${url}/api/health`)).ok) break;
    } catch {
      /* not yet */
    }
    if (Date.now() - t0 > 60_000) throw new Error(`server did not start: ${out}`);
    await new Promise((r) => setTimeout(r, 100));
  }
  return { proc, url, port, out: () => out };
}

async function kill(s: Srv) {
  if (s.proc.exitCode !== null) return;
  const done = new Promise((r) => s.proc.once('exit', r));
  s.proc.kill('SIGKILL');
  await done;
}

async function signIn(s: Srv, who: keyof World['users'] = 'microscopist') {
  const r = await fetch(`${s.url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: world.users[who].email, password: TEST_PASSWORD }) });
  expect(r.status).toBe(200);
  return (r.headers.get('set-cookie') ?? '').split(';')[0];
}

/** Starts a multipart upload of `file` and writes `sendBytes` of its body (all when undefined), leaving the request open or ending it. */
function beginUpload(s: Srv, cookie: string, file: Buffer, opts: { sendBytes?: number; end: boolean }) {
  const boundary = '----syntopy-fault-' + crypto.randomUUID();
  const head = Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="files"; filename="big.tif"\r\nContent-Type: image/tiff\r\n\r\n`);
  const tail = Buffer.from(`\r\n--${boundary}--\r\n`);
  const body = Buffer.concat([head, file, tail]);
  const req = http.request({ host: '127.0.0.1', port: s.port, method: 'POST', path: `/api/coverslips/${world.coverslipA}/fields`, headers: { cookie, 'content-type': `multipart/form-data; boundary=${boundary}`, 'content-length': body.length } });
  const answer = new Promise<number | 'reset'>((resolve) => {
    req.on('response', (res) => {
      res.resume();
      resolve(res.statusCode ?? 0);
    });
    req.on('error', () => resolve('reset'));
  });
  const n = opts.sendBytes ?? body.length;
  req.write(body.subarray(0, n));
  if (opts.end) req.end(body.subarray(n));
  return { req, answer };
}

const tmpFiles = () => {
  const out: string[] = [];
  const walk = (d: string) => {
    for (const e of fs.existsSync(d) ? fs.readdirSync(d, { withFileTypes: true }) : []) (e.isDirectory() ? walk(path.join(d, e.name)) : out.push(path.relative(dataDir, path.join(d, e.name))));
  };
  walk(path.join(dataDir, 'tmp'));
  return out;
};
const storeFiles = () => {
  const out: string[] = [];
  const root = path.join(dataDir, 'store');
  const walk = (d: string) => {
    for (const e of fs.existsSync(d) ? fs.readdirSync(d, { withFileTypes: true }) : []) (e.isDirectory() ? walk(path.join(d, e.name)) : out.push(path.relative(root, path.join(d, e.name))));
  };
  walk(root);
  return out.sort();
};

/** The invariants after a crash and a restart. */
function consistency() {
  const db = new Database(path.join(dataDir, 'syntopy.db'), { readonly: true, fileMustExist: true });
  try {
    const integrity = (db.prepare('PRAGMA integrity_check').get() as { integrity_check: string }).integrity_check;
    const files = db.prepare('SELECT sha256, store_key AS key FROM files').all() as { sha256: string; key: string }[];
    const fields = db.prepare('SELECT id, file1_sha AS a, file2_sha AS b FROM fields').all() as { id: number; a: string; b: string }[];
    const store = storeFiles();
    const keys = new Set(files.map((f) => f.key));
    const shas = new Set(files.map((f) => f.sha256));
    return {
      integrity,
      orphanStoreObjects: store.filter((k) => !keys.has(k)),
      filesRowsWithoutObject: files.filter((f) => !store.includes(f.key)).map((f) => f.sha256),
      fieldsWithMissingFile: fields.filter((f) => !shas.has(f.a) || !shas.has(f.b)).map((f) => f.id),
      partFiles: store.filter((k) => k.endsWith('.part')),
      tempFiles: tmpFiles(),
      fields: fields.length,
      storeObjects: store.length,
    };
  } finally {
    db.close();
  }
}

async function until(what: string, f: () => boolean, ms = 20_000) {
  for (const t0 = Date.now(); !f(); ) {
    if (Date.now() - t0 > ms) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 5));
  }
}

// a 1024 × 1024 two-channel 16-bit file: 4 MiB, large enough to kill the server mid-stream
const W = 1024;
const big = () => {
  const [a, b] = twoChannels(W, W);
  b[0] = crypto.randomInt(65535); // a new SHA-256 every time: never deduplicated
  return tiffPages(W, W, [a, b]);
};

describe('the server is killed during an upload', () => {
  /** the server started after the last crash: the next trial's victim (saves a start per trial) */
  let live: Srv | undefined;
  afterAll(async () => {
    if (live) await kill(live);
  });

  it('mid-stream: after a restart no temp file, no orphan, and the coverslip has no half field', async () => {
    const s1 = await start();
    const cookie = await signIn(s1);
    const before = consistency();
    const file = big();
    const { req, answer } = beginUpload(s1, cookie, file, { sendBytes: Math.floor(file.length / 2), end: false });
    await until('the temp file to appear', () => tmpFiles().length > 0);
    await new Promise((r) => setTimeout(r, 100));
    await kill(s1);
    expect(await answer).toBe('reset');
    req.destroy();
    const crashed = consistency();
    const s2 = await start();
    const after = consistency();
    live = s2;
    expect({ ...after, crashedTemps: crashed.tempFiles.length > 0 }).toEqual({ ...before, tempFiles: [], crashedTemps: true });
  }, 120_000);

  it('while the stored file is decoded and written: at every kill point the store and the rows agree', async () => {
    const delays = [0, 60, 250];
    const seen: string[] = [];
    for (const delay of delays) {
      const s1 = live ?? (await start());
      const cookie = await signIn(s1);
      const before = consistency();
      const { req, answer } = beginUpload(s1, cookie, big(), { end: true });
      // the body is complete once the request is flushed; then kill after `delay` ms of intake work
      await new Promise<void>((r) => req.once('finish', () => r()));
      await new Promise((r) => setTimeout(r, delay));
      await kill(s1);
      const status = await answer;
      const s2 = await start();
      const after = consistency();
      live = s2;
      // either the field exists completely (and the answer may have been lost) or nothing of it exists
      const added = after.fields - before.fields;
      seen.push(`${delay} ms: answer ${status}, field ${added ? 'complete' : 'absent'}, ${s2.out().match(/removed \d+ leftover[^\n]*/)?.[0] ?? 'nothing to clean'}`);
      expect([0, 1], `kill ${delay} ms after the body (answer ${status})`).toContain(added);
      expect(after.storeObjects - before.storeObjects, `kill at ${delay} ms`).toBe(added);
      expect(
        { integrity: after.integrity, orphan: after.orphanStoreObjects, missing: after.filesRowsWithoutObject, broken: after.fieldsWithMissingFile, part: after.partFiles, temps: after.tempFiles },
        `kill ${delay} ms after the body was sent (answer: ${status})`,
      ).toEqual({ integrity: 'ok', orphan: [], missing: [], broken: [], part: [], temps: [] });
    }
    console.log(`[faults] kill points after the upload body:\n  ${seen.join('\n  ')}`);
    await kill(live!);
    live = undefined;
  }, 300_000);

  it('the start-up clean-up removes temp files, partial files and store objects without a row, and keeps the rest', async () => {
    const ctx = await createContext(loadEnv({ NODE_ENV: 'test', DATA_DIR: dataDir, SEED_DEMO: 'never' } as NodeJS.ProcessEnv));
    try {
      const { recoverAfterCrash } = await import('../../server/recover.js');
      const keep = storeFiles();
      const orphanKey = keyForSha('f'.repeat(64));
      fs.mkdirSync(path.join(dataDir, 'store', path.dirname(orphanKey)), { recursive: true });
      fs.writeFileSync(path.join(dataDir, 'store', orphanKey), 'orphan');
      fs.writeFileSync(path.join(dataDir, 'store', orphanKey + '.part'), 'half');
      fs.mkdirSync(path.join(dataDir, 'tmp', 'uploads'), { recursive: true });
      fs.writeFileSync(path.join(dataDir, 'tmp', 'uploads', 'up-x'), 'temp');
      fs.mkdirSync(path.join(dataDir, 'cache', 'previews'), { recursive: true });
      fs.writeFileSync(path.join(dataDir, 'cache', 'previews', 'a.png.1.x.part'), 'half');
      const r = await recoverAfterCrash(ctx);
      expect(r).toEqual({ tempFiles: 1, partFiles: 2, orphanObjects: 1 });
      expect(storeFiles()).toEqual(keep);
      expect(tmpFiles()).toEqual([]);
      expect(consistency().orphanStoreObjects).toEqual([]);
    } finally {
      await closeContext(ctx);
    }
  });

  it('the run-kill case is covered by tests/runs/restart.test.ts (exactly one measurement per cell after SIGKILL + restart)', () => {
    expect(fs.existsSync(path.resolve('tests/runs/restart.test.ts'))).toBe(true);
  });
});

describe('a full disk at start-up', () => {
  const mnt = path.join(os.tmpdir(), `syntopy-full-${process.pid}`);
  let mounted = false;
  beforeAll(() => {
    if (process.getuid?.() !== 0) return;
    fs.mkdirSync(mnt, { recursive: true });
    mounted = spawnSync('mount', ['-t', 'tmpfs', '-o', 'size=256k', 'tmpfs', mnt]).status === 0;
  });
  afterAll(() => {
    if (mounted) spawnSync('umount', [mnt]);
    fs.rmSync(mnt, { recursive: true, force: true });
  });

  const fill = (dir: string) => {
    fs.mkdirSync(dir, { recursive: true });
    const fd = fs.openSync(path.join(dir, 'filler'), 'w');
    try {
      for (;;) fs.writeSync(fd, Buffer.alloc(4096));
    } catch (e) {
      expect((e as NodeJS.ErrnoException).code).toBe('ENOSPC');
    } finally {
      fs.closeSync(fd);
    }
  };
  const startOn = (dir: string, extra: Record<string, string> = {}) =>
    spawnSync(process.execPath, ['--import', 'tsx', 'server/index.ts'], { env: { ...process.env, DATA_DIR: dir, SEED_DEMO: 'never', PORT: '0', HOST: '127.0.0.1', NODE_ENV: 'production', ...extra }, encoding: 'utf8', timeout: 60_000 });

  it('an empty but full data folder: exit 1 with one line naming the problem, no stack trace', (ctx) => {
    if (!mounted) return ctx.skip();
    const dir = path.join(mnt, 'a');
    fill(dir);
    const r = startOn(dir);
    expect(r.status).toBe(1);
    const lines = r.stderr.trim().split('\n');
    expect(lines, r.stderr).toHaveLength(1);
    expect(lines[0]).toMatch(/no space left|disk is full|ENOSPC/i);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    fs.rmSync(path.join(dir, 'filler'));
  });

  it('a full data folder with the session secret given (the database cannot be created): exit 1, one clear line', (ctx) => {
    if (!mounted) return ctx.skip();
    const dir = path.join(mnt, 'b');
    fill(dir);
    const r = startOn(dir, { SESSION_SECRET: 'x'.repeat(40) });
    expect(r.status).toBe(1);
    const lines = r.stderr.trim().split('\n');
    expect(lines, r.stderr).toHaveLength(1);
    expect(lines[0]).toMatch(/no space left|disk is full|ENOSPC|SQLITE_FULL/i);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    fs.rmSync(path.join(dir, 'filler'));
  });
});
