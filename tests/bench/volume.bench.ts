/**
 * Volume benchmark (issue 16): a 1024 × 1024 × 32 16-bit two-channel stack (33.5 M voxel pairs), the whole
 * coefficient set including exact τ-b and dCor, measured by the `analyze` command in its own process
 * (per-channel stacks, every slice in 3D) — CPU time, wall time and peak memory (the child's
 * process.resourceUsage().maxRSS and process.memoryUsage() at the end) — against baselines measured in the
 * same run:
 *  (a) the engine's own time on the same voxels in this process (collectPairs + measurePairs of the whole
 *      volume; and of the 40 cells plus their Otsu thresholds for the run with a 40-cell label stack);
 *  (b) SciPy (Debian python3-scipy, /usr/bin/python3) pearsonr + spearmanr + kendalltau on the same voxels,
 *      when present (CPU time of the Python process); said so when absent (CI has no SciPy);
 *  (c) a single memory-bound pass over the voxel pairs (Σxy), the limit any exact method must read;
 *  (d) R energy's O(n log n) dCor (dcor2d, Debian r-cran-energy, doubles) on the same voxels when it
 *      finishes within three minutes.
 * The whole-volume run is timed with one thread (`--threads 1`: the one-core target) and with the pair sweep
 * over two (`--threads 2`, the default; CPU time then counts both threads).
 * Targets: ≤ 4 s on one core and ≤ 1 GB peak for the whole-volume run; the 40-cell run ≤ 1.5× the engine's
 * own time on the same voxels. Run: `BENCH=volume npm run bench` (or `-- 512 512 16` for a smaller stack).
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { collectPairs, computeThresholds, labelRegions, measurePairs, prepare, Xoshiro128, ENGINE_VERSION } from '../../shared/analysis/index';
import { measurePairsThreaded, SweepThreads } from '../../server/analysis/sweep-threads';
import { energyAbsent, energyDcor } from './references';
import { writeTiffU16 } from '../images/tiffwrite';

const self = fileURLToPath(import.meta.url);
const root = fileURLToPath(new URL('../../', import.meta.url));

/** Child mode: run `analyze` in this process and report CPU time, wall time and memory on stderr. */
async function child(args: string[]) {
  const { main } = await import('../../server/cli/analyze');
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const write = process.stdout.write.bind(process.stdout);
  let bytes = 0;
  process.stdout.write = ((s: string | Uint8Array) => ((bytes += s.length), true)) as typeof process.stdout.write;
  const code = await main(args);
  process.stdout.write = write;
  const t1 = performance.now();
  const c = process.cpuUsage(c0);
  const m = process.memoryUsage();
  process.stderr.write(`${JSON.stringify({ code, outBytes: bytes, cpu: (c.user + c.system) / 1000, wall: t1 - t0, maxRssKb: process.resourceUsage().maxRSS, rss: m.rss, heapUsed: m.heapUsed, arrayBuffers: m.arrayBuffers })}\n`);
}

/** microscopy-like 16-bit stack pair: background + shared 3-D blobs + independent blobs + noise */
function synthetic(w: number, h: number, nz: number, seed = 1): [Uint16Array[], Uint16Array[]] {
  const rng = new Xoshiro128(seed);
  const plane = w * h;
  const field = new Float32Array(plane * nz), other = new Float32Array(plane * nz);
  const blobs = Math.round((plane * nz) / 40000);
  for (const [f, count] of [[field, blobs], [other, blobs / 3]] as const) {
    for (let k = 0; k < count; k++) {
      const cx = rng.nextFloat() * w, cy = rng.nextFloat() * h, cz = rng.nextFloat() * nz;
      const s = 2 + rng.nextFloat() * 5, sz = 1 + rng.nextFloat() * 2, amp = rng.nextFloat();
      const r = Math.ceil(3 * s), rz = Math.ceil(3 * sz);
      for (let z = Math.max(0, Math.floor(cz - rz)); z < Math.min(nz, cz + rz); z++) {
        const ez = Math.exp(-((z - cz) ** 2) / (2 * sz * sz));
        for (let y = Math.max(0, Math.floor(cy - r)); y < Math.min(h, cy + r); y++) {
          const ey = ez * Math.exp(-((y - cy) ** 2) / (2 * s * s));
          for (let x = Math.max(0, Math.floor(cx - r)); x < Math.min(w, cx + r); x++) f[z * plane + y * w + x] += amp * ey * Math.exp(-((x - cx) ** 2) / (2 * s * s));
        }
      }
    }
  }
  const a: Uint16Array[] = [], b: Uint16Array[] = [];
  for (let z = 0; z < nz; z++) {
    const sa = new Uint16Array(plane), sb = new Uint16Array(plane);
    for (let i = 0; i < plane; i++) {
      const j = z * plane + i;
      const n1 = rng.nextFloat() + rng.nextFloat() - 1, n2 = rng.nextFloat() + rng.nextFloat() - 1;
      sa[i] = Math.min(65535, Math.max(0, Math.round(300 + 30000 * field[j] + 400 * n1)));
      sb[i] = Math.min(65535, Math.max(0, Math.round(250 + 25000 * field[j] + 15000 * other[j] + 600 * n2)));
    }
    a.push(sa);
    b.push(sb);
  }
  return [a, b];
}

