/**
 * Spot detection against synthetic fields with known centres (tests/fixtures/spots/generate.py: pixel-
 * integrated Gaussian spots, PSF σ 1.5 px, Poisson noise, background 20 photons, SNR = (peak − b)/√peak as in
 * Chenouard et al. 2014, Nat. Methods 11:281–289, doi:10.1038/nmeth.2808). Outside reference named beside
 * each check: the known centres (ground truth) and scikit-image 0.19 `skimage.feature.blob_log` at the
 * same scale and threshold rule.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { detectSpots, laplacianOfGaussian, type Spot } from '../../shared/analysis/index';

const dir = fileURLToPath(new URL('../fixtures/spots/', import.meta.url));
interface DetCase {
  name: string;
  file: string;
  width: number;
  height: number;
  snr: number;
  truth: [number, number][];
  nBorder: number;
  nClosePairs: number;
  skimageBlobLog: [number, number][];
}
const fixture = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as { detection: DetCase[] };

function load(c: DetCase): Uint16Array {
  const buf = readFileSync(join(dir, c.file));
  return new Uint16Array(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
}

/** one-to-one matching within `tol` px, closest pairs first */
export function match(truth: [number, number][], found: [number, number][], tol = 1) {
  const cand: [number, number, number][] = [];
  truth.forEach((t, i) => found.forEach((f, j) => {
    const d = Math.hypot(t[0] - f[0], t[1] - f[1]);
    if (d <= tol) cand.push([d, i, j]);
  }));
  cand.sort((a, b) => a[0] - b[0]);
  const ut = new Set<number>(), uf = new Set<number>();
  const matched: [number, number, number][] = [];
  for (const [d, i, j] of cand) if (!ut.has(i) && !uf.has(j)) {
    ut.add(i);
    uf.add(j);
    matched.push([d, i, j]);
  }
  const rmse = matched.length ? Math.sqrt(matched.reduce((s, m) => s + m[0] ** 2, 0) / matched.length) : NaN;
  return { recall: matched.length / truth.length, precision: found.length ? matched.length / found.length : 0, rmse, matchedTruth: ut };
}

const xy = (s: Spot[]) => s.map((p) => [p.x, p.y] as [number, number]);

describe('detection on synthetic fields (ground truth; skimage blob_log)', () => {
  for (const c of fixture.detection) {
    const img = load(c);
    const det = detectSpots(img, c.width, c.height, null, { sigma: 1.5, k: 5 })!;
    const ours = match(c.truth, xy(det.spots));
    const sk = match(c.truth, c.skimageBlobLog);
    if (c.snr >= 5) {
      it(`${c.name}: recall and precision ≥ 0.95 within 1 px, RMSE ≤ 0.2 px (ground truth)`, () => {
        expect(ours.recall).toBeGreaterThanOrEqual(0.95);
        expect(ours.precision).toBeGreaterThanOrEqual(0.95);
        expect(ours.rmse).toBeLessThanOrEqual(0.2);
      });
      it(`${c.name}: border spots and close pairs are found (ground truth)`, () => {
        // the generator lists the border spots first, then the close pairs
        for (let i = 0; i < c.nBorder + 2 * c.nClosePairs; i++) expect(ours.matchedTruth.has(i), `truth spot ${i} at ${c.truth[i]}`).toBe(true);
      });
      it(`${c.name}: at least as good as skimage blob_log, which localises to whole pixels (skimage 0.19)`, () => {
        expect(ours.recall).toBeGreaterThanOrEqual(sk.recall - 0.02);
        expect(ours.rmse).toBeLessThan(sk.rmse);
        // the two detectors agree on nearly every skimage detection
        expect(match(c.skimageBlobLog, xy(det.spots)).recall).toBeGreaterThanOrEqual(0.9);
      });
    } else {
      it(`${c.name} (SNR ${c.snr}, below the specified range): precision stays ≥ 0.95 (ground truth)`, () => {
        expect(ours.precision).toBeGreaterThanOrEqual(0.95);
      });
    }
  }
});

