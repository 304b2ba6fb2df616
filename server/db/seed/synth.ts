/**
 * Synthetic two-channel 16-bit fields for the INVENTED demo study (no real cells, instruments or people).
 * Pure module (no Node or DOM APIs): same parameters + seed → the same pixels and the same outlines.
 *
 * Model (ours, chosen so the demo comparison has a known effect):
 * - dark background: camera offset plus a dim, slowly varying glow;
 * - 6–10 cells per field, each a smooth closed outline around an ellipse, with a diffuse cytoplasmic level in
 *   both channels;
 * - inside each cell, puncta (isotropic Gaussian spots, σ ≈ 1.3–1.9 px, about the size of a diffraction-
 *   limited spot at typical sampling). A share `sharedFraction` of the puncta is present in BOTH channels at
 *   the same place; the rest appear in one channel only (half in channel 1, half in channel 2). The share is
 *   the condition effect: more shared puncta → higher Pearson's r, Manders' M1/M2 and overlap per cell;
 * - shot noise: each pixel is an exact Poisson draw around its expected photon count, plus Gaussian read
 *   noise (σ = 3) on a camera offset of 100;
 * - a few saturated pixels: one bright speck of debris outside the cells clips at 65535 in both channels
 *   (the field is flagged for saturation; the cells' coefficients, and so the known effect, are unaffected).
 *
 * Returns the pixel arrays (row-major, index y·width + x) and the ground truth: each cell's outline in
 * pixel coordinates (pixel (x, y) spans [x, x+1) × [y, y+1)), its puncta counts and shared share.
 */
import { Xoshiro128 } from '../../../shared/analysis/prng.js';
import { fillPolygon } from '../../../shared/analysis/rasterize.js';

export interface SynthParams {
  width?: number;
  height?: number;
  /** expected share of puncta present in both channels (0..1) */
  sharedFraction: number;
  seed: number;
  /** cells per field: an integer drawn uniformly from this range (inclusive) */
  cells?: [number, number];
  /** puncta per cell (inclusive range) */
  puncta?: [number, number];
}

export interface SynthCell {
  name: string;
  /** closed outline, pixel coordinates, not repeating the first point */
  points: [number, number][];
  puncta: number;
  sharedPuncta: number;
}

export interface SynthField {
  width: number;
  height: number;
  ch1: Uint16Array;
  ch2: Uint16Array;
  cells: SynthCell[];
  /** count of pixels at 65535 per channel */
  saturated: { ch1: number; ch2: number };
  params: Required<SynthParams>;
}

const MAX = 65535;

class Rng {
  private r: Xoshiro128;
  private spare: number | null = null;
  constructor(seed: number) {
    this.r = new Xoshiro128(seed);
  }
  u() {
    return this.r.nextFloat();
  }
  range(a: number, b: number) {
    return a + (b - a) * this.u();
  }
  int(a: number, b: number) {
    return a + this.r.nextInt(b - a + 1);
  }
  /** standard normal (Box–Muller, Box & Muller 1958, Ann. Math. Statist. 29:610) */
  normal() {
    if (this.spare !== null) {
      const s = this.spare;
      this.spare = null;
      return s;
    }
    let u = 0;
    while (u === 0) u = this.u();
    const v = this.u();
    const m = Math.sqrt(-2 * Math.log(u));
    this.spare = m * Math.sin(2 * Math.PI * v);
    return m * Math.cos(2 * Math.PI * v);
  }
  /**
   * Poisson draw, exact: Knuth's multiplication method below 10 (Knuth, TAOCP vol. 2, §3.4.1), above it
   * Hörmann's transformed rejection "PTRS" (Hörmann 1993, Insurance Math. Econom. 12:39,
   * doi:10.1016/0167-6687(93)90997-4), the method NumPy also uses, O(1) per draw.
   */
  poisson(mean: number) {
    if (mean <= 0) return 0;
    if (mean < 10) {
      const L = Math.exp(-mean);
      let k = 0;
      let p = 1;
      do {
        k++;
        p *= this.u();
      } while (p > L);
      return k - 1;
    }
    const slam = Math.sqrt(mean);
    const loglam = Math.log(mean);
    const b = 0.931 + 2.53 * slam;
    const a = -0.059 + 0.02483 * b;
    const invalpha = 1.1239 + 1.1328 / (b - 3.4);
    const vr = 0.9277 - 3.6224 / (b - 2);
    for (;;) {
      const U = this.u() - 0.5;
      const V = this.u();
      const us = 0.5 - Math.abs(U);
      const k = Math.floor(((2 * a) / us + b) * U + mean + 0.43);
      if (us >= 0.07 && V <= vr) return k;
      if (k < 0 || (us < 0.013 && V > us)) continue;
      if (Math.log(V) + Math.log(invalpha) - Math.log(a / (us * us) + b) <= -mean + k * loglam - logFactorial(k)) return k;
    }
  }
}

