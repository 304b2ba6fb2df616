/**
 * Label images: 0 is background, each positive integer value is one region (cell). Two passes, O(N):
 * count per label, then fill each region's pixel list (linear indices y·width + x, ascending).
 *
 * Degenerate cases: negative or non-integer values → RangeError quoting the value and its position;
 * an image with no positive value → no regions.
 */
import type { ChannelArray } from './types';

export interface LabelRegion {
  label: number;
  indices: Uint32Array;
}

export function labelRegions(labels: ChannelArray | ArrayLike<number>): LabelRegion[] {
  const N = labels.length;
  const counts = new Map<number, number>();
  let last = -1, lastCount = 0;
  for (let i = 0; i < N; i++) {
    const v = labels[i];
    if (v === 0) continue;
    if (v !== last) {
      if (!(Number.isInteger(v) && v > 0)) throw new RangeError(`label image values must be non-negative integers, received ${v} at pixel ${i}`);
      if (last > 0) counts.set(last, lastCount);
      last = v;
      lastCount = counts.get(v) ?? 0;
    }
    lastCount++;
  }
  if (last > 0) counts.set(last, lastCount);
  const keys = [...counts.keys()].sort((a, b) => a - b);
  const regions = new Map<number, { arr: Uint32Array; k: number }>();
  for (const key of keys) regions.set(key, { arr: new Uint32Array(counts.get(key)!), k: 0 });
  let cur: { arr: Uint32Array; k: number } | undefined;
  last = -1;
  for (let i = 0; i < N; i++) {
    const v = labels[i];
    if (v === 0) continue;
    if (v !== last) {
      cur = regions.get(v);
      last = v;
    }
    cur!.arr[cur!.k++] = i;
  }
  return keys.map((label) => ({ label, indices: regions.get(label)!.arr }));
}