/** 40 ellipsoidal 3-D cells on an 8 × 5 grid, each over most of the slices */
function cells(w: number, h: number, nz: number): Uint16Array[] {
  const out = Array.from({ length: nz }, () => new Uint16Array(w * h));
  const gx = 8, gy = 5, cw = w / gx, ch = h / gy;
  for (let k = 0; k < gx * gy; k++) {
    const cx = (k % gx + 0.5) * cw, cy = (Math.floor(k / gx) + 0.5) * ch, cz = nz / 2;
    const rx = 0.42 * cw, ry = 0.42 * ch, rz = 0.4 * nz;
    for (let z = 0; z < nz; z++)
      for (let y = Math.floor(cy - ry); y <= cy + ry; y++)
        for (let x = Math.floor(cx - rx); x <= cx + rx; x++) {
          if (x < 0 || y < 0 || x >= w || y >= h) continue;
          if (((x + 0.5 - cx) / rx) ** 2 + ((y + 0.5 - cy) / ry) ** 2 + ((z + 0.5 - cz) / rz) ** 2 <= 1) out[z][y * w + x] = k + 1;
        }
  }
  return out;
}

function concat(slices: Uint16Array[]): Uint16Array {
  const out = new Uint16Array(slices.reduce((s, a) => s + a.length, 0));
  slices.forEach((a, z) => out.set(a, z * a.length));
  return out;
}

function time(fn: () => unknown): { wall: number; cpu: number } {
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  fn();
  const t1 = performance.now();
  const c = process.cpuUsage(c0);
  return { wall: t1 - t0, cpu: (c.user + c.system) / 1000 };
}

interface ChildReport {
  code: number;
  cpu: number;
  wall: number;
  maxRssKb: number;
  rss: number;
  arrayBuffers: number;
}

function runAnalyze(args: string[]): ChildReport {
  const r = spawnSync(process.execPath, ['--import', 'tsx', self, '--child', ...args], { cwd: root, encoding: 'utf8', maxBuffer: 1 << 26 });
  const line = r.stderr.trim().split('\n').pop() ?? '';
  let rep: ChildReport;
  try {
    rep = JSON.parse(line);
  } catch {
    throw new Error(`analyze child failed (${r.status}): ${r.stderr.slice(0, 500)}`);
  }
  if (rep.code !== 0) throw new Error(`analyze exited ${rep.code}: ${r.stderr.slice(0, 500)}`);
  return rep;
}

function scipy(x: Uint16Array, y: Uint16Array, dir: string): Record<string, number> | null {
  if (!existsSync('/usr/bin/python3')) return null;
  const fx = join(dir, 'vx.bin'), fy = join(dir, 'vy.bin');
  writeFileSync(fx, x);
  writeFileSync(fy, y);
  const code = `
import json, time, sys
import numpy as np
from scipy import stats
x = np.fromfile(sys.argv[1], dtype='<u2').astype(np.float64); y = np.fromfile(sys.argv[2], dtype='<u2').astype(np.float64)
out = {}
for name, f in [('pearson', stats.pearsonr), ('spearman', stats.spearmanr), ('kendall', stats.kendalltau)]:
    t = time.process_time(); v = f(x, y); out[name] = (time.process_time() - t) * 1000; out[name + '_value'] = float(v[0])
print(json.dumps(out))
`;
  const r = spawnSync('/usr/bin/python3', ['-c', code, fx, fy], { encoding: 'utf8' });
  if (r.status !== 0) {
    const last = r.stderr.split('\n').filter(Boolean).pop() ?? '';
    console.log(`  (SciPy not usable here: ${/No module named/.test(last) ? 'python3-scipy is not installed' : last})`);
    return null;
  }
  return JSON.parse(r.stdout);
}

