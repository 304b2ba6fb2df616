/**
 * Bounded load test (`npm run load`): the real app in this process on 127.0.0.1:0 with a temp DATA_DIR and the
 * database of tests/load/build-db.ts (LOAD_CELLS cells, 100 per field, each measured; built once per schema and
 * reused), then autocannon (loopback only, fixed duration, LOAD_CONNECTIONS connections, in a worker thread so
 * the load generator does not share the server's event loop) against each mix below. Every figure is printed
 * beside its target; the exit code is 1 when any target is missed.
 *
 *   LOAD_CELLS=1000000 LOAD_SECONDS=8 npm run -s load
 *   LOAD_SECONDS=5 LOAD_CONNECTIONS=20 npm run load      # 100,000 cells by default
 *
 * Targets: every review-grid mix (default order; each coefficient sorted either way at deep pages; condition,
 * coverslip, flag and range filters; cursor pages) p99 < 200 ms with zero errors; the first request of a sort
 * or filter not asked before < 500 ms; during sign-ins at full concurrency, other requests p99 < 100 ms;
 * cells.csv of every row: first byte < 300 ms and server memory growth < 100 MB; Compare of every cell with
 * 2,000 resamples, cold (not cached) < 1.5 s, while /api/health answers with p99 < 50 ms. Sign-in alone, field
 * previews, the first Compare (its threads start) and a cached Compare are reported without a target. NODE_ENV defaults to production here (production bcrypt cost).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import { performance } from 'node:perf_hooks';
import type { Options as AutocannonOptions, Result as AutocannonResult } from 'autocannon';

process.env.NODE_ENV ??= 'production';
const SECONDS = Number(process.env.LOAD_SECONDS ?? 10);
const CONNECTIONS = Number(process.env.LOAD_CONNECTIONS ?? 50);
const CELLS = Number(process.env.LOAD_CELLS ?? 100_000);

type Req = { method: 'GET' | 'POST'; path: string; headers?: Record<string, string>; body?: string };
interface Figure {
  name: string;
  value: string;
  target: string;
  met: boolean | null;
}

async function main() {
  const { default: autocannon } = await import('autocannon');
  const { loadEnv } = await import('../../server/env.js');
  const { createContext, closeContext } = await import('../../server/context.js');
  const { createApp } = await import('../../server/app.js');
  const { hashPassword } = await import('../../server/auth/passwords.js');
  const { keyForSha } = await import('../../server/images/store.js');
  const { CELL_TABLE_KEYS } = await import('../../shared/coefficients.js');
  const { buildLoadDb, EMAIL, PASSWORD } = await import('./build-db.js');

  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-load-'));
  const built = await buildLoadDb(path.join(dataDir, 'syntopy.db'), CELLS, () => hashPassword(PASSWORD));
  const env = loadEnv({ ...process.env, DATA_DIR: dataDir, SEED_DEMO: 'never', PORT: '0', HOST: '127.0.0.1', WORKERS: '1' } as NodeJS.ProcessEnv);
  const ctx = await createContext(env);
  const tmp = path.join(dataDir, 'load-field.tif');
  fs.writeFileSync(tmp, built.tif);
  await ctx.store.putFile(keyForSha(built.sha), tmp);
  const { studyId, fieldIds, cellCount } = built;
  const db = ctx.db.$client;
  const condIds = (db.prepare('SELECT id FROM conditions WHERE study_id = ? ORDER BY id').pluck().all(studyId) as number[]);
  const slipIds = (db.prepare('SELECT cs.id FROM coverslips cs JOIN conditions cd ON cd.id = cs.condition_id WHERE cd.study_id = ? ORDER BY cs.id').pluck().all(studyId) as number[]);
  const mb = (b: number) => (b / 1024 / 1024).toFixed(0);
  console.log(
    `[load] ${cellCount.toLocaleString('en')} cells with measurements in ${fieldIds.length.toLocaleString('en')} fields: database ${mb(built.bytes)} MB, ` +
      (built.reused ? `reused a built file (${built.buildSeconds.toFixed(1)} s to copy)` : `built in ${built.buildSeconds.toFixed(1)} s (one transaction)`),
  );

  const app = createApp(ctx);
  const server = app.listen(0, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const login = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: EMAIL, password: PASSWORD }) });
  if (login.status !== 200) throw new Error(`sign-in failed: ${login.status} ${await login.text()}`);
  const cookie = (login.headers.get('set-cookie') ?? '').split(';')[0];
  const grid = (qs: string) => `/api/studies/${studyId}/cell-table?${qs}`;
  const get = async (p: string) => {
    const t0 = performance.now();
    const res = await fetch(base + p, { headers: { cookie } });
    const body = await res.text();
    if (res.status !== 200) throw new Error(`GET ${p}: ${res.status} ${body.slice(0, 200)}`);
    return { ms: performance.now() - t0, body: JSON.parse(body) as { total: number; nextCursor: string | null } };
  };

  const figures: Figure[] = [];
  const figure = (name: string, value: string, target: string, met: boolean | null) => {
    figures.push({ name, value, target, met });
    console.log(`[load] ${name}: ${value} (target ${target})${met === null ? '' : met ? ' met' : ' MISSED'}`);
  };

  // ---- the index: built by the first request (memory measured around it)
  global.gc?.();
  const mem0 = process.memoryUsage();
  const first = await get(grid('pageSize=50'));
  if (first.body.total !== cellCount) throw new Error(`grid check failed: total=${first.body.total}, expected ${cellCount}`);
  const mem1 = process.memoryUsage();
  figure('grid index build (first request after start or a write)', `${Math.round(first.ms)} ms, +${mb(mem1.rss - mem0.rss)} MB resident`, 'reported', null);
  console.log(`[load] each mix: ${SECONDS} s, ${CONNECTIONS} connections, loopback; NODE_ENV=${process.env.NODE_ENV}`);

  // ---- first request of a sort or filter not asked before (sequential, index warm)
  const fresh = [
    'sort=icq&dir=desc&page=3000',
    'sort=kendallTauB&dir=asc&excluded=no',
    `sort=mandersM2&dir=desc&conditionId=${condIds[1]}`,
    `sort=overlap&coverslipId=${slipIds[3]}&page=20`,
    'sort=mean1&range=mandersM1:0.5:0.6&saturated=no',
    'sort=field&dir=desc&provisional=no&page=1000',
    'sort=cell&q=Cell%207',
  ];
  let worstFresh = 0;
  const freshMs: number[] = [];
  for (const qs of fresh) {
    const { ms } = await get(grid(`pageSize=50&${qs}`));
    freshMs.push(Math.round(ms));
    worstFresh = Math.max(worstFresh, ms);
  }
  figure('grid: first request of a new sort/filter, slowest of ' + fresh.length, `${Math.round(worstFresh)} ms (each: ${freshMs.join(', ')})`, '< 500 ms', worstFresh < 500);

  // ---- request lists (plain lists, cycled per connection: worker threads cannot take functions)
  const pages = Math.floor(cellCount / 50);
  const deep = (i: number) => String((i * 7919) % pages);
  const gridDefault: Req[] = Array.from({ length: 10 }, (_, i) => ({ method: 'GET', path: grid(`pageSize=50&page=${i}`) }));
  const gridSorts: Req[] = CELL_TABLE_KEYS.flatMap((k, j) =>
    (['asc', 'desc'] as const).map((dir, d) => ({ method: 'GET' as const, path: grid(`pageSize=50&sort=${k}&dir=${dir}&page=${deep(2 * j + d + 1)}`) })),
  );
  const filterSets = [
    `conditionId=${condIds[0]}`,
    `coverslipId=${slipIds[1]},${slipIds[7]}`,
    'excluded=no',
    'excluded=yes',
    'saturated=yes',
    'provisional=no&saturated=no',
    'range=pearson:0.2:0.6',
    'range=spearman:0.3:&excluded=no',
    `range=mandersM1:0.45:0.55&conditionId=${condIds[1]}`,
  ];
  const sorts = ['condition', 'pearson', 'spearman', 'mandersM1', 'coverslip', 'cell'];
  const gridFilters: Req[] = filterSets.flatMap((f, i) =>
    sorts.slice(0, 4).map((s, j) => ({ method: 'GET' as const, path: grid(`pageSize=50&${f}&sort=${sorts[(i + j) % sorts.length]}&dir=${(i + j) % 2 ? 'desc' : 'asc'}&page=${(i * 31 + j * 7) % 40}`) })),
  );
  // cursors taken at deep pages, then the pages after them
  const gridCursors: Req[] = [];
  for (const [i, s] of sorts.entries()) {
    const qs = `pageSize=50&sort=${s}&dir=${i % 2 ? 'desc' : 'asc'}${i % 3 === 0 ? '&excluded=no' : ''}`;
    const { body } = await get(grid(`${qs}&page=${deep(i + 100)}`));
    if (body.nextCursor) gridCursors.push({ method: 'GET', path: grid(`${qs}&cursor=${encodeURIComponent(body.nextCursor)}`) });
  }
  const previewRequests: Req[] = fieldIds.slice(0, 40).map((id, i) => ({ method: 'GET', path: `/api/fields/${id}/preview.png?max=${i % 2 ? 256 : 512}&view=${['composite', 'ch1', 'ch2'][i % 3]}` }));
  for (const r of previewRequests.slice(0, 6)) await fetch(base + r.path, { headers: { cookie } });
  const signIn: Req[] = [{ method: 'POST', path: '/api/auth/login', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: EMAIL, password: PASSWORD }) }];
  const others: Req[] = [{ method: 'GET', path: '/api/health' }, ...gridDefault.slice(0, 3), ...gridSorts.slice(0, 3)];
  // warm every list once, so the mixes measure steady paging (first requests are measured above)
  for (const r of [...gridDefault, ...gridSorts, ...gridFilters, ...gridCursors]) await get(r.path);

  const cannon = (requests: Req[], connections = CONNECTIONS, headers: Record<string, string> = { cookie }) =>
    autocannon({ url: base, connections, duration: SECONDS, workers: 1, timeout: 30, headers, requests } as AutocannonOptions) as unknown as Promise<AutocannonResult>;
  const errorsOf = (r: AutocannonResult) => r.errors + r.timeouts + r.non2xx;
  const line = (r: AutocannonResult) => `p50 ${r.latency.p50} ms, p99 ${r.latency.p99} ms, ${r.requests.total} requests (${Math.round(r.requests.average)}/s), errors ${errorsOf(r)}`;
  async function drain() {
    // let the server finish what is still queued (e.g. password hashes) before the next mix
    const t0 = Date.now();
    for (;;) {
      const a = performance.eventLoopUtilization();
      await new Promise((r) => setTimeout(r, 500));
      if (performance.eventLoopUtilization(a).utilization < 0.2 || Date.now() - t0 > 180_000) break;
    }
  }
  const gridTarget = async (name: string, requests: Req[]) => {
    const r = await cannon(requests);
    await drain();
    figure(name, line(r), 'p99 < 200 ms, 0 errors', r.requests.total > 0 && r.latency.p99 < 200 && errorsOf(r) === 0);
  };

  await gridTarget(`grid: default order, pages 1-10 of ${cellCount.toLocaleString('en')}`, gridDefault);
  await gridTarget(`grid: each of ${CELL_TABLE_KEYS.length} coefficients sorted either way, deep pages`, gridSorts);
  await gridTarget('grid: condition/coverslip/flag/range filters with sorts', gridFilters);
  await gridTarget('grid: cursor (keyset) pages after deep pages', gridCursors);

  // ---- Compare (2,000-resample hierarchical bootstrap, every cell): computed in threads, cached per data version.
  // The client is a separate process (reading the answers must not share the server's event loop; the answer
  // lists at most COMPARE_POINTS_MAX points, ~1.6 MB). The first request starts the threads; later ones with a new seed are cold (nothing cached);
  // meanwhile /api/health is asked at 10 connections.
  {
    const client = `const http = require('node:http');
      const urls = JSON.parse(process.argv[1]); const until = performance.now() + Number(process.argv[3]); const out = [];
      (async () => { for (const u of urls) { if (out.length && performance.now() > until) break; const t0 = performance.now(); const r = await new Promise((resolve, reject) => http.get(u, { headers: { cookie: process.argv[2] } }, (res) => { let bytes = 0; res.on('data', (b) => (bytes += b.length)); res.on('end', () => resolve({ status: res.statusCode, bytes })); }).on('error', reject)); out.push({ ...r, ms: performance.now() - t0 }); } console.log(JSON.stringify(out)); })();`;
    const { spawn } = await import('node:child_process');
    /** the requests one after another; with `forMs`, no new one after that long (at least one) */
    const compareTimes = (urls: string[], forMs = 1e9) =>
      new Promise<{ status: number; bytes: number; ms: number }[]>((resolve, reject) => {
        let text = '';
        const p = spawn(process.execPath, ['-e', client, JSON.stringify(urls.map((u) => base + u)), cookie, String(forMs)]);
        p.stdout.on('data', (d) => (text += d));
        p.stderr.on('data', (d) => process.stderr.write(d));
        p.on('error', reject);
        p.on('close', () => resolve(JSON.parse(text)));
      });
    const cmp = (seed: number) => `/api/studies/${studyId}/compare?coefficient=pearson&resamples=2000&seed=${seed}`;
    const [start] = await compareTimes([cmp(1)]);
    if (start.status !== 200) throw new Error(`compare: status ${start.status}`);
    figure(`Compare, ${cellCount.toLocaleString('en')} cells: first request after start (its threads start)`, `${Math.round(start.ms)} ms, ${mb(start.bytes)} MB`, 'reported', null);
    // one cold request alone, for its CPU time (all of the server's threads; nothing else runs meanwhile)
    const cpu0 = process.cpuUsage();
    const [alone] = await compareTimes([cmp(2)]);
    const cpu = process.cpuUsage(cpu0);
    // cold requests back to back for as long as /api/health is asked (the last may end a little after it)
    const seeds = Array.from({ length: 40 }, (_, i) => 3 + i);
    const [health, cold] = await Promise.all([cannon([{ method: 'GET', path: '/api/health' }], 10, {}), compareTimes(seeds.map(cmp), SECONDS * 1000 - 1500)]);
    await drain();
    if ([alone, ...cold].some((c) => c.status !== 200)) throw new Error(`compare: statuses ${[alone, ...cold].map((c) => c.status).join(', ')}`);
    const worst = Math.max(alone.ms, ...cold.map((c) => c.ms));
    figure(
      `Compare cold (not cached), slowest of ${cold.length + 1}`,
      `${Math.round(worst)} ms (alone ${Math.round(alone.ms)} ms with ${Math.round((cpu.user + cpu.system) / 1000)} ms of server CPU in all threads; beside /api/health: ${cold.map((c) => Math.round(c.ms)).join(', ')})`,
      '< 1500 ms',
      worst < 1500,
    );
    figure('GET /api/health (10 connections) while Compares compute', line(health), 'p99 < 50 ms, 0 errors', health.requests.total > 0 && health.latency.p99 < 50 && errorsOf(health) === 0);
    const [cached] = await compareTimes([cmp(seeds[cold.length - 1])]);
    figure('Compare cached (the same request again)', `${Math.round(cached.ms)} ms`, 'reported', null);
  }

  // ---- cells.csv of every row: time to first byte, and the server's resident memory growth while it streams
  {
    global.gc?.();
    const rss0 = process.memoryUsage().rss;
    let peak = rss0;
    const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 50);
    // the client is a separate process (its buffers are not the server's memory, and it does not share the
    // event loop): it prints the time to the first byte, the total time, the bytes and the line count
    const client = `const http = require('node:http'); const t0 = performance.now(); let first = 0, bytes = 0, lines = 0;
      http.get(process.argv[1], { headers: { cookie: process.argv[2] } }, (res) => {
        res.on('data', (b) => { if (!first) first = performance.now() - t0; bytes += b.length; for (let i = 0; i < b.length; i++) if (b[i] === 10) lines++; });
        res.on('end', () => console.log(JSON.stringify({ status: res.statusCode, first, total: performance.now() - t0, bytes, lines })));
      });`;
    const { spawn } = await import('node:child_process');
    const out = await new Promise<string>((resolve, reject) => {
      let text = '';
      const p = spawn(process.execPath, ['-e', client, `${base}/api/studies/${studyId}/cells.csv`, cookie]);
      p.stdout.on('data', (d) => (text += d));
      p.on('error', reject);
      p.on('close', () => resolve(text));
    });
    const { status, first: firstByte, total, bytes, lines } = JSON.parse(out) as { status: number; first: number; total: number; bytes: number; lines: number };
    clearInterval(sampler);
    peak = Math.max(peak, process.memoryUsage().rss);
    const rows = lines - 1;
    if (status !== 200 || rows !== cellCount) throw new Error(`cells.csv: status ${status}, ${rows} rows, expected ${cellCount}`);
    figure(`cells.csv, ${rows.toLocaleString('en')} rows (${mb(bytes)} MB in ${(total / 1000).toFixed(1)} s): first byte`, `${Math.round(firstByte)} ms`, '< 300 ms', firstByte < 300);
    figure('cells.csv: server memory growth while streaming (resident, peak)', `${mb(peak - rss0)} MB`, '< 100 MB', peak - rss0 < 100 * 1024 * 1024);
  }

  {
    const r = await cannon(signIn, CONNECTIONS, {});
    await drain();
    figure('sign-in alone (POST /api/auth/login)', line(r), 'reported', null);
  }
  {
    const [, other] = await Promise.all([cannon(signIn, CONNECTIONS, {}), cannon(others, 10)]);
    await drain();
    figure(`other requests (health, grid pages; 10 connections) during ${CONNECTIONS} concurrent sign-ins`, line(other), 'p99 < 100 ms, 0 errors', other.requests.total > 0 && other.latency.p99 < 100 && errorsOf(other) === 0);
  }
  {
    const r = await cannon(previewRequests);
    await drain();
    figure('field preview (GET preview.png, 256-512 px)', line(r), 'reported', null);
  }

  console.log(`\n ${'figure'.padEnd(86)} ${'value'.padEnd(70)} target`);
  for (const f of figures) console.log(` ${f.name.padEnd(86)} ${f.value.padEnd(70)} ${f.target}${f.met === null ? '' : f.met ? '  met' : '  MISSED'}`);
  const missed = figures.filter((f) => f.met === false);
  console.log(`\n ${missed.length ? `${missed.length} target(s) MISSED` : 'every target met'}`);

  server.close();
  await closeContext(ctx);
  fs.rmSync(dataDir, { recursive: true, force: true });
  process.exit(missed.length ? 1 : 0);
}

main().catch((e) => {
  console.error(e);
  process.exit(2);
});
