/**
 * The run pool started ahead of the first run (`warm()`, as the server does at start): it resolves once every
 * thread answered and warmed up, a second call does nothing, and runs on the started threads measure every cell
 * once, with the pool's timings counting the run's batches and fields.
 * The warm-up (server/runs/warm-up.ts): each thread, as it starts (at warm() or on demand at a first run),
 * measures the synthetic fields and reports it; nothing is written to the database or the file store; a run
 * submitted while the thread warms up waits for it and gives the numbers a run submitted afterwards gives; a
 * warm-up that fails says why, once, and never throws.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { measurements, spots } from '../../server/db/schema.js';
import { PoolRunQueue } from '../../server/runs/pool.js';
import { WARM_UP_MIN_ROUNDS, WARM_UP_ROUNDS, warmUpFields, warmUpRunPath, type WarmUpReport } from '../../server/runs/warm-up.js';
import { synthField } from '../../server/db/seed/synth.js';
import { addField, gridCells, syntheticPair, waitForRun } from './helpers.js';

/** Every table's rows, the connection's change count, the store's keys and the data directory's files. */
async function state(t: TestApp) {
  const db = t.ctx.db.$client;
  const tables = (db.prepare("select name from sqlite_master where type = 'table' order by name").all() as { name: string }[]).map((r) => r.name);
  const rows = Object.fromEntries(tables.map((n) => [n, JSON.stringify(db.prepare(`select * from "${n}"`).all())]));
  const changes = (db.prepare('select total_changes() as n').get() as { n: number }).n;
  const files: string[] = [];
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      if (e.isDirectory()) walk(path.join(d, e.name));
      else files.push(path.relative(t.dataDir, path.join(d, e.name)));
    }
  };
  walk(t.dataDir);
  return { rows, changes, store: (await t.ctx.store.list()).sort(), files: files.sort() };
}

async function addFields(t: TestApp, n: number) {
  const cellIds: number[] = [];
  for (let i = 0; i < n; i++) {
    const [ch1, ch2] = syntheticPair(64, 48, 40 + i);
    cellIds.push(...(await addField(t.ctx, t.world.coverslipA, { name: `W${i + 1}`, width: 64, height: 48, ch1, ch2, cells: gridCells(64, 48, 4) })).cellIds);
  }
  return cellIds;
}

async function startRun(t: TestApp, mic: Awaited<ReturnType<TestApp['login']>>, recipeId: number) {
  const res = await mic.post('/api/runs').send({ recipeId, scope: { kind: 'coverslip', id: t.world.coverslipA } });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body.id as number;
}

async function finished(mic: Awaited<ReturnType<TestApp['login']>>, id: number) {
  const run = (await waitForRun(async () => (await mic.get(`/api/runs/${id}`)).body)) as { status: string; id: number };
  expect(run.status, JSON.stringify(run)).toBe('done');
  return run;
}

/** A run's rows by cell and its spots, without what differs between runs by design (ids, run, time of computation). */
function valuesOf(t: TestApp, runId: number) {
  const rows = t.ctx.db.select().from(measurements).where(eq(measurements.runId, runId)).all();
  const found = t.ctx.db.select().from(spots).where(eq(spots.runId, runId)).orderBy(spots.id).all().map(({ id: _id, runId: _run, ...sp }) => sp);
  const byCell = Object.fromEntries(
    rows.map(({ id: _id, runId: _run, createdAt: _c, provenance, ...rest }) => {
      const { computedAt: _at, ...p } = provenance as Record<string, unknown>;
      return [rest.cellId, { ...rest, provenance: p }];
    }),
  );
  return { byCell, spots: found };
}

describe('warm() at server start', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeTestApp({ WORKERS: '2' });
  });
  afterAll(() => t.close());

  it('starts and warms up every thread before any run, writing nothing, and runs use the threads', async () => {
    const pool = t.ctx.runs as PoolRunQueue;
    expect(pool).toBeInstanceOf(PoolRunQueue);
    const before = await state(t);
    const ms = await pool.warm();
    expect(ms).toBeGreaterThan(0);
    // one report per thread, each a finished warm-up over the synthetic fields, within the server start time
    expect(pool.warmUps).toHaveLength(2);
    for (const w of pool.warmUps) {
      expect(w.error).toBeNull();
      expect(w.fields).toBeGreaterThanOrEqual(WARM_UP_MIN_ROUNDS * warmUpFields().jobs.length);
      expect(w.ms).toBeGreaterThan(0);
      expect(w.ms).toBeLessThan(ms);
    }
    expect(await state(t)).toEqual(before); // no row, change, store key or file
    expect(await pool.warm()).toBe(0); // already started

    const cellIds = await addFields(t, 3);
    const mic = await t.login('microscopist');
    const recipe = (await mic.post('/api/recipes').send({ name: 'Warm pool', settings: { threshold: { method: 'otsu' } } })).body;
    const timings = { ...pool.timings };
    const run = await finished(mic, await startRun(t, mic, recipe.id));
    const rows = t.ctx.db.select({ cellId: measurements.cellId }).from(measurements).where(eq(measurements.runId, run.id)).all();
    expect(rows.map((r) => r.cellId).sort((a, b) => a - b)).toEqual([...cellIds].sort((a, b) => a - b));
    const after = pool.timings;
    expect(after.fields - timings.fields).toBe(3);
    expect(after.batches - timings.batches).toBeGreaterThanOrEqual(1);
    expect(after.threadMs - timings.threadMs).toBeGreaterThan(0);
    expect(pool.warmUps).toHaveLength(2); // the kept threads did not start again
  });
});

