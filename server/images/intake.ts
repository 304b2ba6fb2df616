/**
 * Field intake and pixel loading: the one path by which image files become fields (upload route, demo
 * seed) and by which analysis reads a field's pixels back (runs, cells, compare, reports).
 *
 * Order that loses nothing: check (bounded header reads) → decode → facts → SHA-256 → move into the
 * content-addressed store → write `files` + `fields` (+ audit) rows in ONE transaction. On any failure the
 * store objects this call created are removed again and no row is written.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import { eq } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import type { Db } from '../db/client.js';
import { auditEvents, conditions, coverslips, fields, files } from '../db/schema.js';
import { HttpError } from '../http/errors.js';
import { maxRepresentable, type PixelArray } from './decode.js';
import { decodePoolOf } from './decode-pool.js';
import { decodeSources, type DecodedStack } from './sources.js';
import { channelFacts, hasValue } from './facts.js';
import { concatSlices, project } from './projection.js';
import { ImageInputError } from './errors.js';
import { keyForSha } from './store.js';

export type FieldRow = typeof fields.$inferSelect;

export interface IngestSource {
  /** a local file (an upload's temp file, or a seed file) */
  path: string;
  originalName: string;
  /** 1-based channel inside that file */
  channel: number;
  /** SHA-256 hex if already computed while streaming */
  sha256?: string;
}

export interface IngestRequest {
  coverslipId: number;
  userId: number | null;
  name: string;
  /** two entries (channel 1, channel 2); the same path twice for one multi-channel file */
  sources: IngestSource[];
  /** the instrument that recorded the field (checked to exist by the caller), or none */
  instrumentId?: number | null;
  /** µm per pixel when the files carry none (a pixel size in the files is kept; also a sample sheet's pixel_size_um) */
  pixelSizeUm?: number | null;
  /** µm between z slices when the files carry none (kept from the files when they state it; ignored for a single plane) */
  zStepUm?: number | null;
}

export interface IngestOptions {
  /** move the source files into the store (upload temp files) instead of copying them (default: copy) */
  moveSources?: boolean;
}

/** SHA-256 of a file, streamed (never the whole file in memory). */
export async function sha256File(p: string): Promise<string> {
  const h = crypto.createHash('sha256');
  await pipeline(fs.createReadStream(p), h);
  return h.digest('hex');
}

/** Shas being ingested right now: a concurrent field delete must not remove their store objects. */
export const inFlightShas = new Map<string, number>();
const hold = (s: string) => inFlightShas.set(s, (inFlightShas.get(s) ?? 0) + 1);
const release = (s: string) => {
  const n = (inFlightShas.get(s) ?? 1) - 1;
  if (n <= 0) inFlightShas.delete(s);
  else inFlightShas.set(s, n);
};

/**
 * Turns one or two local TIFF files into a field on a coverslip. Does not check permissions (callers do).
 * Throws ImageInputError (4xx) for bad files, HttpError 404 for an unknown coverslip.
 */
