/**
 * Automatic cell outlines and label-mask helpers. Pure TypeScript on typed arrays (no DOM, no Node APIs), so
 * the server decides and the browser could preview.
 *
 * Method (each step documented where it is implemented):
 * 1. Foreground = intensity strictly greater than a level. The level is given by the caller: manual, or
 *    `autoLevel`: the Otsu (1979) level (shared/analysis/otsu.ts; N. Otsu, "A threshold selection method from
 *    gray-level histograms", IEEE Trans. Syst. Man Cybern. 9:62–66, doi:10.1109/TSMC.1979.4310076) of the
 *    intensities clipped at their 99.5th percentile. Decided here: without the clip, a few saturated pixels or
 *    bright puncta dominate the between-class variance and the level separates them instead of the cells.
 * 2. Holes filled: background pixels not 8-connected to the image border become foreground (foreground uses
 *    4-connectivity, background 8-connectivity, the consistent pair of digital topology: Rosenfeld 1970,
 *    "Connectivity in digital pictures", J. ACM 17:146–160, doi:10.1145/321556.321570).
 * 3. Touching cells split by a marker-controlled watershed on the negated Euclidean distance transform.
 *    Distance transform: exact squared Euclidean distances by lower envelopes of parabolas, P. F. Felzenszwalb
 *    & D. P. Huttenlocher (2012), "Distance transforms of sampled functions", Theory of Computing 8:415–428,
 *    doi:10.4086/toc.2012.v008a019. Watershed: L. Vincent & P. Soille (1991), "Watersheds in digital spaces:
 *    an efficient algorithm based on immersion simulations", IEEE PAMI 13:583–598, doi:10.1109/34.87344,
 *    computed by priority-queue flooding from markers (F. Meyer 1994, "Topographic distance and watershed
 *    lines", Signal Processing 38:113–125, doi:10.1016/0165-1684(94)90060-4), without watershed lines: every
 *    foreground pixel joins the basin that reaches it first. Markers are the regional maxima of the distance
 *    within a square window of radius `seedDistance` (adjacent maxima merged into one marker).
 * 4. Objects below `minPixels` or above `maxPixels` are dropped.
 * 5. Each object becomes one polygon: its outer crack boundary (the pixel edges between the object and the
 *    rest), joined into one closed path (Hierholzer's Eulerian circuit) and with collinear vertices removed.
 *    Pixel centres never lie on pixel edges, so under the pixel-centre even-odd rule the polygon covers
 *    exactly the object's pixels (tested in tests/workspace/segment.test.ts).
 */

import { otsuThreshold } from './otsu';

/** Share of the brightest values clipped before the automatic (Otsu) level is computed. */
export const AUTO_LEVEL_CLIP = 0.995;

/**
 * Automatic foreground level: Otsu (1979) on the values clipped at their 99.5th percentile (see the module
 * comment). Integer data ≤ 65535 after clipping keeps the full integer histogram. NaN values are left out.
 * null when constant (or no value).
 */
export function autoLevel(input: ArrayLike<number>): number | null {
  // NaN pixels carry no intensity: they take no part in the percentile or the threshold
  let values = input;
  for (let i = 0; i < input.length; i++)
    if (input[i] !== input[i]) {
      values = Array.prototype.filter.call(input, (v: number) => v === v) as number[];
      break;
    }
  const n = values.length;
  if (n === 0) return null;
  const sorted = Float64Array.from(values).sort();
  const cap = sorted[Math.min(n - 1, Math.floor(AUTO_LEVEL_CLIP * n))];
  let integer = true;
  for (let i = 0; i < n && integer; i += Math.max(1, Math.floor(n / 4096))) if (!Number.isInteger(values[i]) || values[i] < 0) integer = false;
  if (integer && cap <= 65535 && sorted[0] >= 0) {
    const c = new Uint16Array(n);
    for (let i = 0; i < n; i++) c[i] = values[i] > cap ? cap : values[i];
    return otsuThreshold(c);
  }
  const c = new Float64Array(n);
  for (let i = 0; i < n; i++) c[i] = values[i] > cap ? cap : values[i];
  return otsuThreshold(c);
}

