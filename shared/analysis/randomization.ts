/**
 * Costes randomization test (Costes et al. 2004, Biophys. J. 86:3993, doi:10.1529/biophysj.103.038422):
 * channel 1 is cut into square blocks about the size of the point-spread function (in a volume: boxes of
 * B × B pixels × Bz slices, from the PSF's lateral and axial widths), the blocks are shuffled
 * (Fisher–Yates with the seeded xoshiro128** generator, prng.ts), and Pearson's r against the unmoved
 * channel 2 is recomputed; repeated N times.
 *
 * Decided here: the block grid is anchored at the top-left (and first-slice) corner of the region's bounding
 * box and covers the whole blocks that fit inside it (and the image); region pixels outside whole blocks
 * take no part. A single plane (depth 1, Bz 1) is the same computation as before volumes existed.
 * Each region pixel keeps its channel-2 value and takes the channel-1 value at the same offset inside the
 * block moved there. The observed r is computed over the same pixels (the identity arrangement).
 * Reported: fraction below = #{r_rand < r_obs} / N and p = (1 + #{r_rand ≥ r_obs}) / (N + 1)
 * (the add-one estimate of Davison & Hinkley 1997, "Bootstrap Methods and their Application", CUP, §4.2).
 *
 * Degenerate cases: fewer than 2 whole blocks, fewer than 2 pixels, or r_obs undefined → p and fraction
 * null, count 0.
 */
import { Xoshiro128 } from './prng';
import type { ChannelArray, RandomizationOptions, RandomizationResult } from './types';

export const RANDOMIZATION_DEFAULTS = { count: 200, blockSize: 3, seed: 1 } as const;

export interface RandomizationDetail extends RandomizationResult {
  rObserved: number | null;
  blocks: number;
  pixelsUsed: number;
}

function rOf(xs: Float64Array, ys: Float64Array, m: number, sy: number, syy: number): number | null {
  let sx = 0, sxx = 0, sxy = 0;
  for (let i = 0; i < m; i++) {
    const a = xs[i];
    sx += a;
    sxx += a * a;
    sxy += a * ys[i];
  }
  const vx = sxx - (sx * sx) / m;
  const vy = syy - (sy * sy) / m;
  if (!(vx > 0 && vy > 0)) return null;
  return (sxy - (sx * sy) / m) / Math.sqrt(vx * vy);
}

/**
 * @param indices region pixels as linear indices (y·width + x); null = the whole image
 */
