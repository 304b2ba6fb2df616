/**
 * Pixel-edge outlines (shared/analysis/outline-trace.ts): filling the traced rings by the even-odd rule
 * (rasterize.ts fillRings, per polygon, polygons joined) gives back exactly the pixel set; outer rings have
 * positive and holes negative shoelace area, and their areas sum to the pixel count; outer rings minus holes
 * is the Euler number of the set with 4-connected pixels and 8-connected background (Gray 1971, IEEE Trans.
 * Computers C-20(5):551–561 — from memory), counted here from 2 × 2 neighbourhoods (by definition) and
 * taken from scikit-image (tests/fixtures/outlines/generate.py: `measure.euler_number`, and `measure.label`
 * for the 4-connected components, one outer ring each).
 */
import { describe, expect, it } from 'vitest';
import { traceOutline, ringArea } from '../../shared/analysis/outline-trace';
import { fillRings, maskToIndices } from '../../shared/analysis/rasterize';
import { Xoshiro128 } from '../../shared/analysis/prng';
import expected from '../fixtures/outlines/expected.json';

function refill(polys: ReturnType<typeof traceOutline>, w: number, h: number) {
  const mask = new Uint8Array(w * h);
  const part = new Uint8Array(w * h);
  for (const p of polys) {
    part.fill(0);
    fillRings(part, w, h, p.rings);
    for (let k = 0; k < mask.length; k++) mask[k] |= part[k];
  }
  return mask;
}

/** Euler number, 4-connected foreground: (#Q1 − #Q3 + 2·#QD) / 4 over 2×2 quads of the zero-padded mask, QD the diagonal pair counted for 4-connectivity. */
function euler4(mask: Uint8Array, w: number, h: number) {
  const at = (x: number, y: number) => (x >= 0 && y >= 0 && x < w && y < h ? mask[y * w + x] : 0);
  let q1 = 0, q3 = 0, qd = 0;
  for (let y = -1; y < h; y++)
    for (let x = -1; x < w; x++) {
      const a = at(x, y), b = at(x + 1, y), c = at(x, y + 1), d = at(x + 1, y + 1);
      const s = a + b + c + d;
      if (s === 1) q1++;
      else if (s === 3) q3++;
      else if (s === 2 && a === d) qd++;
    }
  return (q1 - q3 + 2 * qd) / 4;
}

describe('traceOutline', () => {
  it('one pixel is a unit square, counter-clockwise in (x, y) numbers', () => {
    expect(traceOutline([0], 4, 4)).toEqual([{ rings: [[[0, 0], [1, 0], [1, 1], [0, 1]]] }]);
  });

  it('a ring of pixels has one hole; diagonal neighbours are separate polygons touching at a corner', () => {
    const w = 5, h = 5;
    const ring = [6, 7, 8, 11, 13, 16, 17, 18];
    const polys = traceOutline(ring, w, h);
    expect(polys).toHaveLength(1);
    expect(polys[0].rings).toEqual([
      [[1, 1], [4, 1], [4, 4], [1, 4]],
      [[3, 2], [2, 2], [2, 3], [3, 3]], // starts at the first edge met in row order: the bottom of pixel (2, 1), going west
    ]);
    const diag = traceOutline([0, 6], w, h);
    expect(diag).toHaveLength(2);
    expect(diag.map((p) => p.rings.length)).toEqual([1, 1]);
  });

  it('random sets come back exactly, with consistent areas and Euler numbers', () => {
    const rng = new Xoshiro128(7);
    for (let trial = 0; trial < 150; trial++) {
      const w = 1 + Math.floor(rng.nextFloat() * 13), h = 1 + Math.floor(rng.nextFloat() * 13);
      const density = 0.2 + 0.6 * rng.nextFloat();
      const mask = new Uint8Array(w * h).map(() => (rng.nextFloat() < density ? 1 : 0));
      const idx = maskToIndices(mask);
      const polys = traceOutline(idx, w, h);
      expect(refill(polys, w, h)).toEqual(mask);
      let area = 0, holes = 0;
      for (const p of polys) {
        expect(ringArea(p.rings[0])).toBeGreaterThan(0);
        for (const hole of p.rings.slice(1)) expect(ringArea(hole)).toBeLessThan(0);
        for (const r of p.rings) area += ringArea(r);
        holes += p.rings.length - 1;
        for (const r of p.rings) for (const [x, y] of r) expect(Number.isInteger(x) && Number.isInteger(y)).toBe(true);
      }
      expect(area).toBe(idx.length);
      expect(polys.length - holes).toBe(euler4(mask, w, h));
    }
  });

  it('works on the pixels of a large field by their bounding box, and refuses indices outside the field', () => {
    const w = 3000, h = 2000;
    const idx = [2000 * w - 1, 2000 * w - 2];
    expect(traceOutline(idx, w, h)).toEqual([{ rings: [[[2998, 1999], [3000, 1999], [3000, 2000], [2998, 2000]]] }]);
    expect(traceOutline([], w, h)).toEqual([]);
    expect(() => traceOutline([w * h], w, h)).toThrow(/outside the 3000 × 2000 field/);
  });
});

describe('traceOutline against scikit-image', () => {
  it.each(expected.cases.map((c, i) => [i, c] as const))('case %i: one polygon per 4-connected component, components − holes = Euler number', (_i, c) => {
    const mask = Uint8Array.from(c.mask, (ch) => (ch === '1' ? 1 : 0));
    const polys = traceOutline(maskToIndices(mask), c.width, c.height);
    expect(polys.length).toBe(c.components); // skimage.measure.label(connectivity=1)
    const holes = polys.reduce((s, p) => s + p.rings.length - 1, 0);
    expect(polys.length - holes).toBe(c.euler); // skimage.measure.euler_number(connectivity=1)
    expect(refill(polys, c.width, c.height)).toEqual(mask);
  });
});
