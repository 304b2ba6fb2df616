/**
 * Object co-localization benchmark. Targets: a 2048 × 2048 16-bit pair with 2,000 spots per channel —
 * detection of both channels + pairing ≤ 300 ms on one core; the Monte Carlo test with 999 placements for
 * a cell with 50 spots per channel ≤ 30 ms. Ratios against baselines measured in the same run:
 *  (a) a straightforward O(n1·n2) nearest-neighbour pairing of the same spots;
 *  (b) a pixel-by-pixel LoG filter with the full (2R+1)² 2-D kernel (no separability), on a 512² crop
 *      against the separable filter on the same crop (the 2-D filter on 2048² would take minutes).
 * Times are the best of several repeats, wall clock and CPU time of this process.
 * Run: `npm run bench` (BENCH=spots) or `npx tsx tests/bench/spots.bench.ts`.
 */
import { detectSpots, gaussianKernels, laplacianOfGaussian, medianAndMad, pairSpots, spotPlacementTest, Xoshiro128 } from '../../shared/analysis/index';
import { fmt, time } from './timing';


const S = 2048, N = 2000;
function field(seed: number): [Uint16Array, [number, number][]] {
  const rng = new Xoshiro128(seed);
  const f = new Float32Array(S * S);
  for (let i = 0; i < f.length; i++) f[i] = 200 + 30 * (rng.nextFloat() + rng.nextFloat() + rng.nextFloat() - 1.5);
  const pts: [number, number][] = [];
  for (let k = 0; k < N; k++) {
    const cx = 4 + rng.nextFloat() * (S - 8), cy = 4 + rng.nextFloat() * (S - 8);
    pts.push([cx, cy]);
    for (let y = Math.max(0, Math.floor(cy - 7)); y < Math.min(S, cy + 7); y++)
      for (let x = Math.max(0, Math.floor(cx - 7)); x < Math.min(S, cx + 7); x++) f[y * S + x] += 600 * Math.exp(-((x + 0.5 - cx) ** 2 + (y + 0.5 - cy) ** 2) / 4.5);
  }
  return [Uint16Array.from(f, (v) => Math.min(65535, Math.round(v))), pts];
}
const [a, ptsA] = field(1);
const [b] = field(2);

let found1 = 0, found2 = 0;
// one untimed pass first, so the timed repeats run optimised code (CPU time counts the compiler threads too)
detectSpots(a, S, S, null);
const full = time(() => {
  const d1 = detectSpots(a, S, S, null)!, d2 = detectSpots(b, S, S, null)!;
  found1 = d1.spots.length;
  found2 = d2.spots.length;
  pairSpots(d1.spots.map((s) => s.x), d1.spots.map((s) => s.y), d2.spots.map((s) => s.x), d2.spots.map((s) => s.y), 2);
}, 5);
console.log(`${S}×${S}, ${N} spots per channel (found ${found1}, ${found2}): detection of both + pairing ${fmt(full)} (target ≤ 300 ms)`);

// where the time goes: the filter over the whole image and the exact MAD of its response against the whole
// detection of one channel
const filt = time(() => laplacianOfGaussian(a, S, S, 1.5, { x0: 0, y0: 0, x1: S, y1: S }, 100), 3);
const response = laplacianOfGaussian(a, S, S, 1.5, { x0: 0, y0: 0, x1: S, y1: S }, 100);
const mad = time(() => medianAndMad(response), 3);
const one = time(() => detectSpots(a, S, S, null), 3);
console.log(`one channel: LoG filter ${fmt(filt)}; median + MAD of the response ${fmt(mad)}; whole detection ${fmt(one)} (the rest: maxima, centroids, close-neighbour refinement)`);