export interface SegmentOptions {
  /** foreground is value > level */
  level: number;
  fillHoles?: boolean;
  split?: boolean;
  /** watershed marker window radius in pixels (default 5) */
  seedDistance?: number;
  minPixels?: number;
  maxPixels?: number | null;
}

export interface SegmentObject {
  /** 1-based object number in the output label image */
  label: number;
  pixelCount: number;
  /** closed outline in image pixel coordinates (first point not repeated) */
  points: [number, number][];
}

export interface SegmentResult {
  objects: SegmentObject[];
  /** row-major label image of the kept objects (0 = none) */
  labels: Int32Array;
  /** objects found after splitting, before the size filter */
  found: number;
  droppedSmall: number;
  droppedLarge: number;
}

/** Checks width/height against an array length; throws a RangeError quoting the values. */
function checkShape(len: number, width: number, height: number) {
  if (!Number.isInteger(width) || !Number.isInteger(height) || width <= 0 || height <= 0) throw new RangeError(`image size must be positive integers, got ${width} × ${height}`);
  if (len !== width * height) throw new RangeError(`array length ${len} does not match ${width} × ${height}`);
}

/** Foreground mask: 1 where value > level (NaN is background). */
export function thresholdMask(values: ArrayLike<number>, level: number): Uint8Array {
  const n = values.length;
  const m = new Uint8Array(n);
  for (let i = 0; i < n; i++) m[i] = values[i] > level ? 1 : 0;
  return m;
}

/**
 * Fill holes in place: background pixels not 8-connected to the border become foreground.
 * Returns the mask for chaining.
 */
export function fillHoles(mask: Uint8Array, width: number, height: number): Uint8Array {
  checkShape(mask.length, width, height);
  const n = width * height;
  const seen = new Uint8Array(n);
  const stack = new Int32Array(n);
  let sp = 0;
  const push = (i: number) => {
    if (!mask[i] && !seen[i]) {
      seen[i] = 1;
      stack[sp++] = i;
    }
  };
  for (let x = 0; x < width; x++) {
    push(x);
    push((height - 1) * width + x);
  }
  for (let y = 0; y < height; y++) {
    push(y * width);
    push(y * width + width - 1);
  }
  while (sp > 0) {
    const i = stack[--sp];
    const x = i % width;
    const y = (i - x) / width;
    for (let dy = -1; dy <= 1; dy++) {
      const yy = y + dy;
      if (yy < 0 || yy >= height) continue;
      for (let dx = -1; dx <= 1; dx++) {
        const xx = x + dx;
        if (xx < 0 || xx >= width || (dx === 0 && dy === 0)) continue;
        push(yy * width + xx);
      }
    }
  }
  for (let i = 0; i < n; i++) if (!mask[i] && !seen[i]) mask[i] = 1;
  return mask;
}

/** 4-connected components of a mask; returns labels (1..count, 0 = background) and the count. */
export function connectedComponents(mask: Uint8Array, width: number, height: number): { labels: Int32Array; count: number } {
  checkShape(mask.length, width, height);
  const n = width * height;
  const labels = new Int32Array(n);
  const stack = new Int32Array(n);
  let count = 0;
  for (let s = 0; s < n; s++) {
    if (!mask[s] || labels[s]) continue;
    count++;
    let sp = 0;
    labels[s] = count;
    stack[sp++] = s;
    while (sp > 0) {
      const i = stack[--sp];
      const x = i % width;
      if (x > 0 && mask[i - 1] && !labels[i - 1]) (labels[i - 1] = count), (stack[sp++] = i - 1);
      if (x < width - 1 && mask[i + 1] && !labels[i + 1]) (labels[i + 1] = count), (stack[sp++] = i + 1);
      if (i >= width && mask[i - width] && !labels[i - width]) (labels[i - width] = count), (stack[sp++] = i - width);
      if (i + width < n && mask[i + width] && !labels[i + width]) (labels[i + width] = count), (stack[sp++] = i + width);
    }
  }
  return { labels, count };
}

