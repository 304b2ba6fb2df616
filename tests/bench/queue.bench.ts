/**
 * Runs beyond one process: the same 200-field run through BullMQ on a real `redis-server` (started here, on a
 * free loopback port) with one stateless worker process (`server/runs/worker-main.ts`), then with two. Prints
 * each run's wall time (from the run's creation to its last field written), the speed-up of two workers over
 * one (target ≥ 1.7× on a 2-core machine) and whether both runs gave identical numbers for every cell (exit 1
 * if not). The web server (this process) only hands out jobs and writes results. Skipped, saying so, when
 * redis-server is not installed.
 *
 *   BENCH=queue npm run bench              QUEUE_FIELDS=40 for a quicker look
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { spawn, type ChildProcess } from 'node:child_process';
import { performance } from 'node:perf_hooks';

process.env.NODE_ENV ??= 'production';
const FIELDS = Number(process.env.QUEUE_FIELDS ?? 200);
const W = 320, H = 320, CELLS = 12;

/** user + system CPU milliseconds of a child process so far (Linux /proc; null elsewhere) */
function cpuOf(pid: number): number | null {
  try {
    const stat = fs.readFileSync(`/proc/${pid}/stat`, 'utf8');
    const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return ((Number(f[11]) + Number(f[12])) * 1000) / 100; // clock ticks (USER_HZ 100)
  } catch {
    return null;
  }
}

async function main() {
  const { hasRedis, NO_REDIS_MESSAGE, startRedis, stopChild } = await import('../runs/services.js');
  if (!hasRedis) {
    console.log(NO_REDIS_MESSAGE);
    return;
  }
  const { loadEnv } = await import('../../server/env.js');
  const { createContext, closeContext } = await import('../../server/context.js');
  const { seedDemo, DEMO_STUDY, DEMO_RECIPE } = await import('../../server/db/seed/index.js');
  const { createRun, resolveScope } = await import('../../server/runs/records.js');
  const { runs, studies, recipes, users, conditions, coverslips, measurements } = await import('../../server/db/schema.js');
  const { addField, gridCells, syntheticPair } = await import('../runs/helpers.js');
  const { eq, and } = await import('drizzle-orm');

  const redis = await startRedis();
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-bench-queue-'));
  const env = loadEnv({ ...process.env, DATA_DIR: dataDir, SEED_DEMO: 'never', QUEUE_URL: redis.url } as NodeJS.ProcessEnv);
  const ctx = await createContext(env);
  const children: ChildProcess[] = [];
  try {
    if (ctx.runs.kind !== 'bullmq') throw new Error(`expected the BullMQ queue, got ${ctx.runs.kind}`);
    await seedDemo(ctx, {});
    const study = ctx.db.select().from(studies).where(eq(studies.name, DEMO_STUDY)).get()!;
    const recipe = ctx.db.select().from(recipes).where(and(eq(recipes.name, DEMO_RECIPE), eq(recipes.status, 'approved'))).get()!;
    const user = ctx.db.select().from(users).where(eq(users.email, 'microscopist@demo.test')).get()!;
    const condition = ctx.db.select().from(conditions).where(eq(conditions.studyId, study.id)).get()!;
    const slip = ctx.db.insert(coverslips).values({ conditionId: condition.id, name: 'Queue bench', replicate: 9 }).returning().get().id;
    for (let i = 0; i < FIELDS; i++) {
      const [ch1, ch2] = syntheticPair(W, H, 1000 + i);
      await addField(ctx, slip, { name: `Q${i + 1}`, width: W, height: H, ch1, ch2, cells: gridCells(W, H, CELLS), split: i % 2 === 1 });
    }

    async function startWorkers(n: number) {
      const started: ChildProcess[] = [];
      for (let i = 0; i < n; i++) {
        const child = spawn(process.execPath, ['--import', 'tsx', 'server/runs/worker-main.ts'], {
          env: { ...process.env, QUEUE_URL: redis.url, DATA_DIR: dataDir, WORKER_CONCURRENCY: '1' },
          stdio: ['ignore', 'pipe', 'pipe'],
        });
        children.push(child);
        started.push(child);
        await new Promise<void>((resolve, reject) => {
          let out = '';
          const t = setTimeout(() => reject(new Error(`worker did not start: ${out}`)), 60_000);
          const on = (d: Buffer) => {
            out += d;
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
      return started;
    }

    async function timedRun(workers: number) {
      const procs = await startWorkers(workers);
      const cpu0 = procs.map((p) => cpuOf(p.pid!) ?? 0);
      const load = os.loadavg()[0];
      const scope = resolveScope(ctx.db, 'coverslip', slip);
      const t0 = performance.now();
      const run = await createRun(ctx, { recipe, scope: { kind: 'coverslip', id: slip, ...scope }, userId: user.id });
      for (;;) {
        const r = ctx.db.select().from(runs).where(eq(runs.id, run.id)).get()!;
        if (r.status !== 'queued' && r.status !== 'running') {
          if (r.status !== 'done') throw new Error(`run ${run.id} ended ${r.status}: ${r.error}`);
          break;
        }
        await new Promise((res) => setTimeout(res, 20));
      }
      const ms = performance.now() - t0;
      const cpu = procs.map((p, i) => (cpuOf(p.pid!) ?? 0) - cpu0[i]);
      await Promise.all(procs.map((p) => stopChild(p)));
      return { ms, runId: run.id, cpu, load };
    }

    const one = await timedRun(1);
    const two = await timedRun(2);
    const values = (runId: number) =>
      new Map(
        ctx.db
          .select()
          .from(measurements)
          .where(eq(measurements.runId, runId))
          .all()
          .map((m) => [m.cellId, JSON.stringify({ ...m, id: 0, runId: 0, createdAt: 0, provenance: { ...(m.provenance as object), runId: 0, computedAt: 0, ms: 0 } })]),
      );
    const a = values(one.runId), b = values(two.runId);
    const same = a.size === FIELDS * CELLS && a.size === b.size && [...a].every(([cell, v]) => b.get(cell) === v);
    const line = (name: string, r: typeof one) =>
      `${name}: ${r.ms.toFixed(0)} ms wall (${(r.ms / FIELDS).toFixed(1)} ms a field), worker CPU ${r.cpu.map((c) => c.toFixed(0)).join(' + ')} ms, load ${r.load.toFixed(1)}`;
    console.log(`${FIELDS} fields of ${W}×${H} px, ${CELLS} cells each, recipe "${recipe.name}", ${os.availableParallelism()} cores`);
    console.log(line('1 worker process', one));
    console.log(line('2 worker processes', two));
    console.log(`speed-up of 2 workers over 1: ${(one.ms / two.ms).toFixed(2)}×  [target ≥ 1.70× on 2 cores]`);
    console.log(`numbers of both runs identical for all ${a.size} cells: ${same ? 'yes' : 'NO'}`);
    if (!same) process.exitCode = 1;
  } finally {
    await Promise.all(children.map((c) => stopChild(c)));
    await closeContext(ctx);
    await redis.stop();
    fs.rmSync(dataDir, { recursive: true, force: true });
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