async function bench() {
  const nums = process.argv.slice(2).map(Number).filter((n) => n > 0);
  const [w, h, nz] = nums.length === 3 ? nums : [1024, 1024, 32];
  const n = w * h * nz;
  console.log(`volume benchmark · engine ${ENGINE_VERSION} · ${w}×${h}×${nz} 16-bit (${(n / 1e6).toFixed(1)} M voxel pairs) · load ${loadavg().map((l) => l.toFixed(1)).join(' ')} on a shared machine: read CPU times`);
  const dir = mkdtempSync(join(tmpdir(), 'syntopy-vbench-'));
  try {
    const [a, b] = synthetic(w, h, nz);
    const lab = cells(w, h, nz);
    const f1 = join(dir, 'ch1.tif'), f2 = join(dir, 'ch2.tif'), fm = join(dir, 'cells.tif');
    writeFileSync(f1, writeTiffU16(a, w, h));
    writeFileSync(f2, writeTiffU16(b, w, h));
    writeFileSync(fm, writeTiffU16(lab, w, h));
    const x = concat(a), y = concat(b);
    // (a) the engine's own time on the same voxels, in this process
    let whole: ReturnType<typeof measurePairs> | null = null;
    const engine = time(() => {
      whole = measurePairs(collectPairs(x, y, null), { method: 'none', ch1: 0, ch2: 0 });
    });
    const regions = labelRegions(concat(lab));
    const voxels = regions.reduce((s, r) => s + r.indices.length, 0);
    const engineCells = time(() => {
      const union = new Uint32Array(voxels);
      let o = 0;
      for (const r of regions) (union.set(r.indices, o), (o += r.indices.length));
      union.sort();
      const t = computeThresholds(prepare(collectPairs(x, y, { kind: 'indices', indices: union })), { method: 'otsu' });
      for (const r of regions) measurePairs(collectPairs(x, y, { kind: 'indices', indices: r.indices }), t);
    });
    let sink = 0;
    const pass = time(() => {
      let s = 0;
      for (let i = 0; i < n; i++) s += x[i] * y[i];
      sink += s;
    });
    if (!Number.isFinite(sink)) throw new Error('single-pass sum overflowed');
    const threads = new SweepThreads(1);
    let engine2: { wall: number; cpu: number };
    try {
      await measurePairsThreaded(threads, collectPairs(x.subarray(0, 1 << 20), y.subarray(0, 1 << 20), null), { method: 'none', ch1: 0, ch2: 0 }); // helper ready
      const c0 = process.cpuUsage(), t0 = performance.now();
      await measurePairsThreaded(threads, collectPairs(x, y, null), { method: 'none', ch1: 0, ch2: 0 });
      const c = process.cpuUsage(c0);
      engine2 = { wall: performance.now() - t0, cpu: (c.user + c.system) / 1000 };
    } finally {
      await threads.close();
    }
    console.log(`  single memory-bound pass over the voxel pairs (Σxy): ${pass.cpu.toFixed(0)} ms CPU (${pass.wall.toFixed(0)} ms wall)`);
    console.log(`  engine, whole volume (collectPairs + measurePairs, every coefficient incl. exact τ-b and dCor): ${engine.cpu.toFixed(0)} ms CPU (${engine.wall.toFixed(0)} ms wall) = ${(engine.cpu / pass.cpu).toFixed(1)}× one pass`);
    console.log(`  engine, whole volume, pair sweep over 2 threads: ${engine2.cpu.toFixed(0)} ms CPU of both (${engine2.wall.toFixed(0)} ms wall, ${(engine.wall / engine2.wall).toFixed(2)}× one thread's wall)`);
    console.log(`  engine, ${regions.length} 3-D cells (${(voxels / 1e6).toFixed(1)} M voxels) + Otsu over their voxels: ${engineCells.cpu.toFixed(0)} ms CPU (${engineCells.wall.toFixed(0)} ms wall)`);
    const summary: string[] = [];
    // the analyze command, every slice in 3D
    const best = (args: string[]) => {
      const reps = [runAnalyze(args), runAnalyze(args)];
      return reps.reduce((p, q) => (q.cpu < p.cpu ? q : p));
    };
    const vol = best(['--ch1', f1, '--ch2', f2, '--threads', '1', '--json']);
    const gb = (kb: number) => (kb / 1024 / 1024).toFixed(2);
    console.log(`  analyze --ch1 --ch2 --threads 1 (decode + every slice in 3D + all coefficients): ${vol.cpu.toFixed(0)} ms CPU (${vol.wall.toFixed(0)} ms wall, in-process after start-up); peak RSS ${gb(vol.maxRssKb)} GB, at the end rss ${gb(vol.rss / 1024)} GB, array buffers ${gb(vol.arrayBuffers / 1024)} GB`);
    console.log(`    = ${(vol.cpu / engine.cpu).toFixed(2)}× the engine's own time on the same voxels, ${(vol.cpu / pass.cpu).toFixed(1)}× one pass; targets ≤ 4000 ms CPU on one core (${vol.cpu <= 4000 ? 'met' : 'NOT met'}), ≤ 1 GB peak (${vol.maxRssKb <= 1024 * 1024 ? 'met' : 'NOT met'})`);
    const vol2 = best(['--ch1', f1, '--ch2', f2, '--threads', '2', '--json']);
    console.log(`  analyze --threads 2 (the default): ${vol2.cpu.toFixed(0)} ms CPU of both threads (${vol2.wall.toFixed(0)} ms wall, ${(vol.wall / vol2.wall).toFixed(2)}× one thread's wall); peak RSS ${gb(vol2.maxRssKb)} GB`);
    summary.push(`whole volume: analyze --threads 1 ${vol.cpu.toFixed(0)} ms CPU (${(vol.cpu / pass.cpu).toFixed(1)}× one pass of ${pass.cpu.toFixed(0)} ms), peak ${gb(vol.maxRssKb)} GB; engine ${engine.cpu.toFixed(0)} ms CPU (${(vol.cpu / engine.cpu).toFixed(2)}×); --threads 2 ${vol2.cpu.toFixed(0)} ms CPU, ${vol2.wall.toFixed(0)} ms wall vs ${vol.wall.toFixed(0)}`);
    const cellRun = best(['--ch1', f1, '--ch2', f2, '--mask', fm, '--threshold', 'otsu', '--json']);
    console.log(`  analyze --mask (${regions.length} 3-D cells, Otsu): ${cellRun.cpu.toFixed(0)} ms CPU (${cellRun.wall.toFixed(0)} ms wall); peak RSS ${gb(cellRun.maxRssKb)} GB`);
    console.log(`    = ${(cellRun.cpu / engineCells.cpu).toFixed(2)}× the engine's own time on the same voxels (target ≤ 1.5×: ${cellRun.cpu <= 1.5 * engineCells.cpu ? 'met' : 'NOT met'})`);
    summary.push(`40 cells: analyze ${cellRun.cpu.toFixed(0)} ms CPU = ${(cellRun.cpu / engineCells.cpu).toFixed(2)}× the engine on the same voxels`);
    // (b) SciPy on the same voxels, when present
    const s = scipy(x, y, dir);
    if (s) {
      const three = s.pearson + s.spearman + s.kendall;
      const r = whole!;
      const dv = Math.abs(r.pearson! - s.pearson_value) + Math.abs(r.spearman! - s.spearman_value) + Math.abs(r.kendallTauB! - s.kendall_value);
      console.log(`  SciPy CPU on the same voxels: pearsonr ${s.pearson.toFixed(0)} + spearmanr ${s.spearman.toFixed(0)} + kendalltau ${s.kendall.toFixed(0)} = ${three.toFixed(0)} ms; our whole analyze run ${(three / vol.cpu).toFixed(1)}× faster; agreement Σ|Δ| over r, ρ, τ-b = ${dv.toExponential(1)}`);
      summary.push(`SciPy three ${three.toFixed(0)} ms CPU vs analyze ${vol.cpu.toFixed(0)} ms CPU (${(three / vol.cpu).toFixed(1)}×)`);
    } else console.log('  (SciPy absent: /usr/bin/python3 with python3-scipy needed for that baseline)');
    // (d) R energy's O(n log n) dCor on the same voxels (doubles), when it finishes
    const e = energyDcor(x, y, dir, 'dcor2d', 1, 180_000);
    if (e) {
      console.log(`  R energy dcor2d on the same voxels: ${e.cpu.toFixed(0)} ms CPU; our whole analyze run (--threads 1) ${(e.cpu / vol.cpu).toFixed(1)}× faster; |Δ dCor| = ${Math.abs(e.value - whole!.distanceCorrelation!).toExponential(1)}`);
      summary.push(`R energy dcor2d ${e.cpu.toFixed(0)} ms CPU vs analyze ${vol.cpu.toFixed(0)} ms CPU (${(e.cpu / vol.cpu).toFixed(1)}×)`);
    } else console.log(`  R energy dcor2d: ${energyAbsent() ?? 'did not finish within three minutes'}`);
    console.log('\nsummary');
    for (const l of summary) console.log(`  ${l}`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[2] === '--child') await child(process.argv.slice(3));
else await bench();