/** ln(k!) by Stirling's series with three correction terms (exact table below 16) */
const LOG_FACT = (() => {
  const t = [0];
  for (let i = 1; i < 16; i++) t.push(t[i - 1] + Math.log(i));
  return t;
})();
function logFactorial(k: number) {
  if (k < 16) return LOG_FACT[k];
  const x = k + 1;
  return (x - 0.5) * Math.log(x) - x + 0.5 * Math.log(2 * Math.PI) + 1 / (12 * x) - 1 / (360 * x ** 3) + 1 / (1260 * x ** 5);
}

interface Blob {
  cx: number;
  cy: number;
  rx: number;
  ry: number;
  angle: number;
  /** radial wobble harmonics */
  wob: { k: number; a: number; ph: number }[];
}

/** radius of the blob's boundary at polar angle t (relative to its centre, in its rotated frame) */
function boundaryRadius(b: Blob, t: number) {
  const base = (b.rx * b.ry) / Math.sqrt((b.ry * Math.cos(t)) ** 2 + (b.rx * Math.sin(t)) ** 2);
  let f = 1;
  for (const w of b.wob) f += w.a * Math.sin(w.k * t + w.ph);
  return base * f;
}

function outline(b: Blob, n = 40): [number, number][] {
  const pts: [number, number][] = [];
  const c = Math.cos(b.angle);
  const s = Math.sin(b.angle);
  for (let i = 0; i < n; i++) {
    const t = (2 * Math.PI * i) / n;
    const r = boundaryRadius(b, t);
    const u = r * Math.cos(t);
    const v = r * Math.sin(t);
    pts.push([Math.round((b.cx + u * c - v * s) * 10) / 10, Math.round((b.cy + u * s + v * c) * 10) / 10]);
  }
  return pts;
}

/** is point (x, y) inside the blob, scaled by `shrink` (<1 keeps puncta away from the edge) */
function inside(b: Blob, x: number, y: number, shrink = 1) {
  const dx = x - b.cx;
  const dy = y - b.cy;
  const c = Math.cos(b.angle);
  const s = Math.sin(b.angle);
  const u = dx * c + dy * s;
  const v = -dx * s + dy * c;
  const t = Math.atan2(v, u);
  return Math.hypot(u, v) <= boundaryRadius(b, t) * shrink;
}

function addSpot(img: Float64Array, w: number, h: number, x: number, y: number, sigma: number, amp: number) {
  const R = Math.ceil(3.5 * sigma);
  const i0 = Math.max(0, Math.floor(x - R));
  const i1 = Math.min(w - 1, Math.ceil(x + R));
  const j0 = Math.max(0, Math.floor(y - R));
  const j1 = Math.min(h - 1, Math.ceil(y + R));
  const k = -1 / (2 * sigma * sigma);
  for (let j = j0; j <= j1; j++) {
    const dy = j + 0.5 - y;
    for (let i = i0; i <= i1; i++) {
      const dx = i + 0.5 - x;
      img[j * w + i] += amp * Math.exp((dx * dx + dy * dy) * k);
    }
  }
}