const d1 = detectSpots(a, S, S, null)!, d2 = detectSpots(b, S, S, null)!;
const x1 = d1.spots.map((s) => s.x), y1 = d1.spots.map((s) => s.y), x2 = d2.spots.map((s) => s.x), y2 = d2.spots.map((s) => s.y);
const grid = time(() => pairSpots(x1, y1, x2, y2, 2), 5);
const naive = time(() => {
  for (const [qx, qy, px, py] of [[x1, y1, x2, y2], [x2, y2, x1, y1]]) {
    for (let i = 0; i < qx.length; i++) {
      let best = Infinity;
      for (let j = 0; j < px.length; j++) best = Math.min(best, Math.hypot(px[j] - qx[i], py[j] - qy[i]));
    }
  }
}, 3);
console.log(`pairing: grid ${fmt(grid)}; O(n1·n2) ${fmt(naive)}; ratio ${(naive.cpu / Math.max(grid.cpu, 1e-3)).toFixed(0)}× (CPU)`);
let recovered = 0;
for (const [px, py] of ptsA) if (d1.spots.some((s) => Math.abs(s.x - px) < 1 && Math.abs(s.y - py) < 1)) recovered++;
console.log(`channel 1: ${recovered} of ${N} true spots found within 1 px (overlapping spots merge at this density)`);

// separable against pixel-by-pixel 2-D filtering on a 512² crop
const C = 512;
const crop = new Uint16Array(C * C);
for (let y = 0; y < C; y++) crop.set(a.subarray(y * S, y * S + C), y * C);
const sep = time(() => laplacianOfGaussian(crop, C, C, 1.5, { x0: 0, y0: 0, x1: C, y1: C }), 5);
const { radius: R, g, d2: dd } = gaussianKernels(1.5);
const K = 2 * R + 1, kern = new Float64Array(K * K);
for (let j = -R; j <= R; j++) for (let i = -R; i <= R; i++) kern[(j + R) * K + i + R] = -2.25 * (dd[Math.abs(i)] * g[Math.abs(j)] + g[Math.abs(i)] * dd[Math.abs(j)]);
let check = 0;
const twoD = time(() => {
  const out = new Float32Array(C * C);
  for (let y = 0; y < C; y++)
    for (let x = 0; x < C; x++) {
      let s = 0;
      for (let j = -R; j <= R; j++) {
        let yy = y + j;
        yy = yy < 0 ? -yy - 1 : yy >= C ? 2 * C - yy - 1 : yy;
        for (let i = -R; i <= R; i++) {
          let xx = x + i;
          xx = xx < 0 ? -xx - 1 : xx >= C ? 2 * C - xx - 1 : xx;
          s += kern[(j + R) * K + i + R] * crop[yy * C + xx];
        }
      }
      out[y * C + x] = s;
    }
  check = out[100 * C + 100];
}, 1);
const ref = laplacianOfGaussian(crop, C, C, 1.5, { x0: 0, y0: 0, x1: C, y1: C });
console.log(`LoG ${C}²: separable ${fmt(sep)}; 2-D kernel ${K}×${K} ${fmt(twoD)}; ratio ${(twoD.cpu / Math.max(sep.cpu, 1e-3)).toFixed(0)}× (CPU); same value ${Math.abs(check - ref[100 * C + 100]) < 1e-2}`);

// Monte Carlo test: 50 spots per channel in a disk cell of radius 40 px, 999 placements
const W = 96, disk: number[] = [];
for (let y = 0; y < W; y++) for (let x = 0; x < W; x++) if ((x + 0.5 - 48) ** 2 + (y + 0.5 - 48) ** 2 <= 1600) disk.push(y * W + x);
const rng = new Xoshiro128(3);
const pick = () => {
  const p = disk[rng.nextInt(disk.length)];
  return [(p % W) + rng.nextFloat(), Math.floor(p / W) + rng.nextFloat()];
};
const s1 = Array.from({ length: 50 }, pick), s2 = Array.from({ length: 50 }, pick);
const mc = time(() => spotPlacementTest(s1.map((p) => p[0]), s1.map((p) => p[1]), s2.map((p) => p[0]), s2.map((p) => p[1]), disk, W, { pairDistance: 2, placements: 999 }), 5);
const mcK = time(() => spotPlacementTest(s1.map((p) => p[0]), s1.map((p) => p[1]), s2.map((p) => p[0]), s2.map((p) => p[1]), disk, W, { pairDistance: 2, placements: 999, kRadii: [2, 5, 10] }), 5);
console.log(`Monte Carlo test, 50 + 50 spots, 999 placements: ${fmt(mc)} (target ≤ 30 ms); with the K envelope at 2, 5, 10 px: ${fmt(mcK)}`);
