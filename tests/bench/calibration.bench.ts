/**
 * Calibration benchmark. Targets on a 2048 × 2048 16-bit pair, one core: shift measurement (phase
 * correlation + 1/100 px refinement) ≤ 400 ms; alignment (bilinear, sub-pixel shift) + unmixing ≤ 60 ms.
 * Ratios against baselines measured in the same run:
 *  (a) a direct spatial cross-correlation over the same ±8 px search window (Σ ch1(x)·ch2(x + δ) for every
 *      integer δ; integer only, so it does less than the phase correlation and still costs more);
 *  (b) alignment + unmixing written per pixel the straightforward way (floor, bounds and four reads per
 *      pixel, then the 2×2 solve) against the engine's one pass with precomputed per-row/column weights;
 *      the engine timed with its output images reused (`options.out`, the steady state over a run's fields)
 *      and allocating them on every call; also the two-step form (alignChannel, then unmixChannels) and the
 *      cost of merely allocating and filling the two output images (the floor of any version that returns
 *      new arrays).
 * Also: the engine's 1-D FFT (radix4-fft.ts) against fft.js 4.0.4, whose results it repeats bit for bit; the
 * van Steensel curves within ±8 px (a diagnostic). Times are the best of several repeats, wall
 * clock and CPU time of this process. Run: `npm run bench` (BENCH=calibration) or
 * `npx tsx tests/bench/calibration.bench.ts [size]`.
 */
import { alignAndUnmix, alignChannel, crossCorrelationCurves, measureShift, unmixChannels } from '../../shared/analysis/index';
import FFT from 'fft.js';
import { complexFft2dColumns, hermitianFft2dRows } from '../../shared/analysis/fft';
import { Radix4Fft } from '../../shared/analysis/radix4-fft';
import { beadField } from './bead-field';
import { fmt, time } from './timing';


const S = Number(process.argv[2] ?? 2048), N = Math.round((2000 * S * S) / (2048 * 2048));
const DX = 2.37, DY = -1.62;
/** the bead field of tests/bench/bead-field.ts at this size */
const field = (dx: number, dy: number) => beadField(S, dx, dy);
const a = field(0, 0), b = field(DX, DY);

let got = measureShift(a, b, S, S);
const shift = time(() => (got = measureShift(a, b, S, S)), 3);
console.log(`${S}×${S}, ${N} beads, channel 2 displaced by (${DX}, ${DY}) px: measured (${got.dx}, ${got.dy}), peak ${got.peak?.toFixed(3)}`);
console.log(`shift measurement: ${fmt(shift)} (target ≤ 400 ms)`);
// the share of the transforms: the same forward and inverse 2-D FFTs with nothing else (radix4-fft.ts, 6,145 transforms of 2,048)
const transforms = time(() => {
  const zt = new Float64Array(2 * S * S), row = new Float64Array(2 * S).fill(1);
  complexFft2dColumns(S, S, (_y, out) => (out.set(row), true), zt);
  hermitianFft2dRows(zt.subarray(0, 2 * (S / 2 + 1) * S), S, S, new Float64Array(2 * (S / 2 + 1) * S), () => {});
}, 3);
console.log(`  the forward and inverse 2-D transforms alone: ${fmt(transforms)} (${((100 * transforms.cpu) / shift.cpu).toFixed(0)} % of the shift measurement)`);
// the engine's 1-D FFT against fft.js 4.0.4, whose results it gives bit for bit: 6,145 transforms of S points each
{
  const ref = new FFT(S), own = new Radix4Fft(S);
  const x = Float64Array.from({ length: 2 * S }, (_, i) => Math.sin(i * 0.37)), y = new Float64Array(2 * S);
  const T = 6145;
  const tRef = time(() => { for (let i = 0; i < T; i++) ref.transform(y, x); }, 3);
  const tOwn = time(() => { for (let i = 0; i < T; i++) own.transform(y, x); }, 3);
  console.log(`  ${T} 1-D transforms of ${S}: radix4-fft.ts ${fmt(tOwn)}; baseline fft.js ${fmt(tRef)}; ratio ${(tRef.cpu / tOwn.cpu).toFixed(2)}× (CPU)`);
}