describe('filter and degenerate regions', () => {
  it('the LoG response of a box equals the response of the whole image cut to that box', () => {
    const c = fixture.detection[0];
    const img = load(c);
    const whole = laplacianOfGaussian(img, c.width, c.height, 1.5, { x0: 0, y0: 0, x1: c.width, y1: c.height });
    const part = laplacianOfGaussian(img, c.width, c.height, 1.5, { x0: 30, y0: 40, x1: 70, y1: 60 });
    let worst = 0;
    for (let y = 0; y < 20; y++) for (let x = 0; x < 40; x++) worst = Math.max(worst, Math.abs(part[y * 40 + x] - whole[(y + 40) * c.width + x + 30]));
    expect(worst).toBeLessThan(1e-3);
  });

  it('a Gaussian spot gives its maximum response at its centre; a constant image gives exactly 0', () => {
    const w = 31, img = new Float64Array(w * w);
    for (let y = 0; y < w; y++) for (let x = 0; x < w; x++) img[y * w + x] = 100 + 500 * Math.exp(-((x + 0.5 - 15.5) ** 2 + (y + 0.5 - 15.5) ** 2) / (2 * 1.5 ** 2));
    const r = laplacianOfGaussian(img, w, w, 1.5, { x0: 0, y0: 0, x1: w, y1: w });
    let best = 0;
    for (let i = 1; i < r.length; i++) if (r[i] > r[best]) best = i;
    expect(best).toBe(15 * w + 15);
    expect(r[best]).toBeGreaterThan(0);
    const flat = laplacianOfGaussian(new Uint16Array(w * w).fill(4000), w, w, 1.5, { x0: 0, y0: 0, x1: w, y1: w }, 4000);
    expect(flat.every((v) => v === 0)).toBe(true);
  });

  it('all pixels saturated → no spots (the noise estimate is 0)', () => {
    const det = detectSpots(new Uint16Array(64 * 64).fill(65535), 64, 64, null)!;
    expect(det.noise).toBe(0);
    expect(det.spots).toEqual([]);
  });

  it('a region smaller than the centroid window → null; an empty region → null', () => {
    const c = fixture.detection[0];
    const img = load(c);
    // σ 1.5 → w = 3, window 7 px: a 6-pixel-wide strip is too small, 7 is enough
    const strip = (wd: number) => {
      const idx: number[] = [];
      for (let y = 10; y < 40; y++) for (let x = 20; x < 20 + wd; x++) idx.push(y * c.width + x);
      return idx;
    };
    expect(detectSpots(img, c.width, c.height, strip(6))).toBeNull();
    expect(detectSpots(img, c.width, c.height, strip(7))).not.toBeNull();
    expect(detectSpots(img, c.width, c.height, [])).toBeNull();
  });

  it('spots are found only at region pixels and the region is a mask or indices alike', () => {
    const c = fixture.detection[3];
    const img = load(c);
    const mask = new Uint8Array(c.width * c.height);
    const idx: number[] = [];
    for (let y = 20; y < 90; y++) for (let x = 10; x < 100; x++) {
      mask[y * c.width + x] = 1;
      idx.push(y * c.width + x);
    }
    const a = detectSpots(img, c.width, c.height, mask)!;
    const b = detectSpots(img, c.width, c.height, idx)!;
    expect(a.spots).toEqual(b.spots);
    expect(a.spots.length).toBeGreaterThan(10);
    for (const s of a.spots) {
      expect(s.x).toBeGreaterThan(10 - 1.5);
      expect(s.x).toBeLessThan(100 + 1.5);
      expect(s.y).toBeGreaterThan(20 - 1.5);
      expect(s.y).toBeLessThan(90 + 1.5);
    }
  });

  it('bad options and NaN pixels are refused, quoting the value', () => {
    const img = new Float32Array(32 * 32);
    expect(() => detectSpots(img, 32, 32, null, { sigma: -1 })).toThrow(/received -1/);
    expect(() => detectSpots(img, 32, 32, null, { k: 0 })).toThrow(/received 0/);
    expect(() => detectSpots(img, 32, 31, null)).toThrow(/32×31/);
    img[100] = NaN;
    expect(() => detectSpots(img, 32, 32, null)).toThrow(/pixel 100 is NaN/);
  });
});
