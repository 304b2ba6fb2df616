/**
 * The distributed path with real stand-ins: BullMQ on a real redis-server, images in an s3rver-backed store,
 * two `worker-main.ts` processes sharing one run. The numbers must equal the in-process pool's on the
 * same files, outlines and recipe (identity check; the engine itself is checked in tests/analysis).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { eq } from 'drizzle-orm';
import { QueueEvents } from 'bullmq';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { measurements } from '../../server/db/schema.js';
import { FIELDS_QUEUE, connectionOf } from '../../server/runs/bullmq.js';
import { addField, gridCells, syntheticPair, waitForRun } from './helpers.js';
import { hasRedis, NO_REDIS_MESSAGE, startRedis, startS3, stopChild } from './services.js';

if (!hasRedis) console.warn(NO_REDIS_MESSAGE);

const W = 128, H = 112, FIELDS = 6;
const SETTINGS = { threshold: { method: 'costes' }, randomization: { enabled: true, count: 20, blockSize: { kind: 'pixels', pixels: 3 } }, seed: 3 };

async function setup(t: TestApp) {
  const mic = await t.login('microscopist');
  const mgr = await t.login('manager');
  const ids: number[][] = [];
  for (let i = 0; i < FIELDS; i++) {
    const [ch1, ch2] = syntheticPair(W, H, 100 + i);
    const f = await addField(t.ctx, t.world.coverslipA, { name: `B${i}`, width: W, height: H, ch1, ch2, cells: gridCells(W, H, 5), split: i % 2 === 1 });
    ids.push(f.cellIds);
  }
  const r = (await mic.post('/api/recipes').send({ name: 'Distributed', settings: SETTINGS })).body;
  await mic.post(`/api/recipes/${r.id}/submit`);
  await mgr.post(`/api/recipes/${r.id}/approve`);
  return { mic, recipeId: r.id as number, ids };
}

type Row = typeof measurements.$inferSelect;
const VALUE_KEYS = ['pixels', 'pearson', 'spearman', 'kendallTauB', 'distanceCorrelation', 'dcorBiasCorrectedSq', 'dcorPValue', 'mandersM1', 'mandersM2', 'overlap', 'k1', 'k2', 'icq', 'randomizationP', 'threshold1', 'threshold2', 'mean1', 'mean2'] as const;

async function runAll(t: TestApp, s: Awaited<ReturnType<typeof setup>>) {
  const res = await s.mic.post('/api/runs').send({ recipeId: s.recipeId, scope: { kind: 'coverslip', id: t.world.coverslipA } });
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
        env: { ...process.env, QUEUE_URL: redis.url, STORE_URL: 's3://syntopy/images', S3_ENDPOINT: s3.endpoint, DATA_DIR: '/nonexistent-worker-data', WORKER_CONCURRENCY: '1' },
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
});
