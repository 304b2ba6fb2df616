/**
 * The distributed path with real stand-ins: BullMQ on a real redis-server, images in an s3rver-backed store,
 * two `worker-main.ts` processes sharing one run. The numbers must equal the in-process pool's on the
 * same files, outlines and recipe (identity check; the engine itself is checked in tests/analysis). Then one
 * worker is killed (SIGKILL) while it computes a field: its job goes to the other worker once its lock
 * (WORKER_LOCK_MS, short here) runs out, and the run finishes with every field and cell counted once.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { eq } from 'drizzle-orm';
import { QueueEvents } from 'bullmq';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { coverslips, measurements, runFields } from '../../server/db/schema.js';
import { FIELDS_QUEUE, connectionOf } from '../../server/runs/bullmq.js';
import { addField, gridCells, syntheticPair, waitForRun } from './helpers.js';
import { hasRedis, NO_REDIS_MESSAGE, startRedis, startS3, stopChild } from './services.js';

if (!hasRedis) console.warn(NO_REDIS_MESSAGE);

const W = 128, H = 112, FIELDS = 6;
const LOCK_MS = 5000;
const SETTINGS = { threshold: { method: 'costes' }, randomization: { enabled: true, count: 20, blockSize: { kind: 'pixels', pixels: 3 } }, seed: 3 };

async function setup(t: TestApp, coverslipId = t.world.coverslipA, settings: object = SETTINGS, name = 'Distributed') {
  const mic = await t.login('microscopist');
  const mgr = await t.login('manager');
  const ids: number[][] = [];
  for (let i = 0; i < FIELDS; i++) {
    const [ch1, ch2] = syntheticPair(W, H, 100 + i);
    const f = await addField(t.ctx, coverslipId, { name: `B${i}`, width: W, height: H, ch1, ch2, cells: gridCells(W, H, 5), split: i % 2 === 1 });
    ids.push(f.cellIds);
  }
  const r = (await mic.post('/api/recipes').send({ name, settings })).body;
  await mic.post(`/api/recipes/${r.id}/submit`);
  await mgr.post(`/api/recipes/${r.id}/approve`);
  return { mic, recipeId: r.id as number, ids, coverslipId };
}

type Row = typeof measurements.$inferSelect;
const VALUE_KEYS = ['pixels', 'pearson', 'spearman', 'kendallTauB', 'distanceCorrelation', 'dcorBiasCorrectedSq', 'dcorPValue', 'mandersM1', 'mandersM2', 'overlap', 'k1', 'k2', 'icq', 'randomizationP', 'threshold1', 'threshold2', 'mean1', 'mean2'] as const;

async function runAll(t: TestApp, s: Awaited<ReturnType<typeof setup>>, whileRunning?: (runId: number) => void) {
  const res = await s.mic.post('/api/runs').send({ recipeId: s.recipeId, scope: { kind: 'coverslip', id: s.coverslipId } });
  whileRunning?.(res.body.id);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const run = (await waitForRun(async () => (await s.mic.get(`/api/runs/${res.body.id}`)).body, 120_000)) as Record<string, any>;
  const rows = t.ctx.db.select().from(measurements).where(eq(measurements.runId, run.id)).all();
  // keyed by (field index, cell index) so the two databases compare
  const byPos = new Map<string, Row>();
  for (const r of rows) {
    const fi = s.ids.findIndex((cs) => cs.includes(r.cellId));
    byPos.set(`${fi}:${s.ids[fi].indexOf(r.cellId)}`, r);
  }
  return { run, rows, byPos };
}

describe.skipIf(!hasRedis)('BullMQ on Redis with an S3 store', () => {
  let redis: Awaited<ReturnType<typeof startRedis>>;
  let s3: Awaited<ReturnType<typeof startS3>>;
  let dist: TestApp, local: TestApp;
  const workers: ChildProcess[] = [];
  const workerLog: string[] = [];

  beforeAll(async () => {
    [redis, s3] = await Promise.all([startRedis(), startS3('syntopy')]);
    dist = await makeTestApp({ QUEUE_URL: redis.url, STORE_URL: 's3://syntopy/images', S3_ENDPOINT: s3.endpoint });
    local = await makeTestApp();
    for (let i = 0; i < 2; i++) {
      const child = spawn(process.execPath, ['--import', 'tsx', 'server/runs/worker-main.ts'], {
        // a short job lock, so that the job of the worker killed below goes to the other one within seconds
        env: { ...process.env, QUEUE_URL: redis.url, STORE_URL: 's3://syntopy/images', S3_ENDPOINT: s3.endpoint, DATA_DIR: '/nonexistent-worker-data', WORKER_CONCURRENCY: '1', WORKER_LOCK_MS: String(LOCK_MS) },
        stdio: ['ignore', 'pipe', 'pipe'],
      });
      workers.push(child);
      await new Promise<void>((resolve, reject) => {
        let out = '';
        const t = setTimeout(() => reject(new Error(`worker ${i} did not start: ${out}`)), 30_000);
        const on = (d: Buffer) => {
          out += d;
          workerLog.push(String(d));
          if (out.includes('is taking field jobs')) {
            clearTimeout(t);
            resolve();
          }
        };
        child.stdout!.on('data', on);
        child.stderr!.on('data', on);
        child.once('exit', (c) => reject(new Error(`worker exited ${c}: ${out}`)));
      });
    }
  }, 90_000);

  afterAll(async () => {
    await Promise.all(workers.map((w) => stopChild(w)));
    await dist?.close();
    await local?.close();
    await redis?.stop();
    await s3?.stop();
  });

  it('the server picked the BullMQ queue and the S3 store', () => {
    expect(dist.ctx.runs.kind).toBe('bullmq');
    expect(dist.ctx.store.kind).toBe('s3');
  });

  it('two worker processes share a run; numbers equal the in-process pool', async () => {
    const events = new QueueEvents(FIELDS_QUEUE, { connection: connectionOf(redis.url) });
    await events.waitUntilReady();
    const by = new Map<string, number>();
    events.on('completed', ({ returnvalue }) => {
      const rv = (typeof returnvalue === 'string' ? JSON.parse(returnvalue) : returnvalue) as { worker: string };
      by.set(rv.worker, (by.get(rv.worker) ?? 0) + 1);
    });
    const sd = await setup(dist);
    const sl = await setup(local);
    const [d, l] = await Promise.all([runAll(dist, sd), runAll(local, sl)]);
    await events.close();
    expect(d.run.status, JSON.stringify(d.run.fields)).toBe('done');
    expect(l.run.status).toBe('done');
    expect(d.rows.length).toBe(FIELDS * 5);
    expect(new Set(d.rows.map((r) => r.cellId)).size).toBe(FIELDS * 5);
    expect(by.size, `jobs per worker: ${JSON.stringify([...by])}\n${workerLog.join('')}`).toBe(2);
    expect([...by.values()].reduce((a, b) => a + b, 0)).toBe(FIELDS);
    expect(d.byPos.size).toBe(l.byPos.size);
    for (const [pos, a] of d.byPos) {
      const b = l.byPos.get(pos)!;
      for (const k of VALUE_KEYS) expect(a[k], `${pos} ${k}`).toBe(b[k]);
      const pa = a.provenance as Record<string, unknown>;
      const pb = b.provenance as Record<string, unknown>;
      expect(pa.inputSha256).toEqual(pb.inputSha256);
      expect(pa.thresholds).toEqual(pb.thresholds);
    }
    // the images really live in the object store
    expect((await dist.ctx.store.list()).length).toBe(FIELDS + FIELDS / 2);
  }, 180_000);

  it('a worker killed mid-job loses nothing and counts nothing twice; the numbers equal the pool\'s', async () => {
    // a heavier recipe, so that a field takes long enough to be killed while computing
    const heavy = { ...SETTINGS, randomization: { enabled: true, count: 400, blockSize: { kind: 'pixels', pixels: 3 } } };
    const slip = (t: TestApp) => t.ctx.db.insert(coverslips).values({ conditionId: t.world.conditionA, name: 'CS-kill', replicate: 2 }).returning().get().id;
    const sd = await setup(dist, slip(dist), heavy, 'Killed worker');
    const sl = await setup(local, slip(local), heavy, 'Killed worker');
    const victim = workers[0];
    const victimLog: string[] = [];
    let killedField: number | null = null;
    const started = new Promise<void>((resolve) => {
      victim.stdout!.on('data', (d: Buffer) => {
        victimLog.push(String(d));
        const m = /field (\d+) of run \d+: started/.exec(String(d));
        if (m && killedField === null) {
          killedField = Number(m[1]);
          victim.kill('SIGKILL');
          resolve();
        }
      });
    });
    const t0 = Date.now();
    const [d, l] = await Promise.all([runAll(dist, sd), runAll(local, sl), started]);
    await new Promise<void>((resolve) => (victim.exitCode !== null || victim.signalCode !== null ? resolve() : victim.once('exit', () => resolve())));
    expect(victim.signalCode).toBe('SIGKILL');
    expect(killedField, victimLog.join('')).not.toBeNull();
    // it died before finishing that field
    expect(victimLog.join('')).not.toMatch(new RegExp(`field ${killedField} of run \\d+: \\d+ cells`));
    expect(d.run.status, JSON.stringify(d.run)).toBe('done');
    expect(d.run.fieldsDone).toBe(FIELDS);
    expect(d.run.fieldsTotal).toBe(FIELDS);
    const states = dist.ctx.db.select().from(runFields).where(eq(runFields.runId, d.run.id)).all();
    expect(states.map((x) => x.status)).toEqual(Array(FIELDS).fill('done'));
    // one measurement per cell: the killed field's cells too, none twice
    expect(d.rows.length).toBe(FIELDS * 5);
    expect(new Set(d.rows.map((r) => r.cellId)).size).toBe(FIELDS * 5);
    expect(d.rows.filter((r) => r.fieldId === killedField).length).toBe(5);
    expect(d.byPos.size).toBe(l.byPos.size);
    for (const [pos, a] of d.byPos) {
      const b = l.byPos.get(pos)!;
      for (const k of VALUE_KEYS) expect(a[k], `${pos} ${k}`).toBe(b[k]);
    }
    console.log(`[bullmq] killed a worker during field ${killedField}; the run finished in ${Date.now() - t0} ms (job lock ${LOCK_MS} ms)`);
  }, 240_000);
});
