/**
 * Field previews with sharp: channel 1 in green and channel 2 in magenta (red + blue), a combination that
 * stays distinguishable for the common red–green colour-vision deficiencies (Wong 2011, Nat. Methods 8:441,
 * doi:10.1038/nmeth.1618), or one channel in grey. Display range per channel from percentiles (default
 * 0.1–99.9 %, nearest-rank on the full-resolution slice) or given by the caller.
 *
 * Large fields: a pyramid of 2×2 mean-binned levels (cached in memory) is used when the requested `max`
 * side is at most half the field's; fields of 4096 px or more on a side default to max=2048.
 * Rendered PNGs are cached on disk under DATA_DIR/cache/previews by content hash + parameters.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import sharp from 'sharp';
import type { AppContext } from '../context.js';
import type { PreviewQuery } from '../../shared/schemas/fields.js';
import type { PixelArray } from './decode.js';
import { histogramOf } from './facts.js';
import { loadFieldStack, selectZ, type FieldRow } from './intake.js';

const PREVIEW_VERSION = 1;
export const LARGE_FIELD = 4096;
export const LARGE_FIELD_DEFAULT_MAX = 2048;

export interface DisplayRange {
  lo: number;
  hi: number;
}

/** Nearest-rank percentiles (common practice) of one channel; histogram for 8/16-bit, sorted sample otherwise (NaN left out). */
export function percentiles(a: PixelArray, ps: number[]): number[] {
  const n = a.length;
  if (n === 0) return ps.map(() => 0);
  const rank = (p: number, m: number) => Math.min(m - 1, Math.max(0, Math.ceil((p / 100) * m) - 1));
  if (a instanceof Uint8Array || a instanceof Uint16Array) {
    const hist = histogramOf(a);
    return ps.map((p) => {
      const r = rank(p, n);
      let c = 0;
      for (let v = 0; v < hist.length; v++) {
        c += hist[v];
        if (c > r) return v;
      }
      return hist.length - 1;
    });
  }
  const step = Math.max(1, Math.floor(n / 1_000_000));
  const sample = new Float64Array(Math.ceil(n / step));
  let k = 0;
  for (let i = 0; i < n; i += step) if (a[i] === a[i]) sample[k++] = a[i]; // NaN carries no intensity
  if (k === 0) return ps.map(() => 0);
  const s = sample.subarray(0, k).sort();
  return ps.map((p) => s[rank(p, k)]);
}

/** 2×2 mean binning (odd edges averaged over what exists). */
export function binHalf(a: ArrayLike<number>, w: number, h: number): { data: Float32Array; width: number; height: number } {
  const W = Math.ceil(w / 2);
  const H = Math.ceil(h / 2);
  const out = new Float32Array(W * H);
  for (let y = 0; y < H; y++) {
    const y0 = 2 * y;
    const y1 = Math.min(h - 1, y0 + 1);
    for (let x = 0; x < W; x++) {
      const x0 = 2 * x;
      const x1 = Math.min(w - 1, x0 + 1);
      out[y * W + x] = (a[y0 * w + x0] + a[y0 * w + x1] + a[y1 * w + x0] + a[y1 * w + x1]) / 4;
    }
  }
  return { data: out, width: W, height: H };
}

const pctCache = new Map<string, number[]>();
const levelCache = new Map<string, { data: ArrayLike<number>; width: number; height: number }>();
function level(key: string, base: ArrayLike<number>, w: number, h: number, k: number) {
  if (k === 0) return { data: base, width: w, height: h };
  const ck = `${key}:${k}`;
  const hit = levelCache.get(ck);
  if (hit) return hit;
  const prev = level(key, base, w, h, k - 1);
  const next = binHalf(prev.data, prev.width, prev.height);
  levelCache.set(ck, next);
  while (levelCache.size > 32) levelCache.delete(levelCache.keys().next().value!);
  return next;
}

/** Maps values to 0..255 bytes through a display range, writing every `stride`-th byte from `offset`. */
function toByte(a: ArrayLike<number>, r: DisplayRange, out: Uint8Array, stride: number, offset: number) {
  const lo = r.lo;
  const span = r.hi - r.lo;
  const scale = span > 0 ? 255 / span : 0;
  const n = a.length;
  if (span > 0) {
    for (let i = 0, j = offset; i < n; i++, j += stride) {
      const v = (a[i] - lo) * scale + 0.5;
      out[j] = v <= 0 ? 0 : v >= 255 ? 255 : v; // Uint8Array stores truncate toward zero
    }
  } else {
    for (let i = 0, j = offset; i < n; i++, j += stride) out[j] = a[i] > lo ? 255 : 0;
  }
}

export interface PreviewResult {
  png: Buffer;
  width: number;
  height: number;
  ranges: [DisplayRange, DisplayRange];
  cached: boolean;
}

function cacheDir(ctx: AppContext) {
  return path.join(ctx.env.DATA_DIR, 'cache', 'previews');
}

