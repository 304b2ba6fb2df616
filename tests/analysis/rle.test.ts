/**
 * Run-length codes of label cells (shared/analysis/rle.ts): the one encoder and decoder, their round trip on
 * label images, and rejection of malformed codes (odd length, negative, empty, unsorted or overlapping runs,
 * beyond width × height) with messages that quote the run.
 */
import { describe, expect, it } from 'vitest';
import { checkRuns, decodeRuns, encodeRuns, runsBounds, runsContain, RunLengthError } from '../../shared/analysis/rle';
import { labelRegions } from '../../shared/analysis/labels';
import { CellGeometrySchema, cellIndices } from '../../shared/schemas/cells';
import { Xoshiro128 } from '../../shared/analysis/prng';

/** label → run-length code, the way the label import stores cells */
const runsOfLabels = (labels: ArrayLike<number>) => new Map(labelRegions(labels).map((r) => [r.label, encodeRuns(r.indices, labels.length)]));

describe('label masks as run lengths', () => {
  it('round-trips a label image exactly', () => {
    const labels = Uint16Array.from([0, 1, 1, 0, 2, 2, 2, 1, 0, 0, 3, 3]);
    const m = runsOfLabels(labels);
    expect(m.get(1)).toEqual([1, 2, 7, 1]);
    expect(m.get(2)).toEqual([4, 3]);
    expect(Array.from(decodeRuns(m.get(3)!, 12))).toEqual([10, 11]);
  });
  it('refuses overlapping or out-of-range runs', () => {
    expect(() => decodeRuns([0, 3, 2, 1], 10)).toThrow(/bad run 1/);
    expect(() => decodeRuns([8, 3], 10)).toThrow(/bad run 0/);
  });
  it('random label images: decode(encode(pixels of a label)) is exactly those pixels', () => {
    const rng = new Xoshiro128(42);
    for (let trial = 0; trial < 20; trial++) {
      const W = 1 + Math.floor(rng.nextFloat() * 40), H = 1 + Math.floor(rng.nextFloat() * 30);
      const labels = new Uint16Array(W * H);
      for (let i = 0; i < labels.length; i++) labels[i] = rng.nextFloat() < 0.4 ? 0 : 1 + Math.floor(rng.nextFloat() * 4);
      for (const [label, rle] of runsOfLabels(labels)) {
        const want = [...labels.keys()].filter((i) => labels[i] === label);
        expect(Array.from(decodeRuns(rle, W * H))).toEqual(want);
        expect(checkRuns(rle, W * H)).toBe(want.length);
        // shortest code: no two runs touch
        for (let r = 2; r < rle.length; r += 2) expect(rle[r]).toBeGreaterThan(rle[r - 2] + rle[r - 1]);
      }
    }
  });
  it('edge cases: empty code, whole field, last pixel, adjacent runs', () => {
    expect(encodeRuns([], 5)).toEqual([]);
    expect(Array.from(decodeRuns([], 5))).toEqual([]);
    expect(encodeRuns([0, 1, 2, 3, 4], 5)).toEqual([0, 5]);
    expect(Array.from(decodeRuns([4, 1], 5))).toEqual([4]);
    expect(Array.from(decodeRuns([0, 2, 2, 1], 5))).toEqual([0, 1, 2]);
  });
});

