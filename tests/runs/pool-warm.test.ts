/**
 * The run pool started ahead of the first run (`warm()`, as the server does at start): it resolves once every
 * thread answered, a second call does nothing, and runs on the started threads measure every cell once, with
 * the pool's timings counting the run's batches and fields.
 */
import { afterAll, beforeAll, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { measurements } from '../../server/db/schema.js';
import { PoolRunQueue } from '../../server/runs/pool.js';
import { addField, gridCells, syntheticPair, waitForRun } from './helpers.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({ WORKERS: '2' });
});
afterAll(() => t.close());

it('warm() starts the threads before any run, and runs use them', async () => {
  const pool = t.ctx.runs;
  expect(pool).toBeInstanceOf(PoolRunQueue);
  const ms = await pool.warm!();
  expect(ms).toBeGreaterThan(0);
  expect(await pool.warm!()).toBe(0); // already started
  const cellIds: number[] = [];
  for (let i = 0; i < 3; i++) {
    const [ch1, ch2] = syntheticPair(64, 48, 40 + i);
    cellIds.push(...(await addField(t.ctx, t.world.coverslipA, { name: `W${i + 1}`, width: 64, height: 48, ch1, ch2, cells: gridCells(64, 48, 4) })).cellIds);
  }
  const mic = await t.login('microscopist');
  const recipe = (await mic.post('/api/recipes').send({ name: 'Warm pool', settings: { threshold: { method: 'otsu' } } })).body;
  const before = { ...(pool as PoolRunQueue).timings };
  const res = await mic.post('/api/runs').send({ recipeId: recipe.id, scope: { kind: 'coverslip', id: t.world.coverslipA } });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const run = (await waitForRun(async () => (await mic.get(`/api/runs/${res.body.id}`)).body)) as { status: string; id: number };
  expect(run.status).toBe('done');
  const rows = t.ctx.db.select({ cellId: measurements.cellId }).from(measurements).where(eq(measurements.runId, run.id)).all();
  expect(rows.map((r) => r.cellId).sort((a, b) => a - b)).toEqual([...cellIds].sort((a, b) => a - b));
  const after = (pool as PoolRunQueue).timings;
  expect(after.fields - before.fields).toBe(3);
  expect(after.batches - before.batches).toBeGreaterThanOrEqual(1);
  expect(after.threadMs - before.threadMs).toBeGreaterThan(0);
});
