/**
 * Pixels near pixels without a value. A pixel "without a value" is a non-finite sample (NaN: not measured,
 * e.g. where an aligned channel's sample position fell outside the image). A filter of radius R computed at
 * a pixel reads the pixels up to R away in x and in y (a square neighbourhood; in z up to Rz slices), so its
 * result there depends on a missing pixel exactly when one lies within Chebyshev distance R (and Rz in z).
 * `nearMissing` marks those pixels: the binary dilation of the missing set by a box of half-widths
 * (R, R, Rz) (Serra 1982, "Image Analysis and Mathematical Morphology", Academic Press — from memory), done
 * separably as running distances to the last missing pixel along x, then y, then z, O(n) per pass.
 */
import type { ChannelArray } from './types';

/** 1 where either channel has a non-finite sample (integer arrays have none); null when there is none. */
export function missingMask(channels: ChannelArray[], n: number): Uint8Array | null {
  let out: Uint8Array | null = null;
  for (const a of channels) {
    if (!(a instanceof Float32Array || a instanceof Float64Array)) continue;
    if (a.length !== n) throw new RangeError(`channel has ${a.length} samples, expected ${n}`);
    for (let i = 0; i < n; i++)
      if (!Number.isFinite(a[i])) {
        out ??= new Uint8Array(n);
        out[i] = 1;
      }
  }
  return out;
}

/** marks, along one line of `len` samples (start s, step st), those within `r` of a marked one, in place via `buf` */
function dilateLine(m: Uint8Array, s: number, st: number, len: number, r: number, buf: Uint8Array): void {
  // distance to the last marked sample seen from the left, then from the right
  let last = -Infinity;
  for (let k = 0, p = s; k < len; k++, p += st) {
    if (m[p]) last = k;
    buf[k] = k - last <= r ? 1 : 0;
  }
  last = Infinity;
  for (let k = len - 1, p = s + (len - 1) * st; k >= 0; k--, p -= st) {
    if (m[p]) last = k;
    if (last - k <= r) buf[k] = 1;
  }
  for (let k = 0, p = s; k < len; k++, p += st) m[p] = buf[k];
}

/**
 * 1 for every sample within Chebyshev distance `r` in x and y (and `rz` in z) of a marked sample of
 * `missing` (depth planes of width × height); `missing` is left unchanged.
 */
export function nearMissing(missing: Uint8Array, width: number, height: number, r: number, depth = 1, rz = 0): Uint8Array {
  if (missing.length !== width * height * depth) throw new RangeError(`mask has ${missing.length} samples, not ${width}×${height}×${depth}`);
  if (!(Number.isInteger(r) && r >= 0 && Number.isInteger(rz) && rz >= 0)) throw new RangeError(`dilation radii must be non-negative integers, received ${r}, ${rz}`);
  const m = missing.slice();
  const plane = width * height;
  const buf = new Uint8Array(Math.max(width, height, depth));
  if (r > 0)
    for (let z = 0; z < depth; z++) {
      for (let y = 0; y < height; y++) dilateLine(m, z * plane + y * width, 1, width, r, buf);
      for (let x = 0; x < width; x++) dilateLine(m, z * plane + x, width, height, r, buf);
    }
  if (rz > 0 && depth > 1) for (let i = 0; i < plane; i++) dilateLine(m, i, plane, depth, rz, buf);
  return m;
}
