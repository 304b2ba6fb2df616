/**
 * Test helpers for runs: a minimal baseline TIFF writer (uncompressed, one 16-bit grey page per channel;
 * TIFF 6.0 specification, Adobe 1992, sections 2 and 8) and direct inserts of fields and cells.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import type { AppContext } from '../../server/context.js';
import { cells, fields, files, type CellGeometry } from '../../server/db/schema.js';
import { keyForSha } from '../../server/images/store.js';
import { Xoshiro128 } from '../../shared/analysis/prng.js';
import { tiffPages } from '../security/tiff.js';

/** A multi-page uncompressed 16-bit TIFF (one writer for the test suites: tests/security/tiff.ts). */
export function tiff16(width: number, height: number, pages: Uint16Array[]): Buffer {
  return tiffPages(width, height, pages);
}

/** Two correlated channels with blob structure plus seeded noise (values well below saturation). */
export function syntheticPair(width: number, height: number, seed: number): [Uint16Array, Uint16Array] {
  const rng = new Xoshiro128(seed);
  const a = new Uint16Array(width * height);
  const b = new Uint16Array(width * height);
  for (let y = 0; y < height; y++)
    for (let x = 0; x < width; x++) {
      const blob = 1500 * Math.exp(-(((x % 40) - 20) ** 2 + ((y % 40) - 20) ** 2) / 120);
      a[y * width + x] = Math.round(100 + blob + 300 * rng.nextFloat());
      b[y * width + x] = Math.round(80 + 0.7 * blob + 300 * rng.nextFloat());
    }
  return [a, b];
}

export interface FieldSpec {
  name: string;
  width: number;
  height: number;
  ch1: Uint16Array;
  ch2: Uint16Array;
  cells: { name?: string; role?: 'cell' | 'background'; geometry: CellGeometry }[];
  /** one two-page file (default) or two single-page files */
  split?: boolean;
  pixelSizeUm?: number | null;
}

/** Stores the TIFF(s) in ctx.store and inserts files, field and cells rows; returns ids and file paths. */
export async function addField(ctx: AppContext, coverslipId: number, spec: FieldSpec) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-runs-'));
  const bufs = spec.split ? [tiff16(spec.width, spec.height, [spec.ch1]), tiff16(spec.width, spec.height, [spec.ch2])] : [tiff16(spec.width, spec.height, [spec.ch1, spec.ch2])];
  const shas: string[] = [];
  const paths: string[] = [];
  for (const [i, buf] of bufs.entries()) {
    const sha = crypto.createHash('sha256').update(buf).digest('hex');
    const p = path.join(dir, `${spec.name}-${i}.tif`);
    fs.writeFileSync(p, buf);
    paths.push(p);
    const tmp = p + '.put';
    fs.copyFileSync(p, tmp);
    await ctx.store.putFile(keyForSha(sha), tmp);
    ctx.db.insert(files).values({ sha256: sha, size: buf.length, storeKey: keyForSha(sha), originalName: path.basename(p) }).onConflictDoNothing().run();
    shas.push(sha);
  }
  const f = ctx.db
    .insert(fields)
    .values({
      coverslipId,
      name: spec.name,
      file1Sha: shas[0],
      file2Sha: shas[spec.split ? 1 : 0],
      channel1: 1,
      channel2: spec.split ? 1 : 2,
      channelNames: [null, null],
      fileSize: bufs.reduce((a, b) => a + b.length, 0),
      width: spec.width,
      height: spec.height,
      bitDepth: 16,
      sampleFormat: 'uint',
      pixelSizeUm: spec.pixelSizeUm ?? null,
      facts: { ch1: { min: 0, max: 0, mean: 0, saturatedFraction: 0, plateauFraction: null }, ch2: { min: 0, max: 0, mean: 0, saturatedFraction: 0, plateauFraction: null } },
    })
    .returning()
    .get();
  const cellIds = spec.cells.map(
    (c, i) => ctx.db.insert(cells).values({ fieldId: f.id, name: c.name ?? `cell ${i + 1}`, role: c.role ?? 'cell', geometry: c.geometry }).returning().get().id,
  );
  return { fieldId: f.id, cellIds, paths, dir };
}

/** A grid of square-ish polygon and ellipse cells over a field. */
export function gridCells(width: number, height: number, n: number): FieldSpec['cells'] {
  const out: FieldSpec['cells'] = [];
  const cols = Math.ceil(Math.sqrt(n));
  const cw = width / cols;
  const ch = height / Math.ceil(n / cols);
  for (let i = 0; i < n; i++) {
    const x = (i % cols) * cw + 2;
    const y = Math.floor(i / cols) * ch + 2;
    if (i % 2 === 0) out.push({ geometry: { kind: 'polygon', points: [[x, y], [x + cw - 5, y + 1.3], [x + cw - 4, y + ch - 4], [x + 0.7, y + ch - 6]] } });
    else out.push({ geometry: { kind: 'ellipse', cx: x + cw / 2 - 2, cy: y + ch / 2 - 2, rx: cw / 2 - 3, ry: ch / 2 - 4 } });
  }
  return out;
}

/** Polls until the run leaves queued/running. */
export async function waitForRun(get: () => Promise<{ status: string }>, timeoutMs = 60_000) {
  const t0 = Date.now();
  for (;;) {
    const r = await get();
    if (r.status !== 'queued' && r.status !== 'running') return r;
    if (Date.now() - t0 > timeoutMs) throw new Error(`run still ${r.status} after ${timeoutMs} ms`);
    await new Promise((res) => setTimeout(res, 50));
  }
}
