/**
 * Measuring a calibration from stored fields (issue 15): decode a field's two channels from its stored files
 * and run the engine's shift measurement (phase correlation + van Steensel's curves) or bleed-through slope.
 * Pure compute on bytes handed in (no database, no store): it runs in a decoding thread (decode-worker.ts,
 * `DecodePool.measureShift` / `measureBleed`), so the web thread keeps answering while it measures.
 *
 * Choices (2026-12-03): a z stack's shift is measured on the sum of its slices (as `analyze --measure-shift`);
 * its bleed-through over every voxel (every slice shifted by the same (dx, dy) first). Several controls of
 * one label are pooled by `pooledBleedThroughSlope` (each control keeps its own background). A refusal is
 * an ImageInputError quoting what was measured.
 */
import { alignChannel, crossCorrelationCurves, measureShift, pooledBleedThroughSlope, type ChannelArray } from '../../shared/analysis/index.js';
import { MAX_CURVE_SHIFT, type CrossCorrelationCurves } from '../../shared/schemas/instruments.js';
import { plural } from '../../shared/format/plural.js';
import { decodeSources, type DecodedStack } from './sources.js';
import type { DecodeOptions, PixelArray } from './decode.js';
import { ImageInputError } from './errors.js';

/** A stored field's files as bytes (`bytes2` null when both channels are in the first file). */
export interface StoredFieldBytes {
  name: string;
  bytes1: Uint8Array;
  bytes2: Uint8Array | null;
  channel1: number;
  channel2: number;
}

export interface ShiftMeasurement {
  width: number;
  height: number;
  dx: number;
  dy: number;
  peak: number | null;
  z: string;
  curves: CrossCorrelationCurves;
}

export interface BleedMeasurement {
  slope: number;
  pixels: number;
}

function decodeField(f: StoredFieldBytes, opts: DecodeOptions): Promise<DecodedStack> {
  return decodeSources(f.bytes1, f.channel1, f.bytes2 ?? f.bytes1, f.channel2, opts);
}

/** The sum of the slices (Float64), or the one plane itself. */
function zSum(slices: PixelArray[]): ChannelArray {
  if (slices.length === 1) return slices[0];
  const out = new Float64Array(slices[0].length);
  for (const s of slices) for (let i = 0; i < out.length; i++) out[i] += s[i];
  return out;
}

function concat(slices: PixelArray[]): ChannelArray {
  if (slices.length === 1) return slices[0];
  const out = new Float64Array(slices.reduce((n, s) => n + s.length, 0));
  let o = 0;
  for (const s of slices) {
    out.set(s, o);
    o += s.length;
  }
  return out;
}

/** Half-width of the curves: as asked, widened to reach 2 px past the measured shift, at most MAX_CURVE_SHIFT. */
export function curveHalfWidth(asked: number, dx: number, dy: number): number {
  return Math.min(MAX_CURVE_SHIFT, Math.max(asked, Math.ceil(Math.max(Math.abs(dx), Math.abs(dy))) + 2));
}

/** The whole-pixel shift the curves are drawn through: the measured one rounded (so each axis's peak shows). */
export function curveThrough(dx: number, dy: number): { dx: number; dy: number } {
  return { dx: Math.round(dx) || 0, dy: Math.round(dy) || 0 };
}

/** Channel 2's shift relative to channel 1 on a bead field, with the cross-correlation curves around it. */
export async function measureFieldShift(f: StoredFieldBytes, maxShift: number, opts: DecodeOptions): Promise<ShiftMeasurement> {
  const s = await decodeField(f, opts);
  const ch1 = zSum(s.ch1), ch2 = zSum(s.ch2);
  const r = measureShift(ch1, ch2, s.width, s.height);
  if (r.dx === null || r.dy === null)
    throw new ImageInputError(`the shift of "${f.name}" cannot be measured: a channel has no variation (every pixel the same value)`);
  if (Math.abs(r.dx) > 100 || Math.abs(r.dy) > 100)
    throw new ImageInputError(`"${f.name}" gives a shift of (${r.dx.toFixed(2)}, ${r.dy.toFixed(2)}) px, beyond the ±100 px a calibration holds: is it a bead field showing the same beads in both channels?`);
  const through = curveThrough(r.dx, r.dy);
  const curves = { through, ...crossCorrelationCurves(ch1, ch2, s.width, s.height, curveHalfWidth(maxShift, r.dx, r.dy), null, through) };
  return { width: s.width, height: s.height, dx: r.dx, dy: r.dy, peak: r.peak, z: s.sizeZ === 1 ? 'single plane' : `sum of ${plural(s.sizeZ, 'slice')}`, curves };
}

/**
 * The bleed-through slope over single-label controls: label 1 → channel 2 against channel 1 (a21), label 2 →
 * channel 1 against channel 2 (a12); channel 2 aligned with `align` first when given.
 */
export async function measureControlsBleed(fields: StoredFieldBytes[], label: 1 | 2, align: { dx: number; dy: number } | null, opts: DecodeOptions): Promise<BleedMeasurement> {
  const controls: { labelled: ChannelArray; seen: ChannelArray }[] = [];
  for (const f of fields) {
    const s = await decodeField(f, opts);
    const ch1 = concat(s.ch1);
    const raw2 = concat(s.ch2);
    const ch2 = align ? alignChannel(raw2, s.width, s.height, align.dx, align.dy, s.sizeZ) : raw2;
    controls.push(label === 1 ? { labelled: ch1, seen: ch2 } : { labelled: ch2, seen: ch1 });
  }
  const { slope, n } = pooledBleedThroughSlope(controls);
  const names = fields.map((f) => `"${f.name}"`).join(', ');
  if (slope === null) throw new ImageInputError(`the bleed-through cannot be measured on ${names}: channel ${label}, the labelled one, has no variation`);
  return { slope, pixels: n };
}