const M = 8;
const direct = time(() => {
  let best = -Infinity;
  for (let ddy = -M; ddy <= M; ddy++)
    for (let ddx = -M; ddx <= M; ddx++) {
      let s = 0;
      for (let y = Math.max(0, -ddy); y < Math.min(S, S - ddy); y++) {
        const r1 = y * S, r2 = (y + ddy) * S + ddx;
        for (let x = Math.max(0, -ddx); x < Math.min(S, S - ddx); x++) s += a[r1 + x] * b[r2 + x];
      }
      if (s > best) best = s;
    }
}, 1);
console.log(`baseline (a) direct spatial cross-correlation over ±${M} px (integer shifts only): ${fmt(direct)}; ratio ${(direct.cpu / shift.cpu).toFixed(1)}× (CPU)`);

const ccf = time(() => crossCorrelationCurves(a, b, S, S, M), 1);
console.log(`van Steensel curves within ±${M} px (${2 * (2 * M + 1)} Pearson's r over the image): ${fmt(ccf)}`);

const A21 = 0.12, A12 = 0.05;
const fast = time(() => alignAndUnmix(a, b, S, S, DX, DY, A21, A12), 5);
// steady state of a run or of `analyze` over several fields: the two output images reused (options.out)
const reused = { t1: new Float64Array(S * S), t2: new Float64Array(S * S) };
alignAndUnmix(a, b, S, S, DX, DY, A21, A12, 1, { out: reused });
const steady = time(() => alignAndUnmix(a, b, S, S, DX, DY, A21, A12, 1, { out: reused }), 5);
const twoStep = time(() => {
  const al = alignChannel(b, S, S, DX, DY);
  unmixChannels(a, al, A21, A12, { reuse: true });
}, 5);
// the floor of any version that returns two new Float64 images: allocating and writing them once
const floor = time(() => {
  const t1 = new Float64Array(S * S), t2 = new Float64Array(S * S);
  t1.fill(1);
  t2.fill(1);
}, 5);
const naive = time(() => {
  const t1 = new Float64Array(S * S), t2 = new Float64Array(S * S);
  const det = 1 - A12 * A21;
  for (let j = 0; j < S; j++)
    for (let i = 0; i < S; i++) {
      const x = i + DX, y = j + DY, k = j * S + i;
      let v = NaN;
      if (x >= 0 && x <= S - 1 && y >= 0 && y <= S - 1) {
        const x0 = Math.min(Math.floor(x), S - 2), y0 = Math.min(Math.floor(y), S - 2);
        const fx = x - x0, fy = y - y0;
        v = b[y0 * S + x0] * (1 - fy) * (1 - fx) + b[y0 * S + x0 + 1] * (1 - fy) * fx + b[(y0 + 1) * S + x0] * fy * (1 - fx) + b[(y0 + 1) * S + x0 + 1] * fy * fx;
      }
      const u = (a[k] - A12 * v) / det, w = (v - A21 * a[k]) / det;
      t1[k] = u < 0 ? 0 : u;
      t2[k] = w < 0 ? 0 : w;
    }
}, 3);
console.log(`alignment + unmixing in one pass (alignAndUnmix), output images reused: ${fmt(steady)} (target ≤ 60 ms); baseline (b) per-pixel ${fmt(naive)}; ratio ${(naive.cpu / steady.cpu).toFixed(2)}× (CPU)`);
console.log(`  allocating its two output images on every call: ${fmt(fast)}; ratio to baseline (b) ${(naive.cpu / fast.cpu).toFixed(2)}× (CPU)`);
console.log(`  as two steps (alignChannel, then unmixChannels over the aligned array): ${fmt(twoStep)} → one pass (allocating) is ${(twoStep.cpu / fast.cpu).toFixed(2)}× (CPU)`);
console.log(`  allocating and filling the two output images alone: ${fmt(floor)} (${((100 * floor.cpu) / fast.cpu).toFixed(0)} % of the one-pass time)`);
