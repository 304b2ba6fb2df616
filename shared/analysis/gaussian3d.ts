/**
 * Separable scale-normalised Laplacian of Gaussian on a box of a volume with anisotropic voxels.
 *
 * Response −(σ² ∂xx + σ² ∂yy + σz² ∂zz)(G ∗ (I − offset)), with G the Gaussian of widths σ (pixels) in x and y
 * and σz (slices) in z: in physical units, with σz = σ · (pixel size / z step), this is −s²∇² of an isotropic
 * Gaussian of width s = σ · pixel size, the scale-normalised operator of Lindeberg 1998 ("Feature detection
 * with automatic scale selection", Int. J. Comput. Vis. 30:79–116, doi:10.1023/A:1008045108935) in 3D. The
 * sign is flipped so a bright blob gives a positive response.
 *
 * Separability: the kernel is σ²(G''x Gy + Gx G''y) Gz + σz² Gx Gy G''z, so: an x pass gives Gx ∗ I and
 * G''x ∗ I; a y pass gives P = GxGy ∗ I and U = (G''x Gy + Gx G''y) ∗ I; a z pass gives σ² Gz ∗ U + σz² G''z ∗ P.
 * Each pass is O(n · taps). Kernels as gaussian.ts (`gaussianKernels`: sampled, truncated at 4σ, G normalised,
 * G'' zero-sum); beyond the volume's faces the half-sample mirror (SciPy `mode='reflect'`); inside the
 * volume the passes read the real voxels around the box, so the response on a box equals the response on
 * the whole volume. Float32 intermediates, double sums. Every voxel read must be finite, else a RangeError
 * quotes it — unless `missing` is 'zero' (read as `offset`; the caller keeps to outputs whose neighbourhood
 * holds no such voxel, see missing.ts).
 */
import { gaussianKernels } from './gaussian';
import type { ChannelArray } from './types';

/** A box of voxels: x0 ≤ x < x1, y0 ≤ y < y1, z0 ≤ z < z1 */
export interface VoxelBox {
  x0: number;
  y0: number;
  z0: number;
  x1: number;
  y1: number;
  z1: number;
}

function reflect(i: number, n: number): number {
  const p = 2 * n;
  let j = i % p;
  if (j < 0) j += p;
  return j < n ? j : p - 1 - j;
}

export function checkVolumeBox(width: number, height: number, depth: number, length: number, b: VoxelBox): void {
  if (!([width, height, depth].every((v) => Number.isInteger(v) && v > 0) && width * height * depth === length))
    throw new RangeError(`volume size ${width}×${height}×${depth} does not match ${length} voxels`);
  const ok = [b.x0, b.y0, b.z0, b.x1, b.y1, b.z1].every(Number.isInteger) && 0 <= b.x0 && b.x0 < b.x1 && b.x1 <= width && 0 <= b.y0 && b.y0 < b.y1 && b.y1 <= height && 0 <= b.z0 && b.z0 < b.z1 && b.z1 <= depth;
  if (!ok) throw new RangeError(`filter box ${JSON.stringify(b)} is not inside the ${width}×${height}×${depth} volume`);
}

/** Σ_k c_k (line[c − k] + line[c + k]) + c_0 line[c] along a strided line, into out at stride os */
function pass(src: Float32Array, s0: number, st: number, n: number, R: number, c: Float64Array, out: Float32Array, o0: number, os: number): void {
  for (let i = 0; i < n; i++) {
    const p = s0 + (i + R) * st;
    let s = c[0] * src[p];
    for (let k = 1; k <= R; k++) s += c[k] * (src[p - k * st] + src[p + k * st]);
    out[o0 + i * os] = s;
  }
}

/**
 * −(σ²∂xx + σ²∂yy + σz²∂zz)(G ∗ (I − offset)) on `box` of a volume of `depth` planes of width × height
 * (plane-major), returned box-major (x fastest, then y, then z), Float32.
 */
export function laplacianOfGaussian3D(
  data: ChannelArray,
  width: number,
  height: number,
  depth: number,
  sigma: number,
  sigmaZ: number,
  box: VoxelBox,
  offset = 0,
  missing: 'refuse' | 'zero' = 'refuse',
): Float32Array {
  checkVolumeBox(width, height, depth, data.length, box);
  const { radius: R, g, d2 } = gaussianKernels(sigma);
  const { radius: Rz, g: gz, d2: dz } = gaussianKernels(sigmaZ);
  const bw = box.x1 - box.x0, bh = box.y1 - box.y0, bd = box.z1 - box.z0;
  const tw = bw + 2 * R, th = bh + 2 * R, td = bd + 2 * Rz;
  const float = data instanceof Float32Array || data instanceof Float64Array;
  const cols = Int32Array.from({ length: tw }, (_, i) => reflect(box.x0 - R + i, width));
  const rows = Int32Array.from({ length: th }, (_, j) => reflect(box.y0 - R + j, height));
  const plane = width * height;
  // per tile plane: padded input (tw × th), x pass (bw × th, two kernels), y pass into P, U (bw × bh × td)
  const tile = new Float32Array(tw * th);
  const A = new Float32Array(bw * th), B = new Float32Array(bw * th);
  const P = new Float32Array(bw * bh * td), U = new Float32Array(bw * bh * td);
  const t1 = new Float32Array(bw * bh), t2 = new Float32Array(bw * bh);
  for (let kz = 0; kz < td; kz++) {
    const zoff = reflect(box.z0 - Rz + kz, depth) * plane;
    for (let j = 0; j < th; j++) {
      const row = zoff + rows[j] * width;
      for (let i = 0; i < tw; i++) {
        const v = data[row + cols[i]];
        if (float && !Number.isFinite(v)) {
          if (missing === 'zero') {
            tile[j * tw + i] = 0;
            continue;
          }
          throw new RangeError(`spot filtering needs finite voxels; voxel ${row + cols[i]} is ${v}`);
        }
        tile[j * tw + i] = v - offset;
      }
      pass(tile, j * tw, 1, bw, R, g, A, j * bw, 1);
      pass(tile, j * tw, 1, bw, R, d2, B, j * bw, 1);
    }
    const q = kz * bw * bh;
    for (let i = 0; i < bw; i++) {
      pass(A, i, bw, bh, R, g, P, q + i, bw);
      pass(A, i, bw, bh, R, d2, t1, i, bw);
      pass(B, i, bw, bh, R, g, t2, i, bw);
    }
    for (let t = 0; t < bw * bh; t++) U[q + t] = t1[t] + t2[t];
  }
  const out = new Float32Array(bw * bh * bd);
  const s2 = sigma * sigma, sz2 = sigmaZ * sigmaZ, pl = bw * bh;
  for (let t = 0; t < pl; t++)
    for (let z = 0; z < bd; z++) {
      const c = (z + Rz) * pl + t;
      let su = gz[0] * U[c], sp = dz[0] * P[c];
      for (let k = 1; k <= Rz; k++) {
        su += gz[k] * (U[c - k * pl] + U[c + k * pl]);
        sp += dz[k] * (P[c - k * pl] + P[c + k * pl]);
      }
      out[z * pl + t] = -(s2 * su + sz2 * sp);
    }
  return out;
}