const INF = 1e20;

/** 1-D squared distance transform of f (Felzenszwalb & Huttenlocher 2012, Algorithm 1). */
function dt1d(f: Float64Array, n: number, d: Float64Array, v: Int32Array, z: Float64Array) {
  let k = 0;
  v[0] = 0;
  z[0] = -INF;
  z[1] = INF;
  for (let q = 1; q < n; q++) {
    let s = (f[q] + q * q - (f[v[k]] + v[k] * v[k])) / (2 * q - 2 * v[k]);
    while (s <= z[k]) {
      k--;
      s = (f[q] + q * q - (f[v[k]] + v[k] * v[k])) / (2 * q - 2 * v[k]);
    }
    k++;
    v[k] = q;
    z[k] = s;
    z[k + 1] = INF;
  }
  k = 0;
  for (let q = 0; q < n; q++) {
    while (z[k + 1] < q) k++;
    const dq = q - v[k];
    d[q] = dq * dq + f[v[k]];
  }
}

/**
 * Exact squared Euclidean distance from each foreground pixel to the nearest background pixel (0 on the
 * background). Pixels outside the image count as background, so objects touching the border keep finite
 * distances. Felzenszwalb & Huttenlocher (2012): rows, then columns.
 */
export function squaredDistanceTransform(mask: Uint8Array, width: number, height: number): Float64Array {
  checkShape(mask.length, width, height);
  // pad by one pixel of background on every side
  const W = width + 2;
  const H = height + 2;
  const g = new Float64Array(W * H);
  for (let y = 0; y < H; y++)
    for (let x = 0; x < W; x++) {
      const inside = x > 0 && y > 0 && x <= width && y <= height && mask[(y - 1) * width + (x - 1)];
      g[y * W + x] = inside ? INF : 0;
    }
  const L = Math.max(W, H);
  const f = new Float64Array(L);
  const d = new Float64Array(L);
  const v = new Int32Array(L);
  const z = new Float64Array(L + 1);
  for (let x = 0; x < W; x++) {
    for (let y = 0; y < H; y++) f[y] = g[y * W + x];
    dt1d(f, H, d, v, z);
    for (let y = 0; y < H; y++) g[y * W + x] = d[y];
  }
  for (let y = 0; y < H; y++) {
    for (let x = 0; x < W; x++) f[x] = g[y * W + x];
    dt1d(f, W, d, v, z);
    for (let x = 0; x < W; x++) g[y * W + x] = d[x];
  }
  const out = new Float64Array(width * height);
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) out[y * width + x] = g[(y + 1) * W + (x + 1)];
  return out;
}

/** Binary max-heap on (priority, insertion order) used by the flooding. */
class FloodQueue {
  private pri: Float64Array;
  private ord: Float64Array;
  private idx: Int32Array;
  size = 0;
  private counter = 0;
  constructor(cap: number) {
    this.pri = new Float64Array(cap);
    this.ord = new Float64Array(cap);
    this.idx = new Int32Array(cap);
  }
  private before(a: number, b: number) {
    // higher priority first; equal priority: first in, first out
    return this.pri[a] > this.pri[b] || (this.pri[a] === this.pri[b] && this.ord[a] < this.ord[b]);
  }
  private swap(a: number, b: number) {
    const p = this.pri[a], o = this.ord[a], i = this.idx[a];
    this.pri[a] = this.pri[b]; this.ord[a] = this.ord[b]; this.idx[a] = this.idx[b];
    this.pri[b] = p; this.ord[b] = o; this.idx[b] = i;
  }
  push(i: number, p: number) {
    let k = this.size++;
    this.pri[k] = p;
    this.ord[k] = this.counter++;
    this.idx[k] = i;
    while (k > 0) {
      const parent = (k - 1) >> 1;
      if (!this.before(k, parent)) break;
      this.swap(k, parent);
      k = parent;
    }
  }
  pop(): number {
    const top = this.idx[0];
    this.size--;
    if (this.size > 0) {
      this.pri[0] = this.pri[this.size]; this.ord[0] = this.ord[this.size]; this.idx[0] = this.idx[this.size];
      let k = 0;
      for (;;) {
        const l = 2 * k + 1, r = l + 1;
        let m = k;
        if (l < this.size && this.before(l, m)) m = l;
        if (r < this.size && this.before(r, m)) m = r;
        if (m === k) break;
        this.swap(k, m);
        k = m;
      }
    }
    return top;
  }
}