export async function ingestField(ctx: AppContext, req: IngestRequest, opts: IngestOptions = {}): Promise<FieldRow> {
  const cs = ctx.db.select().from(coverslips).where(eq(coverslips.id, req.coverslipId)).get();
  if (!cs) throw new HttpError(404, `no coverslip with id ${req.coverslipId}`);
  const name = String(req.name ?? '').trim().slice(0, 200) || path.parse(req.sources[0]?.originalName ?? 'field').name;
  // every check and the decode run in the decoding thread (heap and time limits); bad files → ImageInputError
  const stack = await decodePoolOf(ctx).readSources(req.sources.map((s) => ({ input: s.path, originalName: s.originalName, channel: s.channel })));
  const [s1, s2] = req.sources;
  const same = s1.path === s2.path;
  const maxV = maxRepresentable(stack.bitDepth, stack.sampleFormat);
  const facts = { ch1: channelFacts(stack.ch1, maxV), ch2: channelFacts(stack.ch2, maxV) };
  for (const [k, ch] of [[1, stack.ch1], [2, stack.ch2]] as const)
    if (!hasValue(ch))
      throw new ImageInputError(`channel ${k} holds no intensity: all ${stack.width * stack.height * ch.length} of its pixels are NaN`);

  // hash and store each distinct file
  const distinct = same ? [s1] : [s1, s2];
  const shas: string[] = [];
  const sizes: number[] = [];
  for (const s of distinct) {
    shas.push(s.sha256 ?? (await sha256File(s.path)));
    sizes.push((await fsp.stat(s.path)).size);
  }
  const created: string[] = [];
  shas.forEach(hold);
  try {
    for (let i = 0; i < distinct.length; i++) {
      const key = keyForSha(shas[i]);
      if (await ctx.store.has(key)) {
        if (opts.moveSources) await fsp.rm(distinct[i].path, { force: true });
        continue;
      }
      let src = distinct[i].path;
      if (!opts.moveSources) {
        const tmpDir = path.join(ctx.env.DATA_DIR, 'tmp');
        await fsp.mkdir(tmpDir, { recursive: true });
        src = path.join(tmpDir, `copy-${crypto.randomUUID()}.tif`);
        await fsp.copyFile(distinct[i].path, src);
      }
      await ctx.store.putFile(key, src);
      created.push(key);
    }
    const sha1 = shas[0];
    const sha2 = same ? shas[0] : shas[1];
    const study = ctx.db
      .select({ studyId: conditions.studyId })
      .from(conditions)
      .where(eq(conditions.id, cs.conditionId))
      .get();
    const row = ctx.db.transaction((tx) => {
      for (let i = 0; i < distinct.length; i++) {
        tx.insert(files)
          .values({ sha256: shas[i], size: sizes[i], storeKey: keyForSha(shas[i]), originalName: distinct[i].originalName.slice(0, 500), mime: 'image/tiff' })
          .onConflictDoNothing()
          .run();
      }
      const names: [string | null, string | null] = [stack.info1.channels[s1.channel - 1]?.name ?? null, stack.info2.channels[s2.channel - 1]?.name ?? null];
      const f = tx
        .insert(fields)
        .values({
          coverslipId: req.coverslipId,
          name,
          file1Sha: sha1,
          file2Sha: sha2,
          channel1: s1.channel,
          channel2: s2.channel,
          channelNames: names,
          fileSize: sizes.reduce((a, b) => a + b, 0),
          width: stack.width,
          height: stack.height,
          sizeZ: stack.sizeZ,
          bitDepth: stack.bitDepth,
          sampleFormat: stack.sampleFormat,
          pixelSizeUm: stack.info1.pixelSizeUm ?? stack.info2.pixelSizeUm ?? req.pixelSizeUm ?? null,
          zStepUm: stack.sizeZ > 1 ? (stack.info1.zStepUm ?? stack.info2.zStepUm ?? req.zStepUm ?? null) : null,
          facts,
          instrumentId: req.instrumentId ?? null,
          uploadedBy: req.userId ?? null,
        })
        .returning()
        .get();
      tx.insert(auditEvents)
        .values({
          actorId: req.userId ?? null,
          action: 'field.create',
          entity: 'field',
          entityId: f.id,
          studyId: study?.studyId ?? null,
          details: { name, coverslipId: req.coverslipId, files: distinct.map((s, i) => ({ name: s.originalName, sha256: shas[i] })), channels: [s1.channel, s2.channel] },
        })
        .run();
      return f;
    });
    cachePut(row.id, stackKey(row), stack);
    return row;
  } catch (e) {
    for (const key of created) {
      const sha = key.split('/')[1].replace(/\.tif$/, '');
      const referenced = ctx.db.select({ s: files.sha256 }).from(files).where(eq(files.sha256, sha)).get();
      if (!referenced && (inFlightShas.get(sha) ?? 0) <= 1) await ctx.store.delete(key).catch(() => {});
    }
    throw e;
  } finally {
    shas.forEach(release);
  }
}

// ---------------------------------------------------------------- loading pixels back

/** Small in-memory cache of decoded stacks (most recently used first), bounded by bytes. */
const CACHE_BYTES = 384 * 1024 * 1024;
const cache = new Map<string, DecodedStack>();
const stackKey = (f: Pick<FieldRow, 'file1Sha' | 'file2Sha' | 'channel1' | 'channel2'>) => `${f.file1Sha}:${f.channel1}|${f.file2Sha}:${f.channel2}`;
const stackBytes = (s: DecodedStack) => s.ch1.concat(s.ch2).reduce((a, b) => a + b.byteLength, 0);
function cachePut(_id: number, key: string, s: DecodedStack) {
  cache.delete(key);
  if (stackBytes(s) > CACHE_BYTES / 2) return;
  cache.set(key, s);
  let total = 0;
  for (const v of cache.values()) total += stackBytes(v);
  for (const k of cache.keys()) {
    if (total <= CACHE_BYTES) break;
    const v = cache.get(k)!;
    cache.delete(k);
    total -= stackBytes(v);
  }
}
function cacheGet(key: string) {
  const s = cache.get(key);
  if (s) {
    cache.delete(key);
    cache.set(key, s);
  }
  return s;
}
/** Drops every cached stack (tests, memory pressure). */
export function clearPixelCache() {
  cache.clear();
}

