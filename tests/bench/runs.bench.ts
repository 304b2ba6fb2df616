/**
 * Run overhead: the wall time of a run (queue hand-off to the pool thread, thread start, job building, database
 * writes, bookkeeping) against the decode + engine time of the same fields measured in this process, one field
 * after another (loadJobPixels + computeField, the two steps a pool thread runs). Printed as a ratio; the target
 * is ≤ 1.3×. Two cases: the demo study (12 small fields), and one 2048² field with 60 cells. The pool's thread is
 * started as the server starts it (`warm()` right after the context is made), and as it starts it warms its code
 * on small synthetic fields (server/runs/warm-up.ts); that warm-up is part of server start, not of any run, and is
 * printed with it: the thread's start time, and the warm-up's own time and fields within it. "Cold" is the first
 * run of a case on that thread (its JIT has seen only the warm-up's fields, and for the 2048² case the demo's), and
 * "warm" the best of the next three runs. WORKERS=1, so the run does the same work on one thread as the baseline
 * does here; the baseline is the best of three passes after a first one (warm JIT, as the pool thread is by then). Each case also prints this
 * process's CPU time (all threads) for the run against the baseline's, which the machine's load moves less, and
 * where the run's time went (the pool's timings: job building, writes, the thread's decode and engine, the rest).
 *
 * Spots on vs off: the same fields run (warm) with the demo recipe and with a copy of it whose objects section is
 * on (defaults: σ 1.5 px, k 5, d 2 px, 999 placements); the ratio of the two run wall times is printed, and the
 * CPU time of this process for the same fields' decode + engine with the section on vs off.
 *
 *   BENCH=runs npm run bench
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { performance } from 'node:perf_hooks';

process.env.NODE_ENV ??= 'production';

async function main() {
  const { loadEnv } = await import('../../server/env.js');
  const { createContext, closeContext } = await import('../../server/context.js');
  const { seedDemo, DEMO_STUDY, DEMO_RECIPE } = await import('../../server/db/seed/index.js');
  const { createRun, resolveScope, buildJob } = await import('../../server/runs/records.js');
  const { loadJobPixels, computeField } = await import('../../server/runs/compute.js');
  const { runs, studies, recipes, users, cells, fields } = await import('../../server/db/schema.js');
  const { eq, and } = await import('drizzle-orm');
  const { DEFAULT_OBJECTS_SETTING } = await import('../../shared/schemas/recipes.js');
  const { PoolRunQueue } = await import('../../server/runs/pool.js');

  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-bench-runs-'));
  const env = loadEnv({ ...process.env, DATA_DIR: dataDir, SEED_DEMO: 'never', WORKERS: '1' } as NodeJS.ProcessEnv);
  const ctx = await createContext(env);
  try {
    const c0 = process.cpuUsage();
    const threadStart = (await ctx.runs.warm?.()) ?? 0;
    const startCpu = process.cpuUsage(c0);
    // the thread's warm-up is in its start time (warm() resolves once the thread has warmed up)
    const warmUps = (ctx.runs as { warmUps?: { ms: number; fields: number; error: string | null }[] }).warmUps ?? [];
    console.log(
      `server start: pool thread started in ${threadStart.toFixed(0)} ms wall, ${((startCpu.user + startCpu.system) / 1000).toFixed(0)} ms CPU of this process (before any run); ` +
        (warmUps.length ? `of it, its warm-up: ${warmUps.map((w) => `${w.ms.toFixed(0)} ms, ${w.fields} synthetic field(s)${w.error ? `, stopped: ${w.error}` : ''}`).join('; ')}` : 'no warm-up reported') +
        `; load ${os.loadavg()[0].toFixed(2)}`,
    );
    await seedDemo(ctx, {});
    const study = ctx.db.select().from(studies).where(eq(studies.name, DEMO_STUDY)).get()!;
    const recipe = ctx.db.select().from(recipes).where(and(eq(recipes.name, DEMO_RECIPE), eq(recipes.status, 'approved'))).get()!;
    const user = ctx.db.select().from(users).where(eq(users.email, 'microscopist@demo.test')).get()!;

    // the demo recipe with its objects section on (inserted approved, as a reviewed version would be)
    const spotsRecipe = ctx.db
      .insert(recipes)
      .values({ name: `${recipe.name} + spots`, version: 1, status: 'approved', settings: { ...recipe.settings, objects: { ...DEFAULT_OBJECTS_SETTING, enabled: true } }, description: 'bench' })
      .returning()
      .get();
    const pool = ctx.runs as InstanceType<typeof PoolRunQueue>;
    if (!(pool instanceof PoolRunQueue)) throw new Error(`the runs benchmark needs the in-process pool, received a ${ctx.runs.kind} queue`);
    const cpuMs = () => {
      const c = process.cpuUsage();
      return (c.user + c.system) / 1000;
    };
    async function timedRun(kind: 'study' | 'field', id: number, withRecipe = recipe) {
      const scope = resolveScope(ctx.db, kind, id);
      const before = { ...pool.timings };
      const c0 = cpuMs();
      const t0 = performance.now();
      const run = await createRun(ctx, { recipe: withRecipe, scope: { kind, id, ...scope }, userId: user.id });
      const created = performance.now() - t0;
      for (;;) {
        const r = ctx.db.select().from(runs).where(eq(runs.id, run.id)).get()!;
        if (r.status !== 'queued' && r.status !== 'running') {
          if (r.status !== 'done') throw new Error(`run ${run.id} ended ${r.status}: ${r.error}`);
          break;
        }
        await new Promise((res) => setTimeout(res, 2));
      }
      const ms = performance.now() - t0;
      const cpu = cpuMs() - c0;
      const d = Object.fromEntries(Object.entries(pool.timings).map(([k, v]) => [k, v - before[k as keyof typeof before]])) as typeof before;
      return { ms, cpu, created, d, runId: run.id, fieldIds: scope.fieldIds };
    }
    /** where a run's wall time went (the pool's own timings; web-thread work overlaps the thread's next batch) */
    const breakdown = (r: Awaited<ReturnType<typeof timedRun>>) =>
      `create ${r.created.toFixed(0)} + batches ${r.d.batches} (prepare ${r.d.prepareMs.toFixed(0)}, write ${r.d.recordMs.toFixed(0)}) on the web thread; ` +
      `pool thread: decode ${r.d.threadLoadMs.toFixed(0)} + engine ${(r.d.threadMs - r.d.threadLoadMs).toFixed(0)}; ` +
      `rest (hand-off, thread start, polling) ${(r.ms - r.created - r.d.prepareMs - r.d.recordMs - r.d.threadMs).toFixed(0)} ms`;
    async function baseline(runId: number, fieldIds: number[]) {
      let decode = 0, engine = 0, cellsMeasured = 0, engineCpu = 0;
      const c0 = cpuMs();
      for (const fieldId of fieldIds) {
        const job = buildJob(ctx.db, runId, fieldId);
        const t0 = performance.now();
        const px = await loadJobPixels(ctx.store, job);
        const t1 = performance.now();
        const c0 = process.cpuUsage();
        cellsMeasured += computeField(job, px).length;
        const c = process.cpuUsage(c0);
        engineCpu += (c.user + c.system) / 1000;
        engine += performance.now() - t1;
        decode += t1 - t0;
      }
      // this process's CPU time over decode + engine (the job building is left out, as the run's is on another thread's clock)
      return { decode, engine, cellsMeasured, engineCpu, cpu: cpuMs() - c0 };
    }
    /** the same fields with Spots off and on: warm runs (best of two) and this process's engine CPU time */
    const spotsCost = async (name: string, kind: 'study' | 'field', id: number) => {
      await timedRun(kind, id, spotsRecipe); // cold: warms the pool thread for the spots code
      const off = Math.min((await timedRun(kind, id)).ms, (await timedRun(kind, id)).ms);
      const onRuns = [await timedRun(kind, id, spotsRecipe), await timedRun(kind, id, spotsRecipe)];
      const on = Math.min(onRuns[0].ms, onRuns[1].ms);
      const offRun = await timedRun(kind, id);
      await baseline(onRuns[0].runId, onRuns[0].fieldIds);
      const bOn = await baseline(onRuns[0].runId, onRuns[0].fieldIds);
      const bOff = await baseline(offRun.runId, offRun.fieldIds);
      console.log(
        `${name}, Spots on vs off: run wall ${on.toFixed(0)} vs ${off.toFixed(0)} ms (${(on / off).toFixed(2)}×); ` +
          `engine CPU ${bOn.engineCpu.toFixed(0)} vs ${bOff.engineCpu.toFixed(0)} ms (${(bOn.engineCpu / bOff.engineCpu).toFixed(2)}×)`,
      );
    };
    const best = <T extends { ms: number }>(xs: T[]) => xs.reduce((a, x) => (x.ms < a.ms ? x : a));
    const report = async (name: string, kind: 'study' | 'field', id: number) => {
      const cold = await timedRun(kind, id);
      const warm = best([await timedRun(kind, id), await timedRun(kind, id), await timedRun(kind, id)]);
      await baseline(warm.runId, warm.fieldIds); // warms this thread's JIT as the cold run warmed the pool thread's
      const passes = [await baseline(warm.runId, warm.fieldIds), await baseline(warm.runId, warm.fieldIds), await baseline(warm.runId, warm.fieldIds)];
      const b = passes.map((p) => ({ ...p, ms: p.decode + p.engine })).reduce((a, p) => (p.ms < a.ms ? p : a));
      const work = b.decode + b.engine;
      console.log(
        `${name}: ${warm.fieldIds.length} field(s), ${b.cellsMeasured} cells; decode ${b.decode.toFixed(0)} ms + engine ${b.engine.toFixed(0)} ms = ${work.toFixed(0)} ms; ` +
          `run wall cold ${cold.ms.toFixed(0)} ms (${(cold.ms / work).toFixed(2)}×), warm ${warm.ms.toFixed(0)} ms (${(warm.ms / work).toFixed(2)}×)  [target ≤ 1.30×]; ` +
          `load ${os.loadavg()[0].toFixed(2)}\n` +
          `  CPU time of this process: decode + engine ${b.cpu.toFixed(0)} ms; run cold ${cold.cpu.toFixed(0)} ms (${(cold.cpu / b.cpu).toFixed(2)}×), warm ${warm.cpu.toFixed(0)} ms (${(warm.cpu / b.cpu).toFixed(2)}×)\n` +
          `  cold: ${breakdown(cold)}\n  warm: ${breakdown(warm)}`,
      );
    };

    await report('demo study', 'study', study.id);
    await spotsCost('demo study', 'study', study.id);

    // one 2048² field with 60 cells: the demo's first field image is replaced by a 2048² one of the seed's kind
    const { tiffPages, twoChannels } = await import('../security/tiff.js');
    const { keyForSha } = await import('../../server/images/store.js');
    const crypto = await import('node:crypto');
    const W = 2048;
    const tif = tiffPages(W, W, twoChannels(W, W));
    const sha = crypto.createHash('sha256').update(tif).digest('hex');
    const tmp = path.join(dataDir, 'big.tif');
    fs.writeFileSync(tmp, tif);
    await ctx.store.putFile(keyForSha(sha), tmp);
    const db = ctx.db.$client;
    const field = ctx.db.select().from(fields).limit(1).get()!;
    db.prepare("INSERT OR IGNORE INTO files (sha256, size, store_key, original_name) VALUES (?, ?, ?, 'big.tif')").run(sha, tif.length, keyForSha(sha));
    db.prepare("UPDATE fields SET file1_sha = ?, file2_sha = ?, channel1 = 1, channel2 = 2, width = ?, height = ?, bit_depth = 16, sample_format = 'uint' WHERE id = ?").run(sha, sha, W, W, field.id);
    ctx.db.update(cells).set({ deletedAt: new Date().toISOString() }).where(eq(cells.fieldId, field.id)).run();
    const ins = db.prepare("INSERT INTO cells (field_id, name, geometry, pixel_count, source) VALUES (?, ?, ?, ?, 'seed')");
    for (let i = 0; i < 60; i++) {
      const x = 40 + (i % 10) * 200, y = 40 + Math.floor(i / 10) * 320;
      ins.run(field.id, `Cell ${i + 1}`, JSON.stringify({ kind: 'ellipse', cx: x + 70, cy: y + 90, rx: 70, ry: 90 }), Math.round(Math.PI * 70 * 90));
    }
    await report('2048² field, 60 cells', 'field', field.id);
    await spotsCost('2048² field, 60 cells', 'field', field.id);
  } finally {
    await closeContext(ctx);
    fs.rmSync(dataDir, { recursive: true, force: true });
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