describe('a run submitted while the thread warms up', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeTestApp({ WORKERS: '1' });
  });
  afterAll(() => t.close());

  it('waits for the warm-up and gives the numbers of a run submitted after it', async () => {
    const pool = t.ctx.runs as PoolRunQueue;
    // fields with puncta (the demo's generator), so spots are found and compared too
    for (const seed of [5, 6]) {
      const f = synthField({ width: 128, height: 128, sharedFraction: 0.5, seed, cells: [4, 4] });
      await addField(t.ctx, t.world.coverslipA, { name: `P${seed}`, width: 128, height: 128, ch1: f.ch1, ch2: f.ch2, cells: f.cells.map((c) => ({ geometry: { kind: 'polygon', points: c.points } })) });
    }
    const mic = await t.login('microscopist');
    // the demo recipe's kind: defaults (every coefficient, Costes) with Spots on
    const recipe = (await mic.post('/api/recipes').send({ name: 'During warm-up', settings: { objects: { enabled: true } } })).body;
    let warmed = false;
    const warming = pool.warm().then((ms) => ((warmed = true), ms));
    const during = await startRun(t, mic, recipe.id);
    expect(warmed).toBe(false); // submitted before the thread had warmed up
    expect(pool.warmUps).toHaveLength(0);
    await finished(mic, during);
    expect(await warming).toBeGreaterThan(0);
    expect(pool.warmUps).toHaveLength(1);
    expect(pool.warmUps[0].error).toBeNull();
    const afterwards = await finished(mic, await startRun(t, mic, recipe.id));
    const a = valuesOf(t, during);
    expect(Object.keys(a.byCell)).toHaveLength(8);
    expect(Object.values(a.byCell).every((r) => r.pearson !== null && r.spotCount1 !== null)).toBe(true);
    expect(a.spots.length).toBeGreaterThan(0);
    expect(valuesOf(t, afterwards.id)).toEqual(a);
  });
});

describe('threads started on demand', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeTestApp({ WORKERS: '1' });
  });
  afterAll(() => t.close());

  it('warm up when the first run starts them', async () => {
    const pool = t.ctx.runs as PoolRunQueue;
    await addFields(t, 1);
    const mic = await t.login('microscopist');
    const recipe = (await mic.post('/api/recipes').send({ name: 'On demand', settings: {} })).body;
    expect(pool.warmUps).toHaveLength(0);
    await finished(mic, await startRun(t, mic, recipe.id));
    expect(pool.warmUps).toHaveLength(1);
    expect(pool.warmUps[0].error).toBeNull();
    expect(pool.warmUps[0].fields).toBeGreaterThan(0);
  });
});

describe('the warm-up itself (this thread)', () => {
  it('measures every synthetic field, in two or three rounds', async () => {
    const { jobs } = warmUpFields();
    expect(jobs.map((j) => [j.settings.objects.enabled, j.settings.calibration])).toEqual([
      [true, 'none'],
      [false, 'approved'],
    ]);
    const r = await warmUpRunPath(null);
    expect(r.error).toBeNull();
    expect(r.fields % jobs.length).toBe(0);
    expect(r.fields).toBeGreaterThanOrEqual(WARM_UP_MIN_ROUNDS * jobs.length);
    expect(r.fields).toBeLessThanOrEqual(WARM_UP_ROUNDS * jobs.length);
    expect(r.ms).toBeGreaterThan(0);
  });

  it('a failing field ends it with the reason instead of throwing', async () => {
    const broken = () => {
      const f = warmUpFields();
      return { jobs: f.jobs, store: { get: async (key: string) => Promise.reject(new Error(`no such key ${key}`)) } };
    };
    const r = await warmUpRunPath(null, broken);
    expect(r.fields).toBe(0);
    expect(r.error).toBe('warm-up 1: no such key warm-up/0-1.tif');
    const thrown = await warmUpRunPath(null, () => {
      throw new Error('cannot make the fields');
    });
    expect(thrown).toMatchObject({ fields: 0, error: 'cannot make the fields' });
  });

  it('the pool says a failed warm-up once, however many threads report it', async () => {
    const t = await makeTestApp({ WORKERS: '1' });
    const warn = vi.spyOn(console, 'warn').mockImplementation(() => {});
    try {
      const pool = t.ctx.runs as PoolRunQueue;
      const report: WarmUpReport = { ms: 12, fields: 1, error: 'warm-up 2: something broke' };
      const receive = (pool as unknown as { warmedUp(r: WarmUpReport): void }).warmedUp.bind(pool);
      receive(report);
      receive({ ...report });
      expect(warn).toHaveBeenCalledTimes(1);
      expect(String(warn.mock.calls[0][0])).toContain('warm-up 2: something broke');
      expect(pool.warmUps).toHaveLength(2);
    } finally {
      warn.mockRestore();
      await t.close();
    }
  });
});