/**
 * Split touching objects: marker-controlled watershed of the negated distance transform inside the mask.
 * Returns labels 1..count over the mask (every foreground pixel labelled).
 */
export function watershedSplit(mask: Uint8Array, width: number, height: number, seedDistance = 5): { labels: Int32Array; count: number } {
  checkShape(mask.length, width, height);
  if (!(seedDistance >= 1)) throw new RangeError(`seedDistance must be ≥ 1, got ${seedDistance}`);
  const n = width * height;
  const dist = squaredDistanceTransform(mask, width, height);
  const r = Math.max(1, Math.round(seedDistance));
  // window maximum by two separable passes (rows, then columns)
  const rowMax = new Float64Array(n);
  for (let y = 0; y < height; y++) {
    const o = y * width;
    for (let x = 0; x < width; x++) {
      let m = 0;
      const a = Math.max(0, x - r), b = Math.min(width - 1, x + r);
      for (let xx = a; xx <= b; xx++) if (dist[o + xx] > m) m = dist[o + xx];
      rowMax[o + x] = m;
    }
  }
  const isPeak = new Uint8Array(n);
  for (let x = 0; x < width; x++) {
    for (let y = 0; y < height; y++) {
      const i = y * width + x;
      if (!mask[i]) continue;
      let m = 0;
      const a = Math.max(0, y - r), b = Math.min(height - 1, y + r);
      for (let yy = a; yy <= b; yy++) if (rowMax[yy * width + x] > m) m = rowMax[yy * width + x];
      if (dist[i] >= m) isPeak[i] = 1;
    }
  }
  // merge 8-adjacent peak pixels into one marker
  const labels = new Int32Array(n);
  const stack = new Int32Array(n);
  let count = 0;
  for (let s = 0; s < n; s++) {
    if (!isPeak[s] || labels[s]) continue;
    count++;
    let sp = 0;
    labels[s] = count;
    stack[sp++] = s;
    while (sp > 0) {
      const i = stack[--sp];
      const x = i % width, y = (i - x) / width;
      for (let dy = -1; dy <= 1; dy++)
        for (let dx = -1; dx <= 1; dx++) {
          const xx = x + dx, yy = y + dy;
          if (xx < 0 || yy < 0 || xx >= width || yy >= height) continue;
          const j = yy * width + xx;
          if (isPeak[j] && !labels[j]) (labels[j] = count), (stack[sp++] = j);
        }
    }
  }
  // every 4-connected object gets at least one marker (its distance maximum)
  const cc = connectedComponents(mask, width, height);
  const hasMarker = new Uint8Array(cc.count + 1);
  const best = new Int32Array(cc.count + 1).fill(-1);
  for (let i = 0; i < n; i++) {
    const c = cc.labels[i];
    if (!c) continue;
    if (labels[i]) hasMarker[c] = 1;
    if (best[c] < 0 || dist[i] > dist[best[c]]) best[c] = i;
  }
  for (let c = 1; c <= cc.count; c++) if (!hasMarker[c] && best[c] >= 0) labels[best[c]] = ++count;
  // flooding: pixels leave the queue in order of decreasing distance (increasing elevation −distance)
  const q = new FloodQueue(n + 1);
  const queued = new Uint8Array(n);
  const visit = (j: number) => {
    if (!mask[j] || labels[j] || queued[j]) return;
    queued[j] = 1;
    q.push(j, dist[j]);
  };
  const enqueueNeighbours = (i: number) => {
    const x = i % width;
    if (x > 0) visit(i - 1);
    if (x < width - 1) visit(i + 1);
    if (i >= width) visit(i - width);
    if (i + width < n) visit(i + width);
  };
  for (let i = 0; i < n; i++) if (labels[i]) enqueueNeighbours(i);
  while (q.size > 0) {
    const i = q.pop();
    // join the basin of a labelled 4-neighbour (the one with the greatest distance: the upstream side)
    const x = i % width;
    let lab = 0, bestD = -1;
    if (x > 0 && labels[i - 1] && dist[i - 1] > bestD) (bestD = dist[i - 1]), (lab = labels[i - 1]);
    if (x < width - 1 && labels[i + 1] && dist[i + 1] > bestD) (bestD = dist[i + 1]), (lab = labels[i + 1]);
    if (i >= width && labels[i - width] && dist[i - width] > bestD) (bestD = dist[i - width]), (lab = labels[i - width]);
    if (i + width < n && labels[i + width] && dist[i + width] > bestD) (bestD = dist[i + width]), (lab = labels[i + width]);
    labels[i] = lab;
    enqueueNeighbours(i);
  }
  return { labels, count };
}