describe('malformed codes are rejected, quoting the value', () => {
  const bad = (rle: number[], total: number | undefined, re: RegExp) => {
    expect(() => checkRuns(rle, total)).toThrow(RunLengthError);
    expect(() => checkRuns(rle, total)).toThrow(re);
    if (total !== undefined) expect(() => decodeRuns(rle, total)).toThrow(re);
  };
  it('odd length', () => bad([3, 2, 7], 20, /even number of entries .* got 3/));
  it('negative or fractional start', () => {
    bad([-1, 2], 20, /bad run 0 \(start -1, length 2\): the start must be a whole number ≥ 0/);
    bad([0, 1, 2.5, 1], 20, /bad run 1 \(start 2\.5, length 1\)/);
  });
  it('empty or negative length', () => {
    bad([4, 0], 20, /bad run 0 \(start 4, length 0\): the length must be a whole number ≥ 1/);
    bad([4, -3], 20, /length -3/);
  });
  it('unsorted or overlapping runs', () => {
    bad([10, 2, 3, 1], 20, /bad run 1 \(start 3, length 1\): runs must be sorted and not overlap, but the previous run ends at 12/);
    bad([0, 5, 4, 2], 20, /bad run 1 \(start 4, length 2\).* ends at 5/);
  });
  it('beyond width × height', () => bad([18, 3], 20, /bad run 0 \(start 18, length 3\): ends at pixel 20, beyond the field's 20 pixels/));
  it('a bad field size', () => {
    expect(() => decodeRuns([0, 1], 0)).toThrow(/positive whole number of pixels, got 0/);
    expect(() => encodeRuns([0], NaN)).toThrow(/got null/);
  });
  it('the encoder refuses unsorted, repeated or out-of-field indices', () => {
    expect(() => encodeRuns([1, 3, 2], 10)).toThrow(/strictly ascending, got 2 after 3 \(entry 2\)/);
    expect(() => encodeRuns([1, 1], 10)).toThrow(/got 1 after 1/);
    expect(() => encodeRuns([0, 10], 10)).toThrow(/pixel index 10 \(entry 1\) is not a pixel of a field of 10 pixels/);
    expect(() => encodeRuns([-2], 10)).toThrow(/pixel index -2/);
  });
});

describe('the cell schema and cellIndices use the same checks', () => {
  it('a label geometry with malformed runs fails the schema with the run quoted', () => {
    const r = CellGeometrySchema.safeParse({ kind: 'label', label: 2, rle: [6, 2, 3, 1] });
    expect(r.success).toBe(false);
    expect(r.error!.issues[0].message).toMatch(/bad run 1 \(start 3, length 1\)/);
    expect(CellGeometrySchema.safeParse({ kind: 'label', label: 2, rle: [3, 1, 6, 2] }).success).toBe(true);
  });
  it('cellIndices refuses a label cell that runs past the field', () => {
    expect(Array.from(cellIndices({ kind: 'label', label: 1, rle: [3, 2] }, 4, 2))).toEqual([3, 4]);
    expect(() => cellIndices({ kind: 'label', label: 1, rle: [6, 3] }, 4, 2)).toThrow(/ends at pixel 8, beyond the field's 8 pixels/);
  });
});

describe('queries on a code without decoding it', () => {
  it('runsContain agrees with the decoded pixels and runsBounds with their bounding box', () => {
    const W = 7, H = 5;
    const codes = [[], [3, 1], [0, 7], [5, 4], [2, 2, 9, 3, 20, 10], [34, 1]];
    for (const rle of codes) {
      const px = new Set(decodeRuns(rle, W * H));
      for (let i = 0; i < W * H; i++) expect(runsContain(rle, i), `${JSON.stringify(rle)} @ ${i}`).toBe(px.has(i));
      if (px.size === 0) {
        expect(runsBounds(rle, W).x0).toBe(Infinity);
        continue;
      }
      const xs = [...px].map((i) => i % W), ys = [...px].map((i) => Math.floor(i / W));
      const b = runsBounds(rle, W);
      // a run that wraps a row spans the whole width; otherwise the box is exact
      const wraps = rle.some((_, k) => k % 2 === 0 && Math.floor(rle[k] / W) !== Math.floor((rle[k] + rle[k + 1] - 1) / W));
      expect([b.y0, b.y1]).toEqual([Math.min(...ys), Math.max(...ys) + 1]);
      if (wraps) expect([b.x0, b.x1]).toEqual([0, W]);
      else expect([b.x0, b.x1]).toEqual([Math.min(...xs), Math.max(...xs) + 1]);
    }
  });
});
