/**
 * Maximum-intensity projection over z slices, the one implementation used by runs (server/runs/compute.ts),
 * the pixels and preview endpoints and reports (server/images/intake.ts selectZ).
 *
 * NaN rule (decided 2026-12-02, PRODUCT.md: a NaN pixel carries no intensity): each output pixel is the
 * largest non-NaN value of its column of slices, and NaN only when every slice is NaN there. A slice with a
 * NaN pixel therefore does not hide the other slices' values, and a NaN never becomes a number.
 */
export function project<T extends ArrayLike<number> & { slice(): T; [i: number]: number }>(slices: T[], from: number, to: number): T {
  const first = slices[from];
  if (from === to) return first;
  const out = first.slice();
  for (let z = from + 1; z <= to; z++) {
    const s = slices[z];
    for (let i = 0; i < out.length; i++) {
      const v = s[i];
      // out[i] !== out[i]: no value yet (NaN so far); a NaN v never wins a comparison
      if (v > out[i] || out[i] !== out[i]) out[i] = v;
    }
  }
  return out;
}

/**
 * Slices from..to (0-based, inclusive) one after the other in one flat array of the slices' own type, slice
 * `from` first: the volume measured voxel by voxel in 3D (a voxel (x, y, z) is at x + width·(y + height·(z −
 * from))). The one implementation used by runs, the pixels endpoint and `analyze`. One slice is returned as is.
 */
export function concatSlices<T extends ArrayLike<number> & { set(a: ArrayLike<number>, offset?: number): void }>(slices: T[], from: number, to: number): T {
  if (from === to) return slices[from];
  const len = slices[from].length;
  const out = new (slices[from].constructor as new (n: number) => T)(len * (to - from + 1));
  for (let k = from; k <= to; k++) out.set(slices[k], (k - from) * len);
  return out;
}

/**
 * The orthogonal section of a stack through one row or column, for the workspace's XZ and YZ views: 'xz' at
 * row y is `width` × `slices` and 'yz' at column x is `height` × `slices`; row k is slice k in both (z runs
 * down, x or y across), in the slices' own sample type. `at` must lie inside the plane (callers check it and
 * quote a bad value).
 */
export function orthoSection<T extends ArrayLike<number> & { [i: number]: number }>(slices: T[], width: number, height: number, axis: 'xz' | 'yz', at: number): T {
  const Z = slices.length;
  const Ctor = slices[0].constructor as new (n: number) => T;
  const across = axis === 'xz' ? width : height;
  const out = new Ctor(across * Z);
  for (let k = 0; k < Z; k++) {
    const s = slices[k];
    const o = k * across;
    if (axis === 'xz') for (let x = 0, row = at * width; x < width; x++) out[o + x] = s[row + x];
    else for (let y = 0; y < height; y++) out[o + y] = s[y * width + at];
  }
  return out;
}