export async function loadFieldRow(db: Db, fieldId: number): Promise<FieldRow> {
  const f = Number.isInteger(fieldId) ? db.select().from(fields).where(eq(fields.id, fieldId)).get() : undefined;
  if (!f) throw new HttpError(404, `no field with id ${fieldId}`);
  return f;
}

/** All z slices of both channels of a field (decoded once, then cached). */
export async function loadFieldStack(ctx: AppContext, fieldOrId: number | FieldRow): Promise<DecodedStack> {
  const f = typeof fieldOrId === 'number' ? await loadFieldRow(ctx.db, fieldOrId) : fieldOrId;
  const key = stackKey(f);
  const hit = cacheGet(key);
  if (hit) return hit;
  const same = f.file1Sha === f.file2Sha;
  const b1 = await ctx.store.get(keyForSha(f.file1Sha));
  const b2 = same ? b1 : await ctx.store.get(keyForSha(f.file2Sha));
  // stored files were checked at intake; the budget here only guards against a changed setting
  const stack = await decodeSources(b1, f.channel1, b2, f.channel2, { pixelBudget: Math.max(ctx.env.PIXEL_BUDGET, f.width * f.height * f.sizeZ), maxDecodedBytes: ctx.env.MAX_DECODED_BYTES });
  cachePut(f.id, key, stack);
  return stack;
}

/**
 * Which z to analyse: a slice index (0-based), 'mip' (maximum-intensity projection over all slices),
 * 'all' (every slice as one volume, as recipes with z 'volume' measure), or a slice range { from, to }
 * (inclusive, 0-based) returned as one volume (slices concatenated, `depth`
 * slices of width × height; coefficients are then over voxels and 2-D cells apply to every slice).
 * Default: slice 0 for single-plane fields, the middle slice floor((sizeZ-1)/2) for stacks.
 */
export type ZChoice = number | 'mip' | 'all' | { from: number; to: number };

export interface FieldPixels {
  width: number;
  height: number;
  /** number of slices in ch1/ch2 (1 unless a range was asked for) */
  depth: number;
  ch1: PixelArray;
  ch2: PixelArray;
  bitDepth: number;
  sampleFormat: 'uint' | 'float';
  sizeZ: number;
  /** what was used, for results: "slice 3 of 7" etc. */
  z: ZChoice;
  zLabel: string;
  pixelSizeUm: number | null;
}

export function selectZ(stack: Pick<DecodedStack, 'ch1' | 'ch2' | 'sizeZ'>, z: ZChoice | undefined) {
  const n = stack.sizeZ;
  if (z === undefined || z === null) z = n === 1 ? 0 : Math.floor((n - 1) / 2);
  if (z === 'mip') {
    const proj = (sl: PixelArray[]) => project(sl, 0, sl.length - 1);
    return { ch1: proj(stack.ch1), ch2: proj(stack.ch2), depth: 1, z: 'mip' as ZChoice, zLabel: n === 1 ? 'single plane' : `maximum-intensity projection of ${n} slices` };
  }
  if (z === 'all') z = { from: 0, to: n - 1 };
  if (typeof z === 'object') {
    const from = Math.trunc(z.from);
    const to = Math.trunc(z.to);
    if (!(from >= 0 && to >= from && to < n)) throw new HttpError(400, `z range ${JSON.stringify(z)} is outside slices 0–${n - 1}`);
    return { ch1: concatSlices(stack.ch1, from, to), ch2: concatSlices(stack.ch2, from, to), depth: to - from + 1, z: { from, to } as ZChoice, zLabel: `slices ${from + 1}–${to + 1} of ${n} as a volume` };
  }
  const zi = Number(z);
  if (!Number.isInteger(zi) || zi < 0 || zi >= n) throw new HttpError(400, `z=${JSON.stringify(z)} is not a slice of this field (0–${n - 1})`);
  return { ch1: stack.ch1[zi], ch2: stack.ch2[zi], depth: 1, z: zi as ZChoice, zLabel: n === 1 ? 'single plane' : `slice ${zi + 1} of ${n}` };
}

/** A field's two channels at one z choice (see ZChoice). Does not check permissions (callers do). */
export async function loadFieldPixels(ctx: AppContext, fieldId: number, opts: { z?: ZChoice } = {}): Promise<FieldPixels> {
  const f = await loadFieldRow(ctx.db, fieldId);
  const stack = await loadFieldStack(ctx, f);
  const sel = selectZ(stack, opts.z);
  return {
    width: stack.width,
    height: stack.height,
    depth: sel.depth,
    ch1: sel.ch1,
    ch2: sel.ch2,
    bitDepth: stack.bitDepth,
    sampleFormat: stack.sampleFormat,
    sizeZ: stack.sizeZ,
    z: sel.z,
    zLabel: sel.zLabel,
    pixelSizeUm: f.pixelSizeUm ?? null,
  };
}
