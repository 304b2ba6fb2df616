/**
 * The workspace's orthogonal views of a stack: the XZ plane through row y and the YZ plane through column x
 * (GET /api/fields/:id/pixels?section=xz|yz&at=…: `across` × slices, row k = slice k). This module turns a
 * section into picture bytes with the display's shown intensities, and every cell into the outline of the
 * voxels it covers on that plane — a drawn outline over its z range, a 2-D label cell on every slice, a 3-D
 * label cell exactly its voxels (the same mapping runs measure, shared/schemas/cells.ts `cellVoxels`) — traced
 * along pixel edges (shared/analysis/outline-trace.ts), so a cell's extent in z reads off the picture.
 * Pure functions on typed arrays; tested in tests/workspace/ortho-view.test.ts.
 */
import { cellIndices, zRangeOf, type CellGeometry } from '@shared/schemas/cells';
import { decodeRuns } from '@shared/analysis/rle';
import { traceOutline } from '@shared/analysis/outline-trace';
import type { SampleArray } from '@shared/pixels/codec';

export type SectionAxis = 'xz' | 'yz';

/** Pixels across a section: the field's width for XZ, its height for YZ. */
export const sectionAcross = (axis: SectionAxis, width: number, height: number) => (axis === 'xz' ? width : height);

/** Position of an in-plane pixel index on the section's horizontal axis, or −1 when it is not on the section's row / column. */
function onSection(p: number, width: number, axis: SectionAxis, at: number): number {
  const x = p % width, y = (p - x) / width;
  if (axis === 'xz') return y === at ? x : -1;
  return x === at ? y : -1;
}

/**
 * Indices (k·across + u, ascending) of the section pixels a cell covers: slice k (0-based) of its z range and
 * position u along the section. A 3-D label cell contributes exactly its voxels on the plane.
 */
export function sectionIndices(g: CellGeometry, width: number, height: number, sizeZ: number, axis: SectionAxis, at: number): Uint32Array {
  const across = sectionAcross(axis, width, height);
  const out: number[] = [];
  if (g.kind === 'label3d') {
    for (let z = g.z[0] - 1; z <= Math.min(g.z[1], sizeZ) - 1; z++) {
      for (const p of decodeRuns(g.slices[z - (g.z[0] - 1)], width * height)) {
        const u = onSection(p, width, axis, at);
        if (u >= 0) out.push(z * across + u);
      }
    }
    return Uint32Array.from(out);
  }
  const us: number[] = [];
  for (const p of cellIndices(g, width, height)) {
    const u = onSection(p, width, axis, at);
    if (u >= 0) us.push(u);
  }
  us.sort((a, b) => a - b);
  const [a, b] = zRangeOf(g, sizeZ);
  for (let z = a - 1; z <= Math.min(b, sizeZ) - 1; z++) for (const u of us) out.push(z * across + u);
  return Uint32Array.from(out);
}

/** An SVG path (even-odd) of the pixel-edge outline of section pixels, in section pixel units (x across, y = slice). */
export function sectionPath(indices: Uint32Array, across: number, sizeZ: number): string {
  if (indices.length === 0) return '';
  return traceOutline(indices, across, sizeZ)
    .flatMap((poly) => poly.rings.map((r) => `M${r.map(([x, y]) => `${x} ${y}`).join('L')}Z`))
    .join('');
}

/** Every cell's outline on a section (cells that miss the plane are left out). */
export function sectionOutlines<T extends { key: string; geometry: CellGeometry }>(outlines: readonly T[], width: number, height: number, sizeZ: number, axis: SectionAxis, at: number): { outline: T; d: string }[] {
  const across = sectionAcross(axis, width, height);
  const out: { outline: T; d: string }[] = [];
  for (const o of outlines) {
    const idx = sectionIndices(o.geometry, width, height, sizeZ, axis, at);
    if (idx.length) out.push({ outline: o, d: sectionPath(idx, across, sizeZ) });
  }
  return out;
}

/**
 * Height of one slice in pixel widths: z step ÷ pixel size when both are known (µm between slices over µm per
 * pixel), else null (the views then draw one pixel per slice and say so).
 */
export function zScaleOf(pixelSizeUm: number | null, zStepUm: number | null): number | null {
  return pixelSizeUm && zStepUm ? zStepUm / pixelSizeUm : null;
}

type Range = [number, number];

/** The lowest and highest value of a channel that has one (NaN carries no intensity), for a view without a display range yet. */
export function valueRange(a: SampleArray): Range {
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < a.length; i++) {
    const v = a[i];
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return lo <= hi ? [lo, hi] : [0, 1];
}

/**
 * RGBA bytes of a section as the viewer paints the field (server/images/preview.ts): channel 1 green,
 * channel 2 magenta (red + blue), each mapped to 0–255 through its shown intensities (rounded, clamped; a
 * zero-width range paints what lies above it full); one channel alone in grey. NaN is black.
 */
export function sectionRgba(ch1: SampleArray, ch2: SampleArray, view: 'composite' | 'ch1' | 'ch2', r1: Range, r2: Range): Uint8ClampedArray {
  const n = ch1.length;
  const out = new Uint8ClampedArray(4 * n);
  const byte = (v: number, [lo, hi]: Range) => {
    if (!(v === v)) return 0;
    if (hi <= lo) return v > lo ? 255 : 0;
    const b = Math.floor((v - lo) * (255 / (hi - lo)) + 0.5);
    return b <= 0 ? 0 : b >= 255 ? 255 : b;
  };
  for (let i = 0, j = 0; i < n; i++, j += 4) {
    if (view === 'composite') {
      const g = byte(ch1[i], r1), m = byte(ch2[i], r2);
      out[j] = m;
      out[j + 1] = g;
      out[j + 2] = m;
    } else {
      const v = view === 'ch1' ? byte(ch1[i], r1) : byte(ch2[i], r2);
      out[j] = out[j + 1] = out[j + 2] = v;
    }
    out[j + 3] = 255;
  }
  return out;
}
