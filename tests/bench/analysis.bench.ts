/**
 * Analysis engine benchmark. For 512², 1024² and 2048² 16-bit pairs: the time of each
 * coefficient, of the whole set (measureRegion), and ratios against baselines measured in the same run:
 *  (a) naive O(n²) versions (tests/analysis/naive.ts) at sizes where they finish (n = 64² and 128²);
 *  (b) npm statistics packages on the same data: simple-statistics (sampleCorrelation, sampleRankCorrelation)
 *      and @stdlib/stats-pcorrtest (Pearson); none of them offers τ-b or dCor;
 *  (c) SciPy (Debian python3-scipy, /usr/bin/python3) pearsonr + spearmanr + kendalltau, when present
 *      (CPU time of the Python process, time.process_time, so compared with our CPU time);
 *  (d) a single memory-bound pass over the pair (Σxy), the limit any exact method must read;
 *  (e) R energy's dCor (Debian r-cran-energy, data as doubles): dcor2d (its O(n log n) form) at every size
 *      where it finishes within five minutes, dcor (O(n²) matrices) at the naive sizes;
 *  the whole set also with the pair sweep split over two threads (server/analysis/sweep-threads.ts) for
 *  regions of at least THREAD_MIN_PAIRS pairs, bit-identical values;
 *  and the whole `analyze` command (start-up, TIFF decoding, all coefficients) on the 2048² pair as a
 *  two-page TIFF, against SciPy's three coefficients alone.
 * Times are the best of several repeats, wall clock and CPU time of this process (CPU time is robust when
 * the machine is shared). Run: `npm run bench` or `npx tsx tests/bench/analysis.bench.ts [sizes...]`.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import * as ss from 'simple-statistics';
import pcorrtest from '@stdlib/stats-pcorrtest';
import {
  collectPairs,
  costesThresholds,
  distanceCorrelation,
  icq,
  kendallTauB,
  manders,
  measureRegion,
  otsuThreshold,
  overlapCoefficients,
  pearson,
  prepare,
  spearman,
  Xoshiro128,
  ENGINE_VERSION,
} from '../../shared/analysis/index';
import { naiveDcor, naiveKendallTauB, naiveSpearman } from '../analysis/naive';
import { measurePairsThreaded, SweepThreads, THREAD_MIN_PAIRS } from '../../server/analysis/sweep-threads';
import { time, timeAsync } from './timing';
import { energyAbsent, energyDcor } from './references';

const root = fileURLToPath(new URL('../../', import.meta.url));
const args = process.argv.slice(2).map(Number).filter((n) => n > 0);
const sizes = args.length ? args : [512, 1024, 2048];

/** microscopy-like 16-bit pair: background + shared blobs + independent blobs + noise, some saturation */
function synthetic(size: number, seed = 1): [Uint16Array, Uint16Array] {
  const rng = new Xoshiro128(seed);
  const n = size * size;
  const a = new Uint16Array(n), b = new Uint16Array(n);
  const field = new Float32Array(n), other = new Float32Array(n);
  const blobs = Math.round((size * size) / 4000);
  for (const [f, count] of [[field, blobs], [other, blobs / 3]] as const) {
    for (let k = 0; k < count; k++) {
      const cx = rng.nextFloat() * size, cy = rng.nextFloat() * size, s = 2 + rng.nextFloat() * 6, amp = rng.nextFloat();
      const r = Math.ceil(3 * s);
      for (let y = Math.max(0, Math.floor(cy - r)); y < Math.min(size, cy + r); y++)
        for (let x = Math.max(0, Math.floor(cx - r)); x < Math.min(size, cx + r); x++) f[y * size + x] += amp * Math.exp(-((x - cx) ** 2 + (y - cy) ** 2) / (2 * s * s));
    }
  }
  for (let i = 0; i < n; i++) {
    const noise1 = rng.nextFloat() + rng.nextFloat() - 1, noise2 = rng.nextFloat() + rng.nextFloat() - 1;
    a[i] = Math.min(65535, Math.max(0, Math.round(300 + 40000 * field[i] + 400 * noise1)));
    b[i] = Math.min(65535, Math.max(0, Math.round(250 + 30000 * field[i] + 20000 * other[i] + 600 * noise2)));
  }
  return [a, b];
}