export function randomizationTest(
  ch1: ChannelArray,
  ch2: ChannelArray,
  width: number,
  height: number,
  indices: ArrayLike<number> | null,
  options: RandomizationOptions = {},
): RandomizationDetail {
  const count = options.count ?? RANDOMIZATION_DEFAULTS.count;
  const B = options.blockSize ?? RANDOMIZATION_DEFAULTS.blockSize;
  const seed = options.seed ?? RANDOMIZATION_DEFAULTS.seed;
  const depth = options.depth ?? 1;
  const Bz = options.blockDepth ?? 1;
  if (!(Number.isInteger(count) && count >= 0)) throw new RangeError(`randomization count must be a non-negative integer, received ${count}`);
  if (!(Number.isInteger(B) && B >= 1)) throw new RangeError(`block size must be a positive integer, received ${B}`);
  if (!(Number.isInteger(Bz) && Bz >= 1)) throw new RangeError(`block depth must be a positive integer, received ${Bz}`);
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 0 && Number.isInteger(depth) && depth > 0 && width * height * depth === ch1.length))
    throw new RangeError(`image size ${width}×${height}${depth === 1 ? '' : `×${depth}`} does not match ${ch1.length} pixels`);
  const plane = width * height;
  const none: RandomizationDetail = { randomizationP: null, randomizationFractionBelow: null, randomizationCount: 0, rObserved: null, blocks: 0, pixelsUsed: 0 };
  if (count === 0) return none;
  const total = indices === null ? plane * depth : indices.length;
  if (total === 0) return none;
  const at = (k: number) => (indices === null ? k : indices[k]);
  let x0 = width, y0 = height, z0 = depth, x1 = -1, y1 = -1, z1 = -1;
  for (let k = 0; k < total; k++) {
    const i = at(k);
    const pz = Math.floor(i / plane), r = i - pz * plane;
    const px = r % width, py = (r - px) / width;
    if (px < x0) x0 = px;
    if (px > x1) x1 = px;
    if (py < y0) y0 = py;
    if (py > y1) y1 = py;
    if (pz < z0) z0 = pz;
    if (pz > z1) z1 = pz;
  }
  const nbx = Math.floor((x1 - x0 + 1) / B), nby = Math.floor((y1 - y0 + 1) / B), nbz = Math.floor((z1 - z0 + 1) / Bz);
  const blocks = nbx * nby * nbz;
  if (blocks < 2) return { ...none, blocks };
  // pixels inside whole blocks: block id and offset
  const blockOf = new Int32Array(total);
  const offOf = new Int32Array(total);
  const ys = new Float64Array(total);
  let m = 0;
  for (let k = 0; k < total; k++) {
    const i = at(k);
    const pz = Math.floor(i / plane), r = i - pz * plane;
    const px = r % width, py = (r - px) / width;
    const gx = px - x0, gy = py - y0, gz = pz - z0;
    const bxi = Math.floor(gx / B), byi = Math.floor(gy / B), bzi = Math.floor(gz / Bz);
    if (bxi >= nbx || byi >= nby || bzi >= nbz) continue;
    blockOf[m] = (bzi * nby + byi) * nbx + bxi;
    offOf[m] = (gz - bzi * Bz) * plane + (gy - byi * B) * width + (gx - bxi * B);
    ys[m] = ch2[i];
    m++;
  }
  if (m < 2) return { ...none, blocks };
  const base = new Int32Array(blocks);
  for (let b = 0; b < blocks; b++) {
    const bx = b % nbx, byz = (b - bx) / nbx, by = byz % nby, bz = (byz - by) / nby;
    base[b] = (z0 + bz * Bz) * plane + (y0 + by * B) * width + x0 + bx * B;
  }
  // shift both channels by a rounded mean over the used pixels (keeps products small)
  let sy0 = 0;
  let sx0 = 0;
  for (let k = 0; k < m; k++) {
    sy0 += ys[k];
    sx0 += ch1[base[blockOf[k]] + offOf[k]];
  }
  const shiftY = Math.round(sy0 / m), shiftX = Math.round(sx0 / m);
  let sy = 0, syy = 0;
  for (let k = 0; k < m; k++) {
    const v = ys[k] - shiftY;
    ys[k] = v;
    sy += v;
    syy += v * v;
  }
  const xs = new Float64Array(m);
  const perm = new Int32Array(blocks);
  for (let b = 0; b < blocks; b++) perm[b] = b;
  const fill = () => {
    for (let k = 0; k < m; k++) xs[k] = ch1[base[perm[blockOf[k]]] + offOf[k]] - shiftX;
  };
  fill();
  const rObs = rOf(xs, ys, m, sy, syy);
  if (rObs === null) return { ...none, blocks, pixelsUsed: m };
  const rng = new Xoshiro128(seed);
  let ge = 0, below = 0, done = 0;
  for (let s = 0; s < count; s++) {
    rng.shuffle(perm);
    fill();
    const r = rOf(xs, ys, m, sy, syy);
    if (r === null) continue;
    done++;
    if (r >= rObs) ge++;
    else below++;
  }
  return {
    randomizationP: done > 0 ? (1 + ge) / (done + 1) : null,
    randomizationFractionBelow: done > 0 ? below / done : null,
    randomizationCount: done,
    rObserved: rObs,
    blocks,
    pixelsUsed: m,
  };
}