/**
 * Outline of a pixel set as one closed polygon along pixel edges. `inside(x, y)` says whether pixel (x, y)
 * belongs; the set should be 4-connected without holes for the polygon to be simple, but any set gives a
 * polygon whose even-odd interior holds exactly the set's pixel centres when its boundary is connected.
 * Returns null for an empty set.
 */
export function traceOutline(inside: (x: number, y: number) => boolean, x0: number, y0: number, x1: number, y1: number): [number, number][] | null {
  // directed boundary edges with the inside on the left (y down: clockwise on screen)
  // vertex id = vy * (W+1) + vx over the box [x0, x1] × [y0, y1] (x1, y1 exclusive pixel bounds)
  const W = x1 - x0;
  const VW = W + 1;
  const out = new Map<number, number[]>();
  let edges = 0;
  const add = (ax: number, ay: number, bx: number, by: number) => {
    const a = (ay - y0) * VW + (ax - x0);
    const b = (by - y0) * VW + (bx - x0);
    const l = out.get(a);
    if (l) l.push(b);
    else out.set(a, [b]);
    edges++;
  };
  for (let y = y0; y < y1; y++)
    for (let x = x0; x < x1; x++) {
      if (!inside(x, y)) continue;
      if (y === y0 || !inside(x, y - 1)) add(x, y, x + 1, y); // top edge, left→right
      if (x === x1 - 1 || !inside(x + 1, y)) add(x + 1, y, x + 1, y + 1); // right edge, down
      if (y === y1 - 1 || !inside(x, y + 1)) add(x + 1, y + 1, x, y + 1); // bottom edge, right→left
      if (x === x0 || !inside(x - 1, y)) add(x, y + 1, x, y); // left edge, up
    }
  if (edges === 0) return null;
  // Hierholzer: one closed walk using every edge once
  const start = out.keys().next().value as number;
  const stack = [start];
  const circuit: number[] = [];
  while (stack.length) {
    const v = stack[stack.length - 1];
    const l = out.get(v);
    if (l && l.length) stack.push(l.pop()!);
    else circuit.push(stack.pop()!);
  }
  circuit.reverse();
  circuit.pop(); // closing vertex repeats the first
  const pts: [number, number][] = circuit.map((v) => [x0 + (v % VW), y0 + Math.floor(v / VW)]);
  return dropCollinear(pts);
}