interface Timing {
  wall: number;
  cpu: number;
}
const ms = (t: number) => (t >= 100 ? t.toFixed(0) : t >= 10 ? t.toFixed(1) : t.toFixed(2)).padStart(8);
const ratio = (base: number, ours: number) => `${(base / ours).toFixed(1)}×`.padStart(9);

function scipy(x: Uint16Array, y: Uint16Array, dir: string, tag: string): Record<string, number> | null {
  if (!existsSync('/usr/bin/python3')) return null;
  const fx = join(dir, `${tag}.x.bin`), fy = join(dir, `${tag}.y.bin`);
  writeFileSync(fx, x);
  writeFileSync(fy, y);
  const code = `
import json, time, sys
import numpy as np
from scipy import stats
x = np.fromfile(sys.argv[1], dtype='<u2').astype(np.float64); y = np.fromfile(sys.argv[2], dtype='<u2').astype(np.float64)
out = {}
for name, f in [('pearson', stats.pearsonr), ('spearman', stats.spearmanr), ('kendall', stats.kendalltau)]:
    best = 1e99
    for _ in range(int(sys.argv[3])):
        t = time.process_time(); v = f(x, y); best = min(best, time.process_time() - t)
    out[name] = best * 1000; out[name + '_value'] = float(v[0])
print(json.dumps(out))
`;
  const r = spawnSync('/usr/bin/python3', ['-c', code, fx, fy, x.length > 2e6 ? '1' : '2'], { encoding: 'utf8' });
  if (r.status !== 0) {
    console.log(`  (SciPy run failed: ${r.stderr.split('\n').filter(Boolean).pop()})`);
    return null;
  }
  return JSON.parse(r.stdout);
}

