/**
 * Automatic outlines (shared/analysis/segment.ts) on synthetic images with known disks, and the exactness of
 * traced outlines under the one rasterization rule (shared/analysis/rasterize.ts).
 */
import { describe, expect, it } from 'vitest';
import {
  autoLevel,
  fillHoles,
  segmentCells,
  squaredDistanceTransform,
  traceOutline,
} from '../../shared/analysis/segment';
import { rasterize } from '../../shared/analysis/rasterize';
import { otsuThreshold } from '../../shared/analysis/otsu';
import { Xoshiro128 } from '../../shared/analysis/prng';
import { inDisk } from './helpers';

function diskImage(W: number, H: number, disks: [number, number, number][], fg = 1000, bg = 100) {
  const img = new Uint16Array(W * H).fill(bg);
  for (const [cx, cy, r] of disks) for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) if (inDisk(x, y, cx, cy, r)) img[y * W + x] = fg;
  return img;
}
const diskArea = (cx: number, cy: number, r: number) => {
  let n = 0;
  for (let y = Math.floor(cy - r) - 1; y <= cy + r; y++) for (let x = Math.floor(cx - r) - 1; x <= cx + r; x++) if (inDisk(x, y, cx, cy, r)) n++;
  return n;
};

describe('squared Euclidean distance transform (Felzenszwalb & Huttenlocher 2012)', () => {
  it('equals the brute-force minimum over background pixels (definition; border counts as background)', () => {
    const W = 23, H = 17;
    const rng = new Xoshiro128(7);
    const mask = new Uint8Array(W * H);
    for (let i = 0; i < mask.length; i++) mask[i] = rng.nextFloat() < 0.8 ? 1 : 0;
    const d = squaredDistanceTransform(mask, W, H);
    for (let y = 0; y < H; y++)
      for (let x = 0; x < W; x++) {
        let best = Infinity;
        // background: mask 0 pixels, and the one-pixel frame outside the image
        for (let yy = -1; yy <= H; yy++)
          for (let xx = -1; xx <= W; xx++) {
            const outside = xx < 0 || yy < 0 || xx >= W || yy >= H;
            if (outside || !mask[yy * W + xx]) best = Math.min(best, (xx - x) ** 2 + (yy - y) ** 2);
          }
        expect(d[y * W + x]).toBe(mask[y * W + x] ? best : 0);
      }
  });
});

describe('fill holes', () => {
  it('fills an enclosed hole and leaves a hole open to the border', () => {
    const W = 7, H = 5;
    const m = Uint8Array.from([
      0, 0, 0, 0, 0, 0, 0,
      0, 1, 1, 1, 0, 1, 0,
      0, 1, 0, 1, 0, 1, 0,
      0, 1, 1, 1, 0, 0, 0,
      0, 0, 0, 0, 0, 0, 0,
    ]);
    fillHoles(m, W, H);
    expect(m[2 * W + 2]).toBe(1);
    expect(m[2 * W + 4]).toBe(0);
    expect(m.reduce((a, b) => a + b, 0)).toBe(9 + 2);
  });
});

describe('outline tracing is exact under the pixel-centre even-odd rule', () => {
  it('random blobs: the traced polygon rasterizes back to exactly the same pixels', () => {
    const rng = new Xoshiro128(3);
    for (let trial = 0; trial < 40; trial++) {
      const W = 20, H = 16;
      const m = new Uint8Array(W * H);
      // a random 4-connected blob grown from the centre
      let x = 10, y = 8;
      for (let s = 0; s < 80; s++) {
        m[y * W + x] = 1;
        const d = Math.floor(rng.nextFloat() * 4);
        x = Math.min(W - 1, Math.max(0, x + (d === 0 ? 1 : d === 1 ? -1 : 0)));
        y = Math.min(H - 1, Math.max(0, y + (d === 2 ? 1 : d === 3 ? -1 : 0)));
      }
      fillHoles(m, W, H);
      const pts = traceOutline((px, py) => m[py * W + px] === 1, 0, 0, W, H)!;
      const back = rasterize({ kind: 'polygon', points: pts }, W, H);
      expect(Array.from(back)).toEqual(Array.from(m));
    }
  });
  it('removes collinear vertices: a 5 × 3 block is a 4-vertex rectangle', () => {
    const pts = traceOutline((x, y) => x >= 2 && x < 7 && y >= 1 && y < 4, 0, 0, 10, 10)!;
    expect(pts).toHaveLength(4);
    expect(new Set(pts.map((p) => p.join(',')))).toEqual(new Set(['2,1', '7,1', '7,4', '2,4']));
  });
});

