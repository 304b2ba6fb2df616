/**
 * The two-channel composite drawn in the browser (channel 1 green, channel 2 magenta, as the server's
 * preview), optionally with channel 2 aligned by a shift first: `alignChannel` of shared/analysis/align.ts,
 * the same bilinear resampling runs apply, so what is shown is what is measured. Pixels whose sample
 * position falls outside the image (not measured after alignment) are drawn black. Display ranges are the
 * 0.1 and 99.9 percentiles of each recorded channel, the same for both pictures, so only the alignment differs.
 * Large fields are drawn at every `step`-th pixel (at most COMPOSITE_MAX_SIDE px a side); the alignment is
 * done at full resolution first.
 */
import { alignChannel } from '@shared/analysis/align';
import type { SampleArray } from '@shared/pixels/codec';

export const COMPOSITE_MAX_SIDE = 2048;

export interface CompositeInput {
  width: number;
  height: number;
  ch1: SampleArray;
  ch2: SampleArray;
}

/** The lo and hi percentiles of the finite values, from a sample of at most 200,000 pixels. */
export function displayRange(a: SampleArray, lo = 0.1, hi = 99.9): [number, number] {
  const step = Math.max(1, Math.floor(a.length / 200_000));
  const v: number[] = [];
  for (let i = 0; i < a.length; i += step) if (Number.isFinite(a[i])) v.push(a[i]);
  if (!v.length) return [0, 1];
  v.sort((x, y) => x - y);
  const at = (p: number) => v[Math.min(v.length - 1, Math.max(0, Math.round((p / 100) * (v.length - 1))))];
  const l = at(lo), h = at(hi);
  return h > l ? [l, h] : [l, l + 1];
}

/**
 * The one slice a composite is drawn from. The alignment composite is a 2-D view of the slice shown; a worker
 * holding a whole volume (`depth` > 1) or only one cell's voxels of a stack (`compact`) has no such picture,
 * so it is refused with what it holds rather than drawn at a wrong size.
 */
export function compositePlane(img: CompositeInput & { depth?: number; compact?: boolean }): CompositeInput {
  if (img.compact) throw new Error(`The composite is drawn from one slice, but this view holds only one cell's ${img.ch1.length} voxels of the stack.`);
  if ((img.depth ?? 1) > 1) throw new Error(`The composite is drawn from one slice, but this view holds the whole volume (${img.depth} slices of ${img.width} × ${img.height} pixels).`);
  return img;
}

/** RGBA bytes of the composite; `shift` null draws channel 2 as recorded. */
export function renderComposite(px: CompositeInput, shift: { dx: number; dy: number } | null, ranges: [[number, number], [number, number]] = [displayRange(px.ch1), displayRange(px.ch2)]) {
  const { width, height } = px;
  if (px.ch1.length !== width * height || px.ch2.length !== width * height)
    throw new RangeError(`A composite of ${width} × ${height} pixels needs ${width * height} values per channel, not ${px.ch1.length} and ${px.ch2.length}.`);
  const ch2: ArrayLike<number> = shift ? alignChannel(px.ch2, width, height, shift.dx, shift.dy) : px.ch2;
  const step = Math.max(1, Math.ceil(Math.max(width, height) / COMPOSITE_MAX_SIDE));
  const w = Math.ceil(width / step), h = Math.ceil(height / step);
  const out = new Uint8ClampedArray(w * h * 4);
  const [[l1, h1], [l2, h2]] = ranges;
  const s1 = 255 / (h1 - l1), s2 = 255 / (h2 - l2);
  for (let y = 0, o = 0; y < h; y++)
    for (let x = 0; x < w; x++, o += 4) {
      const i = y * step * width + x * step;
      const b = ch2[i];
      if (Number.isNaN(b)) {
        out[o + 3] = 255;
        continue;
      }
      const g = (px.ch1[i] - l1) * s1, m = (b - l2) * s2;
      out[o] = m;
      out[o + 1] = g;
      out[o + 2] = m;
      out[o + 3] = 255;
    }
  return { width: w, height: h, rgba: out };
}
