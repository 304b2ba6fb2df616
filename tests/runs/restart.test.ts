/**
 * Durability: kill the server process (SIGKILL) in the middle of a run, start it again on the same DATA_DIR:
 * the run resumes and completes with exactly one measurement per cell.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { loadEnv } from '../../server/env.js';
import { createContext, closeContext } from '../../server/context.js';
import { recipes, runFields, runs } from '../../server/db/schema.js';
import { RecipeSettings } from '../../shared/schemas/recipes.js';
import { seedWorld } from '../utils/app.js';
import { addField, gridCells, syntheticPair } from './helpers.js';
import { stopChild } from './services.js';

const FIELDS = 10, CELLS = 12, W = 320, H = 320;
let dataDir: string;
let runId: number;
const children: ChildProcess[] = [];
let exited: string | null = null;

function startServer(label: string): ChildProcess {
  const env: NodeJS.ProcessEnv = { ...process.env, DATA_DIR: dataDir, SEED_DEMO: 'never', PORT: '0', HOST: '127.0.0.1', WORKERS: '1', NODE_ENV: 'test' };
  delete env.QUEUE_URL;
  delete env.STORE_URL;
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], {
    env,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (d) => (out += d));
  child.stderr!.on('data', (d) => (out += d));
  child.once('exit', (code, sig) => {
    if (code && code !== 0) {
      console.warn(`[restart] ${label} exited ${code} ${sig ?? ''}: ${out}`);
      exited = `${label} exited ${code}: ${out.slice(0, 500)}`;
    }
  });
  children.push(child);
  return child;
}

beforeAll(async () => {
  dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-restart-'));
  const env = loadEnv({ NODE_ENV: 'test', DATA_DIR: dataDir, SEED_DEMO: 'never' } as NodeJS.ProcessEnv);
  const ctx = await createContext(env);
  const world = await seedWorld(ctx);
  const fieldIds: number[] = [];
  for (let i = 0; i < FIELDS; i++) {
    const [ch1, ch2] = syntheticPair(W, H, 40 + i);
    fieldIds.push((await addField(ctx, world.coverslipA, { name: `K${i}`, width: W, height: H, ch1, ch2, cells: gridCells(W, H, CELLS) })).fieldId);
  }
  const settings = RecipeSettings.parse({ threshold: { method: 'costes' }, randomization: { enabled: true, count: 30 } });
  const rec = ctx.db.insert(recipes).values({ name: 'Durable', version: 1, status: 'approved', settings, proposerId: world.users.microscopist.id }).returning().get();
  const { eq } = await import('drizzle-orm');
  ctx.db.update(recipes).set({ familyId: rec.id }).where(eq(recipes.id, rec.id)).run();
  runId = ctx.db.insert(runs).values({ studyId: world.studyA, recipeId: rec.id, scopeKind: 'coverslip', scopeId: world.coverslipA, fieldsTotal: FIELDS, seed: 1, engineVersion: 'test' }).returning().get().id;
  ctx.db.insert(runFields).values(fieldIds.map((fieldId) => ({ runId, fieldId }))).run();
  await closeContext(ctx);
}, 120_000);

afterAll(async () => {
  await Promise.all(children.map((c) => stopChild(c)));
  fs.rmSync(dataDir, { recursive: true, force: true });
});

const db = () => new Database(path.join(dataDir, 'syntopy.db'), { readonly: true, fileMustExist: true });
const snapshot = () => {
  const d = db();
  try {
    const run = d.prepare('select status, fields_done as done from runs where id = ?').get(runId) as { status: string; done: number };
    const fields = d.prepare('select status, attempts from run_fields where run_id = ?').all(runId) as { status: string; attempts: number }[];
    const m = d.prepare('select count(*) as n, count(distinct cell_id) as cells from measurements where run_id = ?').get(runId) as { n: number; cells: number };
    return { run, fields, m };
  } finally {
    d.close();
  }
};

async function until<T>(what: string, f: () => T | undefined, timeoutMs: number, everyMs = 20): Promise<T> {
  const t0 = Date.now();
  for (;;) {
    const v = f();
    if (v !== undefined) return v;
    if (exited) throw new Error(exited);
    if (Date.now() - t0 > timeoutMs) throw new Error(`timed out waiting for ${what}: ${JSON.stringify(snapshot())}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}

describe('a run survives the server being killed', () => {
  it('resumes after SIGKILL and ends with exactly one measurement per cell', async () => {
    const first = startServer('first');
    const atKill = await until(
      'two fields done',
      () => {
        const s = snapshot();
        const done = s.fields.filter((f) => f.status === 'done').length;
        return done >= 2 && done < FIELDS ? s : undefined;
      },
      240_000,
    );
    first.kill('SIGKILL');
    await new Promise((r) => first.once('exit', r));
    const after = snapshot();
    const doneAtKill = after.fields.filter((f) => f.status === 'done').length;
    expect(doneAtKill).toBeLessThan(FIELDS);
    expect(after.m.n).toBe(doneAtKill * CELLS); // whole fields only: each field is one transaction
    expect(atKill.run.status).toBe('running');

    const second = startServer('second');
    const end = await until('the run to finish', () => {
      const s = snapshot();
      return s.run.status === 'queued' || s.run.status === 'running' ? undefined : s;
    }, 300_000, 100);
    await stopChild(second);
    expect(end.run.status).toBe('done');
    expect(end.run.done).toBe(FIELDS);
    expect(end.fields.every((f) => f.status === 'done')).toBe(true);
    expect(end.m.n).toBe(FIELDS * CELLS);
    expect(end.m.cells).toBe(FIELDS * CELLS);
    // the field that was in flight at the kill was computed again (attempts 2); finished ones were not
    expect(end.fields.filter((f) => f.attempts === 1).length).toBeGreaterThanOrEqual(doneAtKill);
    console.log(`[restart] killed with ${doneAtKill}/${FIELDS} fields done; after restart ${end.m.n} measurements for ${FIELDS * CELLS} cells; attempts ${end.fields.map((f) => f.attempts).join(',')}`);
  }, 600_000);
});