describe('segmentCells on synthetic disks', () => {
  const W = 256, H = 256;
  // two touching disks (centres 35 px apart, radii 20 + 18), three separate ones, one too small (r = 3)
  const disks: [number, number, number][] = [[60, 60, 20], [95, 60, 18], [180, 180, 25], [60, 190, 12], [190, 60, 15], [130, 130, 3]];
  const img = diskImage(W, H, disks);

  it('finds one outline per disk, splits the touching pair, drops the small one; areas within 3 % (common practice tolerance)', () => {
    const res = segmentCells(img, W, H, { level: 500, seedDistance: 8, minPixels: 50 });
    expect(res.objects).toHaveLength(5);
    expect(res.droppedSmall).toBe(1);
    const expected = disks.slice(0, 5).map(([cx, cy, r]) => ({ cx, cy, area: diskArea(cx, cy, r) }));
    for (const e of expected) {
      // the object whose label covers the disk centre
      const lab = res.labels[Math.floor(e.cy) * W + Math.floor(e.cx)];
      const o = res.objects.find((ob) => ob.label === lab)!;
      expect(o).toBeTruthy();
      expect(Math.abs(o.pixelCount - e.area) / e.area).toBeLessThan(0.03);
      // the outline is an ordinary polygon that rasterizes to exactly the object
      const mask = rasterize({ kind: 'polygon', points: o.points }, W, H);
      let same = 0, count = 0;
      for (let i = 0; i < mask.length; i++) {
        if (mask[i]) count++;
        if (mask[i] && res.labels[i] === lab) same++;
      }
      expect(count).toBe(o.pixelCount);
      expect(same).toBe(o.pixelCount);
    }
    // separate disks are found whole: exact areas
    for (const [cx, cy, r] of disks.slice(2, 5)) {
      const lab = res.labels[Math.floor(cy) * W + Math.floor(cx)];
      expect(res.objects.find((o) => o.label === lab)!.pixelCount).toBe(diskArea(cx, cy, r));
    }
    // the touching pair shares exactly the union of the two disks
    const la = res.labels[60 * W + 60], lb = res.labels[60 * W + 95];
    expect(la).not.toBe(lb);
    const pa = res.objects.find((o) => o.label === la)!.pixelCount, pb = res.objects.find((o) => o.label === lb)!.pixelCount;
    let union = 0;
    for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) if (inDisk(x, y, 60, 60, 20) || inDisk(x, y, 95, 60, 18)) union++;
    expect(pa + pb).toBe(union);
  });

  it('without splitting, the touching pair is one object; the maximum size drops the largest', () => {
    const res = segmentCells(img, W, H, { level: 500, split: false, minPixels: 50, maxPixels: 1900 });
    // objects: pair (merged, ~2270 px → dropped large), r=25 (~1960 → dropped large), r=12, r=15
    expect(res.objects).toHaveLength(2);
    expect(res.droppedLarge).toBe(2);
    expect(res.droppedSmall).toBe(1);
  });

  it('fills holes: a ring becomes a disk', () => {
    const ring = new Uint16Array(64 * 64);
    for (let y = 0; y < 64; y++) for (let x = 0; x < 64; x++) if (inDisk(x, y, 32, 32, 20) && !inDisk(x, y, 32, 32, 8)) ring[y * 64 + x] = 10;
    const filled = segmentCells(ring, 64, 64, { level: 5, split: false });
    expect(filled.objects).toHaveLength(1);
    expect(filled.objects[0].pixelCount).toBe(diskArea(32, 32, 20));
  });

  it('refuses a wrong size and a non-finite level, quoting the values', () => {
    expect(() => segmentCells(new Uint16Array(10), 3, 3, { level: 1 })).toThrow(/10 does not match 3 × 3/);
    expect(() => segmentCells(new Uint16Array(9), 3, 3, { level: NaN })).toThrow(/got NaN/);
  });

  it('runs on a 1024² field in well under the request budget', () => {
    const big = diskImage(1024, 1024, Array.from({ length: 60 }, (_, k) => [60 + (k % 8) * 120, 60 + Math.floor(k / 8) * 120, 30 + (k % 5) * 5] as [number, number, number]));
    const t = performance.now();
    const res = segmentCells(big, 1024, 1024, { level: 500, seedDistance: 10, minPixels: 50 });
    const ms = performance.now() - t;
    expect(res.objects.length).toBeGreaterThanOrEqual(60);
    expect(ms).toBeLessThan(8000);
  });
});

describe('automatic level', () => {
  it('separates cells from background even with saturated puncta (plain Otsu splits off the puncta)', () => {
    const W = 128, H = 128;
    const img = diskImage(W, H, [[40, 40, 20], [90, 85, 25]], 800, 200);
    for (let k = 0; k < 60; k++) img[(30 + (k % 10)) * W + 35 + Math.floor(k / 10)] = 65535; // a saturated punctum
    const plain = otsuThreshold(img)!;
    expect(plain).toBeGreaterThanOrEqual(800); // cells fall below: the known failure the clip avoids
    const level = autoLevel(img)!;
    expect(level).toBeGreaterThanOrEqual(200);
    expect(level).toBeLessThan(800);
    expect(segmentCells(img, W, H, { level, seedDistance: 10 }).objects).toHaveLength(2);
    expect(autoLevel(new Uint16Array(50).fill(7))).toBeNull();
  });

  it('float data with NaN pixels: the level is that of the pixels with a value (NaN takes no part in the clip)', () => {
    const W = 64, H = 64;
    const img = Float32Array.from(diskImage(W, H, [[30, 30, 18]], 800, 200), (v, i) => v + (i % 7) * 0.25);
    for (let k = 0; k < 20; k++) img[(28 + (k % 5)) * W + 28 + Math.floor(k / 5)] = 60000; // a bright punctum the clip must remove
    const withNan = img.slice();
    // 2 % NaN pixels: more than the 0.5 % clipped share, so counting them would put the clip on NaN
    for (let i = 0; i < withNan.length; i += 50) withNan[i] = NaN;
    const valued = withNan.filter((v) => !Number.isNaN(v));
    const level = autoLevel(withNan);
    expect(level).not.toBeNull();
    expect(level).toBe(autoLevel(valued));
    expect(level!).toBeGreaterThan(200);
    expect(level!).toBeLessThan(800);
    expect(autoLevel(new Float32Array(10).fill(NaN))).toBeNull();
  });
});