/** Removes vertices lying on the straight line between their neighbours (closed polygon). */
export function dropCollinear(pts: [number, number][]): [number, number][] {
  if (pts.length <= 3) return pts;
  let cur = pts;
  for (let pass = 0; pass < 2; pass++) {
    const res: [number, number][] = [];
    const m = cur.length;
    for (let i = 0; i < m; i++) {
      const p = cur[(i - 1 + m) % m], c = cur[i], nx = cur[(i + 1) % m];
      const cross = (c[0] - p[0]) * (nx[1] - c[1]) - (c[1] - p[1]) * (nx[0] - c[0]);
      const dot = (c[0] - p[0]) * (nx[0] - c[0]) + (c[1] - p[1]) * (nx[1] - c[1]);
      if (cross === 0 && dot > 0) continue;
      res.push(c);
    }
    if (res.length === cur.length || res.length < 3) return res.length < 3 ? cur : res;
    cur = res;
  }
  return cur;
}

/**
 * Automatic outlines of one intensity image. See the module comment for the method and its sources.
 */
export function segmentCells(values: ArrayLike<number>, width: number, height: number, opts: SegmentOptions): SegmentResult {
  checkShape(values.length, width, height);
  if (!Number.isFinite(opts.level)) throw new RangeError(`threshold level must be a finite number, got ${opts.level}`);
  const minPixels = opts.minPixels ?? 1;
  const maxPixels = opts.maxPixels ?? Infinity;
  const n = width * height;
  const mask = thresholdMask(values, opts.level);
  if (opts.fillHoles !== false) fillHoles(mask, width, height);
  const split = opts.split !== false ? watershedSplit(mask, width, height, opts.seedDistance ?? 5) : connectedComponents(mask, width, height);
  const { labels: raw, count } = split;
  // bounding boxes and sizes per raw label
  const minX = new Int32Array(count + 1).fill(width), minY = new Int32Array(count + 1).fill(height);
  const maxX = new Int32Array(count + 1).fill(-1), maxY = new Int32Array(count + 1).fill(-1);
  for (let i = 0; i < n; i++) {
    const l = raw[i];
    if (!l) continue;
    const x = i % width, y = (i - x) / width;
    if (x < minX[l]) minX[l] = x;
    if (x > maxX[l]) maxX[l] = x;
    if (y < minY[l]) minY[l] = y;
    if (y > maxY[l]) maxY[l] = y;
  }
  const out = new Int32Array(n);
  const objects: SegmentObject[] = [];
  let found = 0, droppedSmall = 0, droppedLarge = 0;
  for (let l = 1; l <= count; l++) {
    if (maxX[l] < 0) continue;
    // the object: the largest 4-connected part of the basin, holes filled, inside its bounding box
    const bw = maxX[l] - minX[l] + 1, bh = maxY[l] - minY[l] + 1;
    const sub = new Uint8Array(bw * bh);
    for (let y = 0; y < bh; y++) for (let x = 0; x < bw; x++) sub[y * bw + x] = raw[(y + minY[l]) * width + x + minX[l]] === l ? 1 : 0;
    const cc = connectedComponents(sub, bw, bh);
    if (cc.count > 1) {
      const sizes = new Int32Array(cc.count + 1);
      for (let i = 0; i < sub.length; i++) sizes[cc.labels[i]]++;
      let keep = 1;
      for (let c = 2; c <= cc.count; c++) if (sizes[c] > sizes[keep]) keep = c;
      for (let i = 0; i < sub.length; i++) sub[i] = cc.labels[i] === keep ? 1 : 0;
    }
    fillHoles(sub, bw, bh);
    let size = 0;
    for (let i = 0; i < sub.length; i++) size += sub[i];
    found++;
    if (size < minPixels) {
      droppedSmall++;
      continue;
    }
    if (size > maxPixels) {
      droppedLarge++;
      continue;
    }
    const label = objects.length + 1;
    for (let y = 0; y < bh; y++) for (let x = 0; x < bw; x++) if (sub[y * bw + x]) out[(y + minY[l]) * width + x + minX[l]] = label;
    const ox = minX[l], oy = minY[l];
    const points = traceOutline((x, y) => sub[(y - oy) * bw + (x - ox)] === 1, ox, oy, ox + bw, oy + bh)!;
    objects.push({ label, pixelCount: size, points });
  }
  return { objects, labels: out, found, droppedSmall, droppedLarge };
}