export function synthField(p: SynthParams): SynthField {
  const params: Required<SynthParams> = { width: 512, height: 512, cells: [6, 10], puncta: [22, 34], ...p };
  const { width: w, height: h } = params;
  if (!(Number.isInteger(w) && w >= 64 && Number.isInteger(h) && h >= 64)) throw new RangeError(`field size must be integers ≥ 64, received ${w}×${h}`);
  if (!(params.sharedFraction >= 0 && params.sharedFraction <= 1)) throw new RangeError(`sharedFraction must be in [0, 1], received ${params.sharedFraction}`);
  const rng = new Rng(params.seed);

  // cells: rejection-sample non-overlapping blobs
  const want = rng.int(params.cells[0], params.cells[1]);
  const blobs: Blob[] = [];
  const scale = Math.min(w, h) / 512;
  for (let tries = 0; blobs.length < want && tries < 2000; tries++) {
    const rx = rng.range(34, 52) * scale;
    const ry = rng.range(26, 40) * scale;
    const margin = rx * 1.2 + 4;
    const b: Blob = {
      cx: rng.range(margin, w - margin),
      cy: rng.range(margin, h - margin),
      rx,
      ry,
      angle: rng.range(0, Math.PI),
      wob: [2, 3, 5].map((k) => ({ k, a: rng.range(0.02, 0.07), ph: rng.range(0, 2 * Math.PI) })),
    };
    if (blobs.every((o) => Math.hypot(o.cx - b.cx, o.cy - b.cy) > (Math.max(o.rx, o.ry) + Math.max(b.rx, b.ry)) * 1.2 + 6)) blobs.push(b);
  }

  // expected photon counts
  const e1 = new Float64Array(w * h);
  const e2 = new Float64Array(w * h);
  const gx = rng.range(0, 2 * Math.PI);
  const gy = rng.range(0, 2 * Math.PI);
  const gxs = Float64Array.from({ length: w }, (_, i) => Math.sin((i / w) * Math.PI + gx));
  const gys = Float64Array.from({ length: h }, (_, j) => Math.sin((j / h) * Math.PI + gy));
  for (let j = 0; j < h; j++) {
    for (let i = 0; i < w; i++) {
      const glow = 1 + 0.25 * gxs[i] * gys[j];
      e1[j * w + i] = 30 * glow;
      e2[j * w + i] = 40 * glow;
    }
  }
  const cells: SynthCell[] = [];
  blobs.forEach((b, ci) => {
    const cyto1 = rng.range(160, 260);
    const cyto2 = rng.range(140, 240);
    // the cytoplasm is exactly the pixels the outline covers (pixel-centre rule of shared/analysis/rasterize.ts)
    const pts = outline(b);
    const mask = new Uint8Array(w * h);
    fillPolygon(mask, w, h, pts);
    for (let p = 0; p < mask.length; p++) {
      if (mask[p]) {
        e1[p] += cyto1;
        e2[p] += cyto2;
      }
    }
    const n = rng.int(params.puncta[0], params.puncta[1]);
    let shared = 0;
    for (let k = 0; k < n; k++) {
      let x = 0;
      let y = 0;
      for (let t = 0; t < 100; t++) {
        x = b.cx + rng.range(-b.rx, b.rx);
        y = b.cy + rng.range(-b.rx, b.rx);
        if (inside(b, x, y, 0.85)) break;
      }
      const sigma = rng.range(1.3, 1.9);
      const a1 = rng.range(900, 2600);
      const a2 = rng.range(800, 2400);
      if (rng.u() < params.sharedFraction) {
        shared++;
        // co-localized: the same place in both channels, sub-pixel jitter
        addSpot(e1, w, h, x, y, sigma, a1);
        addSpot(e2, w, h, x + rng.range(-0.3, 0.3), y + rng.range(-0.3, 0.3), sigma, a2);
      } else if (rng.u() < 0.5) addSpot(e1, w, h, x, y, sigma, a1);
      else addSpot(e2, w, h, x, y, sigma, a2);
    }
    cells.push({ name: `Cell ${ci + 1}`, points: pts, puncta: n, sharedPuncta: shared });
  });

  // a few saturated pixels: one bright speck of debris outside every cell, clipping in both channels
  for (let t = 0; t < 500; t++) {
    const x = rng.range(8, w - 8);
    const y = rng.range(8, h - 8);
    if (blobs.every((b) => !inside(b, x, y, 1.25))) {
      addSpot(e1, w, h, x, y, 1.0, 130000);
      addSpot(e2, w, h, x, y, 1.0, 130000);
      break;
    }
  }

  // shot noise + read noise, clipped to 16 bits; offset 100 like a camera bias
  const ch1 = new Uint16Array(w * h);
  const ch2 = new Uint16Array(w * h);
  const sat = { ch1: 0, ch2: 0 };
  for (let p2 = 0; p2 < w * h; p2++) {
    const v1 = Math.round(100 + rng.poisson(e1[p2]) + 3 * rng.normal());
    const v2 = Math.round(100 + rng.poisson(e2[p2]) + 3 * rng.normal());
    ch1[p2] = v1 < 0 ? 0 : v1 > MAX ? MAX : v1;
    ch2[p2] = v2 < 0 ? 0 : v2 > MAX ? MAX : v2;
    if (ch1[p2] === MAX) sat.ch1++;
    if (ch2[p2] === MAX) sat.ch2++;
  }
  return { width: w, height: h, ch1, ch2, cells, saturated: sat, params };
}