/** Renders (or returns from the disk cache) a preview PNG of a field. */
export async function renderPreview(ctx: AppContext, f: FieldRow, q: PreviewQuery): Promise<PreviewResult> {
  const view = q.view ?? 'composite';
  const side = Math.max(f.width, f.height);
  const max = q.max ?? (side >= LARGE_FIELD ? LARGE_FIELD_DEFAULT_MAX : undefined);
  const params = { v: PREVIEW_VERSION, f1: f.file1Sha, c1: f.channel1, f2: f.file2Sha, c2: f.channel2, view, z: q.z ?? null, lo1: q.lo1, hi1: q.hi1, lo2: q.lo2, hi2: q.hi2, plo: q.plo ?? 0.1, phi: q.phi ?? 99.9, max: max ?? null };
  const key = crypto.createHash('sha256').update(JSON.stringify(params)).digest('hex');
  const dir = cacheDir(ctx);
  const file = path.join(dir, `${key}.png`);
  const meta = path.join(dir, `${key}.json`);
  if (fs.existsSync(file) && fs.existsSync(meta)) {
    try {
      const m = JSON.parse(await fsp.readFile(meta, 'utf8'));
      return { png: await fsp.readFile(file), width: m.width, height: m.height, ranges: m.ranges, cached: true };
    } catch {
      /* re-render below */
    }
  }
  const stack = await loadFieldStack(ctx, f);
  const sel = selectZ(stack, q.z);
  const plo = q.plo ?? 0.1;
  const phi = q.phi ?? 99.9;
  const range = (a: PixelArray, lo: number | undefined, hi: number | undefined, key: string): DisplayRange => {
    if (lo !== undefined && hi !== undefined) return { lo, hi };
    let pc = pctCache.get(key);
    if (!pc) {
      pc = percentiles(a, [plo, phi]);
      pctCache.set(key, pc);
      while (pctCache.size > 256) pctCache.delete(pctCache.keys().next().value!);
    }
    return { lo: lo ?? pc[0], hi: hi ?? pc[1] };
  };
  const zk = `${f.file1Sha}:${f.channel1}|${f.file2Sha}:${f.channel2}|${JSON.stringify(sel.z)}|${plo}|${phi}`;
  const r1 = range(sel.ch1, q.lo1, q.hi1, `${zk}|1`);
  const r2 = range(sel.ch2, q.lo2, q.hi2, `${zk}|2`);
  // pyramid level: the largest power-of-two reduction that still leaves at least `max` pixels on the long side
  let k = 0;
  if (max && side > max) k = Math.max(0, Math.floor(Math.log2(side / max)));
  const zKey = `${f.file1Sha}:${f.channel1}|${f.file2Sha}:${f.channel2}|${JSON.stringify(sel.z)}`;
  const l1 = view === 'ch2' ? null : level(`${zKey}|1`, sel.ch1, stack.width, stack.height, k);
  const l2 = view === 'ch1' ? null : level(`${zKey}|2`, sel.ch2, stack.width, stack.height, k);
  const lw = (l1 ?? l2)!.width;
  const lh = (l1 ?? l2)!.height;
  let raw: Uint8Array;
  let channels: 1 | 3;
  if (view === 'composite') {
    channels = 3;
    raw = new Uint8Array(lw * lh * 3);
    toByte(l1!.data, r1, raw, 3, 1); // green
    toByte(l2!.data, r2, raw, 3, 0); // magenta = red + blue
    for (let j = 0; j < raw.length; j += 3) raw[j + 2] = raw[j];
  } else {
    channels = 1;
    raw = new Uint8Array(lw * lh);
    toByte(view === 'ch1' ? l1!.data : l2!.data, view === 'ch1' ? r1 : r2, raw, 1, 0);
  }
  let img = sharp(raw, { raw: { width: lw, height: lh, channels } });
  let outW = lw;
  let outH = lh;
  if (max && Math.max(lw, lh) > max) {
    const s = max / Math.max(lw, lh);
    outW = Math.max(1, Math.round(lw * s));
    outH = Math.max(1, Math.round(lh * s));
    img = img.resize(outW, outH, { kernel: 'lanczos3', fit: 'fill' });
  }
  if (channels === 1) img = img.toColourspace('b-w');
  const png = await img.png({ compressionLevel: 1, adaptiveFiltering: false }).toBuffer();
  const ranges: [DisplayRange, DisplayRange] = [r1, r2];
  await fsp.mkdir(dir, { recursive: true });
  const tmp = `${file}.${process.pid}.${crypto.randomUUID()}.part`;
  await fsp.writeFile(tmp, png);
  await fsp.writeFile(`${tmp}.json`, JSON.stringify({ width: outW, height: outH, ranges }));
  await fsp.rename(`${tmp}.json`, meta);
  await fsp.rename(tmp, file);
  if (++writesSincePrune >= 50) {
    writesSincePrune = 0;
    void prunePreviewCache(dir).catch(() => {});
  }
  return { png, width: outW, height: outH, ranges, cached: false };
}

/** The disk cache is kept under PREVIEW_CACHE_BYTES by deleting the least recently written previews. */
export const PREVIEW_CACHE_BYTES = 1024 ** 3;
let writesSincePrune = 0;
export async function prunePreviewCache(dir: string, limit = PREVIEW_CACHE_BYTES) {
  const entries: { p: string; size: number; t: number }[] = [];
  for (const name of await fsp.readdir(dir)) {
    if (!name.endsWith('.png')) continue;
    const st = await fsp.stat(path.join(dir, name)).catch(() => null);
    if (st) entries.push({ p: path.join(dir, name), size: st.size, t: st.mtimeMs });
  }
  let total = entries.reduce((a, e) => a + e.size, 0);
  entries.sort((a, b) => a.t - b.t);
  for (const e of entries) {
    if (total <= limit) break;
    await fsp.rm(e.p, { force: true });
    await fsp.rm(e.p.replace(/\.png$/, '.json'), { force: true });
    total -= e.size;
  }
}

/**
 * Composite PNG of a field by id (reports embed it): channel 1 green, channel 2 magenta, default
 * 0.1–99.9 % display ranges unless given. Does not check permissions (callers do).
 */
export async function renderCompositePng(ctx: AppContext, fieldId: number, opts: Partial<PreviewQuery> = {}): Promise<Buffer> {
  const { loadFieldRow } = await import('./intake.js');
  const f = await loadFieldRow(ctx.db, fieldId);
  return (await renderPreview(ctx, f, { ...opts, view: 'composite' })).png;
}
