/**
 * The command-line API client (server/cli/client.ts) against the real server on a loopback port, with a
 * personal API token: upload a folder and a sample sheet, start a run and wait for it, download the
 * measurements CSV; exit codes 0 / 2 (bad input or a refused request) / 1 (failure) as `analyze` uses them.
 * (common practice; no outside reference value)
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { fields } from '../../server/db/schema.js';
import { runClient } from '../../server/cli/client.js';
import { writeTiffU16 } from '../images/tiffwrite.js';
import { gridCells, syntheticPair } from '../runs/helpers.js';

let t: TestApp;
let server: Server;
let base: string;
let writeToken: string;
let readToken: string;
let bioToken: string;
let dir: string;

beforeAll(async () => {
  t = await makeTestApp({ WORKERS: '1' });
  server = t.app.listen(0, '127.0.0.1');
  await new Promise<void>((r) => server.once('listening', () => r()));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const mic = await t.login('microscopist');
  writeToken = (await mic.post('/api/tokens').send({ name: 'cli', scope: 'write', expiresInDays: 1 })).body.token;
  readToken = (await mic.post('/api/tokens').send({ name: 'cli read', scope: 'read', expiresInDays: 1 })).body.token;
  bioToken = (await (await t.login('biologist')).post('/api/tokens').send({ name: 'cli sheet', scope: 'write', expiresInDays: 1 })).body.token;
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-client-'));
  fs.mkdirSync(path.join(dir, 'folder'));
  for (const [i, name] of ['a.tif', 'b.tiff'].entries()) {
    const [ch1, ch2] = syntheticPair(24, 24, 30 + i);
    fs.writeFileSync(path.join(dir, 'folder', name), writeTiffU16([ch1, ch2], 24, 24));
  }
  fs.writeFileSync(path.join(dir, 'folder', 'notes.txt'), 'not an image');
}, 60_000);
afterAll(async () => {
  await new Promise<void>((r) => server.close(() => r()));
  await t?.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

async function client(args: string[], token: string | null = writeToken) {
  let out = '', err = '';
  const code = await runClient(args, {
    stdout: { write: (s: string | Uint8Array) => (out += typeof s === 'string' ? s : Buffer.from(s).toString('utf8')) },
    stderr: { write: (s: string) => (err += s) },
    env: { SYNTOPY_URL: base, ...(token ? { SYNTOPY_TOKEN: token } : {}) },
    pollMs: 100,
  });
  return { code, out, err };
}

describe('usage', () => {
  it('--help prints every command (exit 0); no command, an unknown one or a missing token is exit 2 with one error line', async () => {
    const help = await client(['--help']);
    expect(help.code).toBe(0);
    for (const w of ['upload --coverslip ID', 'upload --study ID --sheet', 'run --recipe ID', 'measurements --run ID', 'exit codes']) expect(help.out).toContain(w);
    expect((await client([])).code).toBe(2);
    const unknown = await client(['fly']);
    expect([unknown.code, unknown.err]).toEqual([2, 'error: unknown command "fly"; commands: upload, run, measurements (see --help)\n']);
    const none = await client(['run', '--recipe', '1', '--study', '1'], null);
    expect(none.code).toBe(2);
    expect(none.err).toMatch(/^error: no API token/);
    expect((await client(['run', '--recipe', 'x1', '--study', '1'])).err).toMatch(/--recipe must be a positive whole-number id, got "x1"/);
  });

  it('an unreachable server is exit 1', async () => {
    let err = '';
    const code = await runClient(['measurements', '--run', '1'], { stdout: { write: () => true }, stderr: { write: (s: string) => (err += s) }, env: { SYNTOPY_URL: 'http://127.0.0.1:9', SYNTOPY_TOKEN: writeToken } });
    expect(code).toBe(1);
    expect(err).toMatch(/^error: could not reach http:\/\/127\.0\.0\.1:9/);
  });
});

describe('upload, run, measurements', () => {
  it('uploads a folder of TIFFs to a coverslip, each file one field', async () => {
    const r = await client(['upload', '--coverslip', String(t.world.coverslipA), '--folder', path.join(dir, 'folder')]);
    expect(r.code, r.err).toBe(0);
    expect(r.out).toBe('2 fields stored\n');
    const names = t.ctx.db.select().from(fields).where(eq(fields.coverslipId, t.world.coverslipA)).all().map((f) => f.name);
    expect(names.sort()).toEqual(['a', 'b']);
  });

  it('uploads a sample sheet, creating the condition and coverslip it names', async () => {
    fs.writeFileSync(path.join(dir, 'sheet.csv'), 'condition,coverslip,file,name\r\n"treated, 5 µM",T1,folder/a.tif,first\r\ntreated,T2,folder/b.tiff,\r\n');
    const r = await client(['upload', '--study', String(t.world.studyA), '--sheet', path.join(dir, 'sheet.csv')], bioToken); // the study's owner may add conditions
    expect(r.code, r.err).toBe(0);
    expect(r.out).toBe('2 fields stored\n');
    expect(r.err).toMatch(/created condition "treated, 5 µM"/);
    const study = (await (await t.login('microscopist')).get(`/api/studies/${t.world.studyA}`)).body;
    const treated = study.conditions.find((c: { name: string }) => c.name === 'treated, 5 µM');
    expect(treated.coverslips.map((s: { name: string; fieldCount: number }) => [s.name, s.fieldCount])).toEqual([['T1', 1]]);
    const bad = await client(['upload', '--study', String(t.world.studyA), '--sheet', path.join(dir, 'missing.csv')], bioToken);
    expect(bad.code).toBe(2);
    fs.writeFileSync(path.join(dir, 'bad.csv'), 'condition,coverslip\r\nx,y\r\n');
    expect((await client(['upload', '--study', String(t.world.studyA), '--sheet', path.join(dir, 'bad.csv')], bioToken)).err).toMatch(/no "file" column/);
  });

  it('starts a run, waits with progress, and downloads its measurements; a read token is refused (exit 2)', async () => {
    const mic = await t.login('microscopist');
    const mgr = await t.login('manager');
    // outlines on the folder's fields so the run measures something
    for (const f of t.ctx.db.select().from(fields).where(eq(fields.coverslipId, t.world.coverslipA)).all())
      for (const c of gridCells(24, 24, 2)) await mic.post(`/api/fields/${f.id}/cells`).send({ geometry: c.geometry });
    const recipe = (await mic.post('/api/recipes').send({ name: 'CLI recipe', settings: { minCellPixels: 5 } })).body;
    await mic.post(`/api/recipes/${recipe.id}/submit`);
    await mgr.post(`/api/recipes/${recipe.id}/approve`);
    const refused = await client(['run', '--recipe', String(recipe.id), '--coverslip', String(t.world.coverslipA)], readToken);
    expect(refused.code).toBe(2);
    expect(refused.err).toMatch(/^error: POST \/runs: /);

    const r = await client(['run', '--recipe', String(recipe.id), '--coverslip', String(t.world.coverslipA)]);
    expect(r.code, r.err).toBe(0);
    const id = Number(/^run (\d+) started: CLI recipe v\d+ on coverslip/.exec(r.out)![1]);
    expect(r.out).toMatch(new RegExp(`run ${id} done: 4 measurements\\n$`));
    expect(r.err).toMatch(/\[#{30}\] 2\/2 fields\n$/);

    const file = path.join(dir, 'm.csv');
    const m = await client(['measurements', '--run', String(id), '--out', file]);
    expect(m.code, m.err).toBe(0);
    expect(m.err).toBe(`4 measurements written to ${file}\n`);
    const direct = (await mic.get(`/api/runs/${id}/measurements.csv`)).text;
    expect(fs.readFileSync(file, 'utf8')).toBe(direct);
    const stdout = await client(['measurements', '--run', String(id)]);
    expect(stdout.out).toBe(direct);
    const missing = await client(['measurements', '--run', '999999']);
    expect([missing.code, missing.err]).toEqual([2, 'error: GET /runs/999999/measurements.csv: no run with id 999999\n']);
  }, 120_000);
});