async function main() {
  console.log(`analysis engine ${ENGINE_VERSION} · node ${process.version} · load average ${loadavg()[0].toFixed(1)} · one core (single thread) unless said`);
  const threads = new SweepThreads(1);
  const dir = mkdtempSync(join(tmpdir(), 'syntopy-bench-'));
  const summary: string[] = [];
  try {
    for (const size of sizes) {
      const [a, b] = synthetic(size);
      const n = size * size;
      const reps = size >= 2048 ? 3 : 5;
      console.log(`\n${size}×${size} 16-bit (${n} pixel pairs) — best of ${reps}, ms (wall / CPU)`);
      const rows: [string, Timing][] = [];
      rows.push(['collect pairs + levels + x-sort', time(() => {
        const p = prepare(collectPairs(a, b, null));
        void p.levelsX, p.levelsY, p.sortedByX;
      }, reps)]);
      const P = () => {
        const p = prepare(collectPairs(a, b, null));
        void p.levelsX, p.levelsY, p.sortedByX;
        return p;
      };
      let p = P();
      rows.push(['pearson', time(() => pearson(p), reps)]);
      rows.push(['spearman (levels ready)', time(() => spearman(p), reps)]);
      // τ-b and dCor on freshly prepared pairs each time (their sweeps are cached), the preparation untimed
      const onFresh = (f: (q: ReturnType<typeof P>) => unknown): Timing => {
        let best = { wall: Infinity, cpu: Infinity };
        for (let r = 0; r < reps; r++) {
          const q = P();
          const t = time(() => f(q), 1);
          best = { wall: Math.min(best.wall, t.wall), cpu: Math.min(best.cpu, t.cpu) };
        }
        return best;
      };
      rows.push(['kendall τ-b (alone)', onFresh((q) => kendallTauB(q))]);
      rows.push(['dCor + bias-corr. + t-test (+τ-b S)', onFresh((q) => distanceCorrelation(q))]);
      p = P();
      rows.push(['manders M1/M2', time(() => manders(p, 1000, 1000), reps)]);
      rows.push(['overlap, k1, k2', time(() => overlapCoefficients(p), reps)]);
      rows.push(['ICQ', time(() => icq(p), reps)]);
      rows.push(['Otsu (both channels)', time(() => (otsuThreshold(p.x), otsuThreshold(p.y)), reps)]);
      rows.push(['Costes thresholds (levels ready)', time(() => costesThresholds(p), reps)]);
      const whole = time(() => measureRegion(a, b, null), reps);
      const wholeCostes = time(() => measureRegion(a, b, null, { threshold: { method: 'costes' } }), reps);
      // the single-pass limit: one read of both channels with a multiply-add per pair (memory-bound)
      let sink = 0;
      const pass = time(() => {
        let s = 0;
        for (let i = 0; i < n; i++) s += a[i] * b[i];
        sink += s;
      }, reps + 2);
      for (const [name, t] of rows) console.log(`  ${name.padEnd(38)}${ms(t.wall)} /${ms(t.cpu)}`);
      console.log(`  ${'WHOLE SET (measureRegion, thresholds 0)'.padEnd(38)}${ms(whole.wall)} /${ms(whole.cpu)}`);
      console.log(`  ${'single memory-bound pass (Σxy)'.padEnd(38)}${ms(pass.wall)} /${ms(pass.cpu)}  → whole set = ${(whole.cpu / pass.cpu).toFixed(1)}× one pass (CPU)`);
      if (!Number.isFinite(sink)) throw new Error('single-pass sum overflowed');
      console.log(`  ${'WHOLE SET + Costes thresholds'.padEnd(38)}${ms(wholeCostes.wall)} /${ms(wholeCostes.cpu)}`);
      let two = '';
      if (n >= THREAD_MIN_PAIRS) {
        const none = { method: 'none' as const, ch1: 0, ch2: 0 };
        const w2 = await timeAsync(() => measurePairsThreaded(threads, collectPairs(a, b, null), none), reps);
        console.log(`  ${'WHOLE SET, sweep over 2 threads'.padEnd(38)}${ms(w2.wall)} /${ms(w2.cpu)}  → ${(whole.wall / w2.wall).toFixed(2)}× faster (wall) than one thread; ${(w2.cpu / pass.cpu).toFixed(1)}× one pass (CPU, both threads)`);
        two = `; 2 threads ${w2.wall.toFixed(0)} ms wall / ${w2.cpu.toFixed(0)} ms CPU (${(whole.wall / w2.wall).toFixed(2)}× wall)`;
      }
      summary.push(`${size}²: whole set ${whole.wall.toFixed(0)} ms wall / ${whole.cpu.toFixed(0)} ms CPU (${(whole.cpu / pass.cpu).toFixed(1)}× one memory-bound pass, ${pass.cpu.toFixed(1)} ms)${two}; with Costes ${wholeCostes.wall.toFixed(0)} / ${wholeCostes.cpu.toFixed(0)}`);

      // (e) R energy's O(n log n) dCor on the same pairs (doubles)
      const ourDcor = time(() => distanceCorrelation(prepare(collectPairs(a, b, null))), reps).cpu;
      const e = energyDcor(a, b, dir, 'dcor2d', size >= 2048 ? 1 : 2, 300_000);
      if (e) {
        const dv = Math.abs(e.value - distanceCorrelation(prepare(collectPairs(a, b, null))).dcor!);
        console.log(`  R energy dcor2d (O(n log n)) ${e.cpu.toFixed(0)} ms CPU; our dCor + bias-corrected + t-test from the channels ${ourDcor.toFixed(0)} ms (${(e.cpu / ourDcor).toFixed(1)}×), our whole set ${(e.cpu / whole.cpu).toFixed(1)}×; |Δ dCor| = ${dv.toExponential(1)}`);
        summary.push(`${size}²: R energy dcor2d ${e.cpu.toFixed(0)} ms CPU vs our dCor ${ourDcor.toFixed(0)} ms (${(e.cpu / ourDcor).toFixed(1)}×), our whole set ${(e.cpu / whole.cpu).toFixed(1)}×`);
      } else console.log(`  R energy dcor2d: ${energyAbsent() ?? 'did not finish within five minutes'}`);

      // (b) npm packages on the same data
      const xa = Float64Array.from(a), ya = Float64Array.from(b);
      const xs = Array.from(a), ys = Array.from(b);
      // ratios on CPU time; ours include collecting the pairs from the channels (theirs get ready arrays)
      const ours = {
        pearson: time(() => pearson(collectPairs(a, b, null)), reps).cpu,
        spearman: time(() => spearman(prepare(collectPairs(a, b, null))), reps).cpu,
      };
      const ssP = time(() => ss.sampleCorrelation(xs, ys), size >= 2048 ? 2 : 3);
      console.log(`  npm simple-statistics sampleCorrelation     ${ms(ssP.cpu)} CPU; ours ${ms(ours.pearson)} (${ratio(ssP.cpu, ours.pearson)})`);
      const ssS = time(() => ss.sampleRankCorrelation(xs, ys), 1);
      console.log(`  npm simple-statistics sampleRankCorrelation ${ms(ssS.cpu)} CPU; ours ${ms(ours.spearman)} (${ratio(ssS.cpu, ours.spearman)})`);
      const sp = time(() => pcorrtest(xa, ya), size >= 2048 ? 2 : 3);
      console.log(`  npm @stdlib/stats-pcorrtest (Pearson)       ${ms(sp.cpu)} CPU; ours ${ms(ours.pearson)} (${ratio(sp.cpu, ours.pearson)})`);
      console.log('  (no npm statistics package found offering Kendall τ-b or distance correlation)');

      // (c) SciPy
      const s = scipy(a, b, dir, `s${size}`);
      if (s) {
        const three = s.pearson + s.spearman + s.kendall;
        const ourThree = time(() => {
          const q = prepare(collectPairs(a, b, null));
          pearson(q);
          spearman(q);
          kendallTauB(q);
        }, reps).cpu;
        console.log(`  SciPy CPU: pearsonr ${s.pearson.toFixed(0)} + spearmanr ${s.spearman.toFixed(0)} + kendalltau ${s.kendall.toFixed(0)} = ${three.toFixed(0)} ms; ours same three ${ourThree.toFixed(0)} ms (${(three / ourThree).toFixed(1)}×); our WHOLE set ${(three / whole.cpu).toFixed(1)}× faster than SciPy's three`);
        const qq = prepare(collectPairs(a, b, null));
        const dv = Math.abs(kendallTauB(qq)! - s.kendall_value) + Math.abs(spearman(qq)! - s.spearman_value) + Math.abs(pearson(qq)! - s.pearson_value);
        console.log(`  agreement with SciPy on this data: Σ|Δ| over r, ρ, τ-b = ${dv.toExponential(1)}`);
        summary.push(`${size}²: SciPy three ${three.toFixed(0)} ms CPU vs our whole set ${whole.cpu.toFixed(0)} ms CPU (${(three / whole.cpu).toFixed(1)}×)`);
        if (size === 2048) {
          // whole analyze command on a TIFF of this pair
          const tif = join(dir, 'pair2048.tif');
          const w = spawnSync('/usr/bin/python3', ['-c', `import numpy as np, tifffile, sys
a=np.fromfile(sys.argv[1],dtype='<u2').reshape(${size},${size}); b=np.fromfile(sys.argv[2],dtype='<u2').reshape(${size},${size})
tifffile.imwrite(sys.argv[3], np.stack([a,b]), photometric='minisblack')`, join(dir, `s${size}.x.bin`), join(dir, `s${size}.y.bin`), tif], { encoding: 'utf8' });
          if (w.status === 0) {
            // CPU time of the child (user + system) from GNU time when present, else wall time
            const gnuTime = existsSync('/usr/bin/time');
            let best = Infinity, bestWall = Infinity;
            for (let r = 0; r < 2; r++) {
              const cmd = [process.execPath, '--import', 'tsx', join(root, 'server/cli/analyze.ts'), '--image', tif, '--channels', '1,2', '--threads', '1', '--json'];
              const t0 = performance.now();
              const c = gnuTime
                ? spawnSync('/usr/bin/time', ['-f', 'CPU %U %S', ...cmd], { cwd: root, encoding: 'utf8', maxBuffer: 1 << 26 })
                : spawnSync(cmd[0], cmd.slice(1), { cwd: root, encoding: 'utf8', maxBuffer: 1 << 26 });
              const t1 = performance.now();
              if (c.status !== 0) throw new Error(`analyze failed: ${c.stderr}`);
              const m = /CPU ([\d.]+) ([\d.]+)/.exec(c.stderr);
              best = Math.min(best, m ? (Number(m[1]) + Number(m[2])) * 1000 : t1 - t0);
              bestWall = Math.min(bestWall, t1 - t0);
            }
            console.log(`  whole \`analyze --threads 1\` run (start-up + decode + all coefficients): ${best.toFixed(0)} ms CPU (${bestWall.toFixed(0)} ms wall) vs SciPy's three coefficients alone ${three.toFixed(0)} ms CPU (${(three / best).toFixed(1)}×)`);
            summary.push(`analyze 2048² end to end ${best.toFixed(0)} ms CPU (${bestWall.toFixed(0)} wall) vs SciPy three ${three.toFixed(0)} ms CPU`);
          }
        }
      } else console.log('  (SciPy not present: /usr/bin/python3 with scipy needed)');
    }

    // (a) naive O(n²) at sizes where it finishes
    console.log('\nnaive O(n²) baselines (definitions, tests/analysis/naive.ts) — ms CPU');
    for (const size of [32, 64, 128]) {
      const [a, b] = synthetic(size, 7);
      const xs = Array.from(a), ys = Array.from(b);
      const n = size * size;
      const nk = time(() => naiveKendallTauB(xs, ys), 1).cpu;
      const fk = time(() => kendallTauB(prepare(collectPairs(a, b, null))), 5).cpu;
      const nd = size <= 32 ? time(() => naiveDcor(xs, ys), 1).cpu : NaN;
      const fd = time(() => distanceCorrelation(prepare(collectPairs(a, b, null))), 5).cpu;
      // R energy's dcor with its O(n²) distance matrices (8·n² bytes each): up to 64² pairs here
      const ed = size <= 64 ? energyDcor(a, b, dir, 'dcor', 2) : null;
      const ns = size <= 64 ? time(() => naiveSpearman(xs, ys), 1).cpu : NaN;
      const fs = time(() => spearman(prepare(collectPairs(a, b, null))), 5).cpu;
      console.log(
        `  n = ${String(n).padStart(6)}: τ-b naive ${ms(nk)} fast ${ms(fk)} (${ratio(nk, fk)})` +
          (Number.isNaN(nd) ? '' : ` · dCor naive ${ms(nd)} fast ${ms(fd)} (${ratio(nd, fd)})`) +
          (Number.isNaN(ns) ? '' : ` · ρ naive ${ms(ns)} fast ${ms(fs)} (${ratio(ns, fs)})`) +
          (ed ? ` · R energy dcor ${ms(ed.cpu)} (${ratio(ed.cpu, fd)} our dCor)` : ''),
      );
    }
    console.log('\nsummary');
    for (const s of summary) console.log(`  ${s}`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
    await threads.close();
  }
}

await main();
