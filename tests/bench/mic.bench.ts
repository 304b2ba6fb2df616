/**
 * MICe/TICe benchmark (shared/analysis/mic.ts). Target: a cell of 20,000 pixels ≤ 100 ms on one core
 * (α 0.6, c 15). Cells: 16-bit with a noisy non-linear dependence (few ties: the most clumps, the worst case)
 * and 8-bit with heavy ties. Baselines measured in the same run:
 *  (a) the rest of the engine's exact set on the same pairs (measurePairs without MICe), so the cost is also
 *      read as a multiple of everything else;
 *  (b) R minerva, mine(x, y, alpha = 0.6, C = 15, est = "mic_e"), CPU time of the call inside R
 *      (system.time), when Rscript and minerva are installed (skipped otherwise, e.g. in CI).
 * Times are the best of several repeats, wall clock and CPU time of this process.
 * Run: `npm run bench` (BENCH=mic) or `npx tsx tests/bench/mic.bench.ts [pixels]`.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { measurePairs, mic, pairsFromArrays, prepare, Xoshiro128 } from '../../shared/analysis/index';
import { fmt, time } from './timing';


const n = Number(process.argv[2] ?? 20000);
if (!(Number.isInteger(n) && n >= 10)) throw new RangeError(`pixels must be an integer ≥ 10, received ${process.argv[2]}`);
const g = new Xoshiro128(2016);
const x16 = new Uint16Array(n), y16 = new Uint16Array(n), x8 = new Uint8Array(n), y8 = new Uint8Array(n);
for (let i = 0; i < n; i++) {
  const u = g.nextFloat();
  const v = Math.sin(6 * u) * 0.4 + 0.5 + 0.25 * (g.nextFloat() - 0.5);
  x16[i] = Math.round(u * 60000 + 1000);
  y16[i] = Math.round(Math.min(1, Math.max(0, v)) * 60000 + 1000);
  x8[i] = Math.round(u * 40);
  y8[i] = Math.round(Math.min(1, Math.max(0, v)) * 30);
}

function minerva(x: ArrayLike<number>, y: ArrayLike<number>): number | null {
  const dir = mkdtempSync(join(tmpdir(), 'mic-bench-'));
  try {
    writeFileSync(join(dir, 'd.csv'), 'x,y\n' + Array.from(x, (v, i) => `${v},${y[i]}`).join('\n') + '\n');
    const script = `suppressPackageStartupMessages(library(minerva)); d <- read.csv("${join(dir, 'd.csv')}");
x <- as.double(d$x); y <- as.double(d$y); best <- Inf
for (k in 1:2) { t <- system.time(m <- mine(x, y, alpha = 0.6, C = 15, est = "mic_e")); best <- min(best, t[["user.self"]] + t[["sys.self"]]) }
cat(best * 1000, m$MIC, "\\n")`;
    const r = spawnSync('Rscript', ['-e', script], { encoding: 'utf8' });
    if (r.status !== 0) return null;
    const [ms] = r.stdout.trim().split(/\s+/).map(Number);
    return Number.isFinite(ms) ? ms : null;
  } catch {
    return null;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

for (const [name, x, y] of [
  ['16-bit, few ties', x16, y16],
  ['8-bit, heavy ties', x8, y8],
] as const) {
  const pairs = pairsFromArrays(x, y);
  let value = 0;
  const t = time(() => (value = mic(prepare(pairs)).micE ?? NaN), 5);
  const rest = time(() => measurePairs(prepare(pairs), { method: 'none', ch1: 0, ch2: 0 }), 5);
  console.log(`${name}, ${n} pixels: MICe+TICe ${fmt(t)} (target ≤ 100 ms), MICe ${value.toFixed(4)}; rest of the exact set ${fmt(rest)} → MICe costs ${(t.cpu / rest.cpu).toFixed(1)}× the rest`);
  const r = minerva(x, y);
  if (r === null) console.log('  R minerva: not available (Rscript with the minerva package), ratio skipped');
  else console.log(`  R minerva mine(est = "mic_e"): ${r.toFixed(1)} ms CPU → this engine is ${(r / t.cpu).toFixed(1)}× faster`);
}
