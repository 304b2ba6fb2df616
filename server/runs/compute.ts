/**
 * Computing one field of a run: read both channels from the file store, apply the recipe's z handling,
 * background and saturation rules, and measure every cell with the analysis engine (shared/analysis).
 * Used alike by the in-process pool threads (pool-worker.ts) and the BullMQ worker (worker-main.ts).
 *
 * Decisions (2026-12-01), stated in each setting's sentence (shared/schemas/recipes.ts describeSetting):
 * - z 'range' and 'mip' are maximum-intensity projections over the chosen slices; 'volume' (2026-12-02, the
 *   default) measures every slice voxel by voxel in 3D: the slices are one flat array (`concatSlices`) and each
 *   cell's and background region's outline is extruded over every slice (`extrudeIndices`); pixel counts,
 *   means, saturated fractions and field thresholds are then over voxels. The randomization test then
 *   scrambles 3-D blocks (`blockSlices`: the block depth in slices, given or from the PSF's axial width and
 *   the z step); without a block depth the field fails with a message rather than guessing one.
 * - cells in 3D (2026-12-02): an outline with a z range counts only on the measured slices of that range, and a
 *   3-D label cell exactly its voxels (shared/schemas/cells.ts `cellVoxels`); with one slice measured, only its
 *   plane of the cell (possibly none: a row of nulls). A projection merges slices, so a field with such cells
 *   fails with a message under z 'mip' or 'range' rather than ignoring the z extent.
 * - saturation: a value equal to the largest representable value of the bit depth (integer data) is
 *   saturated; float data has no saturation level (fractions null). 'exclude' drops pixels saturated in
 *   either channel before thresholds and coefficients.
 * - background: max(0, v − b) per channel; b = constant, or the mean over the union of the field's
 *   'background' regions (raw values, saturated pixels included, NaN pixels left out). Integer data with
 *   an integer b stays integer (the engine's exact integer paths apply); otherwise the channel becomes Float64.
 * - Otsu / Costes thresholds: per cell over its measured pixels (thresholdScope 'cell'), or once per field
 *   over the union of its cells' measured pixels ('field', as the `analyze` command does over its regions).
 * - a cell with fewer measured pixels than minCellPixels gets a row with every coefficient null.
 * - NaN (float data): a pixel with NaN in either channel carries no intensity (PRODUCT.md). It stays NaN
 *   through projection and background subtraction and is left out of everything measured: the pixel count,
 *   means, background-region means, thresholds (per cell and over the field) and coefficients. How many of a
 *   cell's pixels were left out this way is recorded in the provenance (`nanPixels`).
 * - objects section on (2026-12-02): `analyzeObjects` per cell on the projected intensities before background
 *   subtraction (the Laplacian-of-Gaussian filter ignores a constant offset, and clipping at 0 would bend the
 *   spot profiles), over the cell's pixels that have a value (saturated pixels stay: a saturated spot is still
 *   a spot, and dropping pixels would punch holes into the filter's neighbourhoods). σ and d in µm are turned
 *   into pixels with the recipe's or the field's pixel size. A cell below minCellPixels gets every measure
 *   null, the object measures included, and no spots. A float field with NaN pixels fails with the count when
 *   spots are on (the filter reaches beyond the cell, so no pixel may lack a value). A field measured in 3D
 *   (2026-12-03): `analyzeObjects3D` over the cell's voxels, σz = σ · pixel size / z step, distances in pixel
 *   widths with z scaled (so µm settings convert with the pixel size as in 2D); needs the field's voxel size.
 *   The provenance's `objects.volume` records that voxel size, the slice spacing and σz in slices (the
 *   methods paragraph states them).
 * - calibration (recipe setting 'approved', 2026-12-02): channel 2 is aligned with the instrument's approved
 *   shift first (bilinear; pixels whose sample position is outside become NaN, so they are not measured and
 *   count in `nanPixels`), then background is subtracted, then bleed-through is unmixed (a missing
 *   coefficient is 0). Saturation is judged on the recorded values: an aligned channel-2 pixel is saturated
 *   when a saturated pixel has weight in its interpolation. The calibration is recorded in the provenance;
 *   a field without an instrument or an approved calibration fails with the reason (never measured uncorrected).
 */
import { measureRegion, computeThresholds, collectPairs, prepare, alignChannel, alignedAt, alignAndUnmix, unmixChannels, analyzeObjects, analyzeObjects3D, spot3Options, objectMeasures, ENGINE_VERSION, type ChannelArray, type ObjectOptions, type ObjectResult, type PreparedPairs, type ThresholdInfo, type ThresholdOptions } from '../../shared/analysis/index.js';
import { THREAD_MIN_PAIRS, type SweepThreads } from '../analysis/sweep-threads.js';
import { cellVoxels, type CellGeometry } from '../../shared/schemas/cells.js';
import { COEFFICIENTS, OBJECT_KEYS, isPixelEntry, type CoefficientValues } from '../../shared/coefficients.js';
import { pairDistancePx, spotSigmaPx, spotSigmaZSlices, type RecipeSettings } from '../../shared/schemas/recipes.js';
import type { FileStore } from '../services.js';
import type { AppliedObjectSettings } from '../../shared/schemas/runs.js';
import { decodeChannel } from '../images/decode.js';
import { concatSlices, project } from '../images/projection.js';
import type { FieldJob, FieldJobResult, MeasurementValues, SpotValues } from './job.js';
import { plural } from '../../shared/format/plural.js';

export { ENGINE_VERSION };

export interface FieldPixels {
  width: number;
  height: number;
  /** planes in ch1/ch2 (z 'volume': the field's slices; otherwise, and when absent, 1) */
  depth?: number;
  ch1: ChannelArray;
  ch2: ChannelArray;
}

/** Where a field's problem is fixed: the field (its regions, pixel size, instrument), the recipe, or the field's instrument (its calibration). */
export type FixPlace = 'field' | 'recipe' | 'instrument';

export class FieldJobError extends Error {
  override name = 'FieldJobError';
  constructor(
    message: string,
    readonly fix: FixPlace = 'field',
  ) {
    super(message);
  }
}

export { project };

export function zRange(z: RecipeSettings['z'], sizeZ: number): [number, number] {
  const [a, b] = z.mode === 'slice' ? [z.slice, z.slice] : z.mode === 'range' ? [z.from, z.to] : [0, sizeZ - 1]; // mip, volume: every slice
  if (b >= sizeZ) throw new FieldJobError(`the recipe asks for slice ${b + 1}, but the field has ${plural(sizeZ, 'slice')}`, 'recipe');
  return [a, b];
}

/** The z handling in a measurement's provenance; `depth` planes were measured (z 'volume' on one plane is that plane). */
export const describeZ = (z: RecipeSettings['z'], depth = 1) => (z.mode === 'volume' ? (depth > 1 ? `3D 0-${depth - 1}` : 'slice 0') : z.mode === 'slice' ? `slice ${z.slice}` : z.mode === 'range' ? `mip ${z.from}-${z.to}` : 'mip all');

/** Reads and decodes both channels of a job's field from the file store, applying the z handling. */
export async function loadJobPixels(store: Pick<FileStore, 'get'>, job: FieldJob): Promise<FieldPixels> {
  const [from, to] = zRange(job.settings.z, job.sizeZ);
  const bufs = new Map<string, Buffer>();
  const out: ChannelArray[] = [];
  for (const src of job.sources) {
    let buf = bufs.get(src.key);
    if (!buf) {
      buf = await store.get(src.key);
      bufs.set(src.key, buf);
    }
    const d = await decodeChannel(new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength), src.channel);
    if (d.width !== job.width || d.height !== job.height)
      throw new FieldJobError(`stored file ${src.key} is ${d.width}×${d.height}, the field record says ${job.width}×${job.height}`);
    const last = Math.min(to, d.slices.length - 1);
    out.push(job.settings.z.mode === 'volume' ? concatSlices(d.slices as ChannelArray[], from, last) : project(d.slices as ChannelArray[], from, last));
  }
  const depth = out[0].length / (job.width * job.height);
  if (out[1].length !== out[0].length) throw new FieldJobError(`the two channels of field "${job.fieldName}" have ${depth} and ${out[1].length / (job.width * job.height)} slices`);
  return { width: job.width, height: job.height, depth, ch1: out[0], ch2: out[1] };
}

const isIntegerArray = (a: ChannelArray) => !(a instanceof Float32Array || a instanceof Float64Array);

function subtract(a: ChannelArray, b: number): ChannelArray {
  if (b === 0) return a;
  if (isIntegerArray(a) && Number.isInteger(b)) {
    const out = (a as Uint16Array).slice();
    for (let i = 0; i < out.length; i++) out[i] = out[i] > b ? out[i] - b : 0;
    return out;
  }
  const out = new Float64Array(a.length);
  for (let i = 0; i < a.length; i++) {
    const v = a[i];
    out[i] = v > b ? v - b : v === v ? 0 : NaN; // NaN stays NaN (v === v is false only for NaN)
  }
  return out;
}

/** The indices whose pixel has a value in both channels (NaN in either one → not measured). */
function measurable(ch1: ChannelArray, ch2: ChannelArray, idx: Uint32Array): Uint32Array {
  if (isIntegerArray(ch1) && isIntegerArray(ch2)) return idx;
  let n = 0;
  for (let k = 0; k < idx.length; k++) if (ch1[idx[k]] === ch1[idx[k]] && ch2[idx[k]] === ch2[idx[k]]) n++;
  if (n === idx.length) return idx;
  const out = new Uint32Array(n);
  n = 0;
  for (let k = 0; k < idx.length; k++) if (ch1[idx[k]] === ch1[idx[k]] && ch2[idx[k]] === ch2[idx[k]]) out[n++] = idx[k];
  return out;
}

function meanOver(a: ChannelArray, idx: ArrayLike<number>): number {
  let s = 0;
  for (let k = 0; k < idx.length; k++) s += a[idx[k]];
  return s / idx.length;
}

function thresholdOptions(t: RecipeSettings['threshold']): ThresholdOptions {
  switch (t.method) {
    case 'none':
      return { method: 'none' };
    case 'manual':
      return { method: 'manual', t1: t.t1, t2: t.t2 };
    case 'otsu':
      return { method: 'otsu' };
    case 'costes':
      return { method: 'costes', costes: { regression: t.regression, belowSet: t.belowSet, stopAt: t.stoppingRule.r } };
  }
}

/** Block edge of the randomization test in pixels (null when the test is off). */
export function blockPixels(s: RecipeSettings, fieldPixelSizeUm: number | null): number | null {
  if (!s.randomization.enabled) return null;
  const b = s.randomization.blockSize;
  if (b.kind === 'pixels') return b.pixels;
  const px = b.pixelSizeUm ?? fieldPixelSizeUm;
  if (!px) throw new FieldJobError('the randomization block size comes from the point-spread width, but neither the recipe nor the field gives a pixel size');
  return Math.max(1, Math.round(b.psfWidthUm / px));
}

/** The objects section as the engine takes it (σ, d in pixels), or null when it is off. */
export function objectOptions(s: RecipeSettings, fieldPixelSizeUm: number | null): Required<Omit<ObjectOptions, 'kRadii' | 'missing'>> | null {
  const o = s.objects;
  if (!o.enabled) return null;
  try {
    const spotSigma = spotSigmaPx(o, fieldPixelSizeUm);
    return { spotSigma, spotK: o.k, minSeparation: o.minSeparationPx ?? 2 * spotSigma, pairDistance: pairDistancePx(o, fieldPixelSizeUm), placements: o.placements, seed: o.seed };
  } catch (e) {
    throw new FieldJobError((e as Error).message);
  }
}

/**
 * Block depth of the randomization test in slices, for a stack measured in 3D: the recipe's `slices`, or
 * round(psfDepthUm / z step) with the recipe's z step or the field's. Missing values fail the field.
 */
export function blockSlices(s: RecipeSettings, fieldZStepUm: number | null, fieldName = 'the field'): number {
  const b = s.randomization.blockSize;
  if (b.kind === 'pixels') {
    if (b.slices === undefined) throw new FieldJobError(`${fieldName} is measured in 3D, but the randomization blocks have no depth; give the block depth in slices, or measure one slice or a projection`, 'recipe');
    return b.slices;
  }
  if (b.psfDepthUm === undefined) throw new FieldJobError(`${fieldName} is measured in 3D, but the recipe gives no axial point-spread width for the randomization blocks`, 'recipe');
  const step = b.zStepUm ?? fieldZStepUm;
  if (!step) throw new FieldJobError(`the randomization block depth comes from the axial point-spread width, but neither the recipe nor ${fieldName} gives the z step between slices`);
  return Math.max(1, Math.round(b.psfDepthUm / step));
}

/** What the input check reads of a field's job (a FieldJob has all of it; the pre-run check builds it without files). */
export type FieldInputs = Pick<FieldJob, 'fieldName' | 'sizeZ' | 'settings' | 'pixelSizeUm' | 'zStepUm' | 'calibration' | 'calibrationProblem' | 'instrumentId'> & {
  cells: { role: 'cell' | 'background' }[];
};

/** Planes a field is measured over: every slice for z 'volume', else one (a slice or a projection). */
export function measuredDepth(z: RecipeSettings['z'], sizeZ: number): number {
  const [from, to] = zRange(z, sizeZ);
  return z.mode === 'volume' ? to - from + 1 : 1;
}

/**
 * The one home of the rules that decide, before any pixel is read, whether a field can be measured with a
 * recipe: the pre-run check (`POST /api/runs/check`) and `computeFieldResult` both call it. Throws the
 * FieldJobError of the first rule the field breaks (with where it is fixed); `depth` is the planes measured.
 */
export function checkFieldInputs(job: FieldInputs, depth = measuredDepth(job.settings.z, job.sizeZ)): void {
  const s = job.settings;
  zRange(s.z, job.sizeZ);
  if (s.calibration === 'approved' && !job.calibration)
    throw new FieldJobError(job.calibrationProblem ?? `field "${job.fieldName}" has no calibration to apply`, job.instrumentId == null ? 'field' : 'instrument');
  if (s.background.method === 'region' && !job.cells.some((c) => c.role === 'background'))
    throw new FieldJobError(`the recipe subtracts the mean of a marked background region, but field "${job.fieldName}" has none marked`);
  const block = blockPixels(s, job.pixelSizeUm);
  if (block != null && depth > 1) blockSlices(s, job.zStepUm ?? null, `field "${job.fieldName}"`);
  const objects = objectOptions(s, job.pixelSizeUm);
  if (objects && depth > 1) spotVolume(job, objects.spotSigma, depth);
}

/**
 * Spots of a field measured in 3D, as the provenance records them: the voxel size, the slice spacing in pixel
 * widths and σz in slices (the recipe's axial width, else σ / zScale) with the rule it came from. A
 * FieldJobError when the field lacks the voxel size or the axial width cannot be resolved.
 */
export function spotVolume(job: Pick<FieldInputs, 'fieldName' | 'pixelSizeUm' | 'zStepUm' | 'settings'>, sigmaPx: number, depth: number): NonNullable<AppliedObjectSettings['volume']> {
  const zScale = spotZScale(job, depth);
  const a = job.settings.objects.axial;
  try {
    const given = spotSigmaZSlices(job.settings.objects, sigmaPx, zScale, job.zStepUm ?? null);
    const from = a?.kind === 'psf' ? ` (from the axial point-spread width ${a.psfDepthUm} µm at ${a.zStepUm ?? job.zStepUm} µm between slices)` : a === null ? ` (σ ${sigmaPx} px over a slice spacing of ${zScale} pixel widths)` : '';
    if (!(given > 0 && given <= 50)) throw new RangeError(`the spots' axial width σz must be in (0, 50] slices, received ${Number(given.toPrecision(6))}${from}`);
    const sigmaZ = spot3Options({ sigma: sigmaPx, zScale, sigmaZ: given }).sigmaZ;
    return { pixelSizeUm: job.pixelSizeUm!, zStepUm: job.zStepUm!, zScale, sigmaZ, sigmaZFrom: a === null ? 'lateral' : a.kind, ...(a?.kind === 'psf' && { psfDepthUm: a.psfDepthUm }) };
  } catch (e) {
    throw new FieldJobError(`field "${job.fieldName}": ${(e as Error).message}`, 'recipe');
  }
}

/**
 * Spots of a field measured in 3D: the slice spacing in pixel widths (z step / pixel size), from the field's
 * voxel size; a FieldJobError (fixed on the field) when it lacks either.
 */
export function spotZScale(job: Pick<FieldInputs, 'fieldName' | 'pixelSizeUm' | 'zStepUm'>, depth: number): number {
  const lacking = [job.pixelSizeUm ? null : 'pixel size', job.zStepUm ? null : 'z step'].filter((x) => x !== null);
  if (lacking.length)
    throw new FieldJobError(`spots in 3D are located in µm, so they need the voxel size, but field "${job.fieldName}" (measured in 3D over ${depth} slices) has no ${lacking.join(' and no ')}; enter it on the field, measure one slice or a projection, or turn Spots off`, 'field');
  return job.zStepUm! / job.pixelSizeUm!;
}

/** Every registry measure but the pixel count, null: the row of a cell too small to measure. */
const nullCoefficients = Object.fromEntries(COEFFICIENTS.filter((c) => c.key !== 'pixels').map((c) => [c.key, null])) as Omit<CoefficientValues, 'pixels'>;

/** Measures every 'cell' region of a field. Throws FieldJobError for a problem with this field. */
export function computeField(job: FieldJob, px: FieldPixels, computedAt = new Date().toISOString()): MeasurementValues[] {
  return computeFieldResult(job, px, computedAt).measurements;
}

type FieldResult = { measurements: MeasurementValues[]; spots: SpotValues[] };

/** Measures every 'cell' region of a field and, when the recipe's objects section is on, lists its spots. */
export function computeFieldResult(job: FieldJob, px: FieldPixels, computedAt = new Date().toISOString()): FieldResult {
  const steps = fieldSteps(job, px, computedAt, false);
  let r = steps.next();
  while (!r.done) r = steps.next();
  return r.value;
}

/**
 * computeFieldResult with the pair sweep of every cell of at least THREAD_MIN_PAIRS pixels split over
 * `threads` (server/analysis/sweep-threads.ts); the values are the same.
 */
export async function computeFieldResultThreaded(job: FieldJob, px: FieldPixels, threads: SweepThreads, computedAt = new Date().toISOString()): Promise<FieldResult> {
  const steps = fieldSteps(job, px, computedAt, true);
  let r = steps.next();
  while (!r.done) {
    await threads.sweep(r.value);
    r = steps.next();
  }
  return r.value;
}

/**
 * The field's measurement, as steps: with `yieldBig`, each cell of at least THREAD_MIN_PAIRS pixels whose
 * exact set is asked for has its pairs collected and handed out (yielded) before it is measured, so the
 * caller can do their pair sweep elsewhere first.
 */
function* fieldSteps(job: FieldJob, px: FieldPixels, computedAt: string, yieldBig: boolean): Generator<PreparedPairs, FieldResult, void> {
  const s = job.settings;
  const { width, height } = px;
  const plane = width * height;
  const depth = px.depth ?? 1;
  if (px.ch1.length !== plane * depth || px.ch2.length !== plane * depth)
    throw new FieldJobError(`field "${job.fieldName}": ${px.ch1.length} and ${px.ch2.length} pixels do not make ${depth} slice${depth === 1 ? '' : 's'} of ${width}×${height}`);
  // the measured planes are the field's slices first .. first + depth − 1 (one slice: that slice; a projection: no slice)
  const projected = s.z.mode === 'mip' || s.z.mode === 'range';
  const first = s.z.mode === 'slice' ? s.z.slice : 0;
  /** a stored cell's voxels in the measured planes: an outline on every measured slice of its z range, a 3-D label cell exactly its voxels */
  const voxelsOf = (geometry: CellGeometry) => {
    if (projected && (geometry.kind === 'label3d' || ('z' in geometry && geometry.z)))
      throw new FieldJobError(`field "${job.fieldName}" has cells that cover only some slices (a z range or a 3-D label), but the recipe measures a projection of the slices; measure every slice in 3D or one slice`);
    return cellVoxels(geometry, width, height, first, depth);
  };
  checkFieldInputs(job, depth);
  const sat = job.sampleFormat === 'float' ? null : 2 ** job.bitDepth - 1;
  // calibration: channel 2 aligned first (NaN where its sample position is outside: not measured)
  const cal = s.calibration === 'approved' ? job.calibration : null;
  const shifted = cal !== null && cal.dx !== null && cal.dy !== null && (cal.dx !== 0 || cal.dy !== 0);
  const unmixing = cal !== null && (cal.a21 !== null || cal.a12 !== null);
  // alignment, background subtraction and unmixing in one pass (alignAndUnmix, bit for bit the three steps)
  // when the aligned channel 2 itself is not needed: spot detection reads the raw aligned channels
  const fused = shifted && unmixing && !s.objects.enabled;
  const raw1 = px.ch1;
  // the aligned channel 2; null when fused (never stored: a background region's values come from alignedAt)
  const raw2: ChannelArray | null = fused ? null : shifted ? alignChannel(px.ch2, width, height, cal.dx!, cal.dy!, depth) : px.ch2;
  // saturation of channel 2 after alignment: any saturated pixel with weight in the interpolation
  const sat2 = (i: number) => (shifted ? satAligned![i] > 0 : raw2![i] >= sat!);
  let satAligned: Float64Array | null = null;
  if (shifted && sat != null) {
    const m = new Uint8Array(px.ch2.length);
    for (let i = 0; i < m.length; i++) m[i] = px.ch2[i] >= sat ? 1 : 0;
    satAligned = alignChannel(m, width, height, cal.dx!, cal.dy!, depth);
  }

  // background
  let bg1: number | null = null;
  let bg2: number | null = null;
  if (s.background.method === 'constant') {
    bg1 = s.background.ch1;
    bg2 = s.background.ch2;
  } else if (s.background.method === 'region') {
    const regions = job.cells.filter((c) => c.role === 'background');
    const seen = new Uint8Array(plane * depth);
    const idx: number[] = [];
    for (const r of regions) for (const i of voxelsOf(r.geometry)) if (!seen[i]) (seen[i] = 1), idx.push(i);
    if (idx.length === 0) throw new FieldJobError(`the background region${regions.length === 1 ? '' : 's'} of field "${job.fieldName}" cover no pixel of the image`);
    // fused: channel 2's aligned values at the region's pixels only, in the region's order (the same sums)
    const r2: ChannelArray = raw2 ?? alignedAt(px.ch2, width, height, cal!.dx!, cal!.dy!, idx, depth);
    const at = raw2 === null ? Uint32Array.from(idx, (_, k) => k) : Uint32Array.from(idx);
    const kept = measurable(raw2 === null ? Float64Array.from(idx, (i) => raw1[i]) : raw1, r2, at);
    if (kept.length === 0)
      throw new FieldJobError(`the background region${regions.length === 1 ? '' : 's'} of field "${job.fieldName}" (${idx.length} pixels) hold only NaN pixels, so there is no background level to subtract`);
    const valued = raw2 === null ? Uint32Array.from(kept, (k) => idx[k]) : kept;
    bg1 = meanOver(raw1, valued);
    bg2 = meanOver(r2, kept);
  }
  let ch1: ChannelArray, ch2: ChannelArray;
  const unmixOut = fused ? takeUnmixBuffers(plane * depth) : null;
  if (fused) ({ t1: ch1, t2: ch2 } = alignAndUnmix(raw1, px.ch2, width, height, cal!.dx!, cal!.dy!, cal!.a21 ?? 0, cal!.a12 ?? 0, depth, { background: [bg1, bg2], out: unmixOut! }));
  else {
    ch1 = bg1 == null ? raw1 : subtract(raw1, bg1);
    ch2 = bg2 == null ? raw2! : subtract(raw2!, bg2);
    // then bleed-through, on the background-subtracted channels
    if (unmixing) ({ t1: ch1, t2: ch2 } = unmixChannels(ch1, ch2, cal!.a21 ?? 0, cal!.a12 ?? 0));
  }

  const block = blockPixels(s, job.pixelSizeUm);
  const blockZ = block != null && depth > 1 ? blockSlices(s, job.zStepUm ?? null, `field "${job.fieldName}"`) : 1;
  const want = new Set(s.coefficients);
  const slow = COEFFICIENTS.some((c) => c.slow && c.recipeChoice !== null && want.has(c.recipeChoice));
  const threshold = thresholdOptions(s.threshold);
  const z = describeZ(s.z, depth);
  const objects = objectOptions(s, job.pixelSizeUm);
  // spots in 3D: the voxel size, slice spacing and axial σ recorded in the provenance (the methods paragraph states them)
  const volume = objects && depth > 1 ? spotVolume(job, objects.spotSigma, depth) : null;
  const spots: SpotValues[] = [];
  // the spot filter reaches beyond each cell, so every pixel it may read needs a value
  if (objects)
    for (const [c, a] of [[1, raw1], [2, raw2!]] as const) {
      if (isIntegerArray(a)) continue;
      let nan = 0;
      for (let i = 0; i < a.length; i++) if (!Number.isFinite(a[i])) nan++;
      if (nan > 0) throw new FieldJobError(`spot detection needs a value at every pixel, but channel ${c} of field "${job.fieldName}" has ${plural(nan, 'pixel')} without one (NaN)`);
    }

  const measured = job.cells
    .filter((c) => c.role === 'cell')
    .map((cell) => {
      const all = voxelsOf(cell.geometry);
      let idx: Uint32Array = measurable(ch1, ch2, all);
      const valued = idx;
      const nanPixels = all.length - idx.length;
      if (s.saturation === 'exclude' && sat != null) {
        const keep: number[] = [];
        for (let k = 0; k < idx.length; k++) if (raw1[idx[k]] < sat && !sat2(idx[k])) keep.push(idx[k]);
        idx = Uint32Array.from(keep);
      }
      return { cell, all, idx, valued, nanPixels };
    });
  // field-wide thresholds over the union of the measured cells
  let fieldThresholds: ThresholdInfo | null = null;
  if (s.thresholdScope === 'field' && (s.threshold.method === 'otsu' || s.threshold.method === 'costes')) {
    const m = new Uint8Array(plane * depth);
    for (const c of measured) if (c.idx.length >= Math.max(1, s.minCellPixels)) for (const i of c.idx) m[i] = 1;
    let n = 0;
    for (let i = 0; i < m.length; i++) n += m[i];
    const union = new Uint32Array(n);
    n = 0;
    for (let i = 0; i < m.length; i++) if (m[i]) union[n++] = i;
    fieldThresholds = computeThresholds(prepare(collectPairs(ch1, ch2, { kind: 'indices', indices: union })), threshold);
  }

  const rows: MeasurementValues[] = [];
  for (const { cell, all, idx, valued, nanPixels } of measured) {
    let s1 = 0, s2 = 0;
    if (sat != null)
      for (let k = 0; k < all.length; k++) {
        if (raw1[all[k]] >= sat) s1++;
        if (sat2(all[k])) s2++;
      }
    const n = idx.length;
    const provenance = {
      recipeId: job.recipe.id,
      recipeName: job.recipe.name,
      recipeVersion: job.recipe.version,
      recipeStatus: job.recipe.status,
      engineVersion: ENGINE_VERSION,
      inputSha256: [job.sources[0].sha256, job.sources[1].sha256] as [string, string],
      channels: [job.sources[0].channel, job.sources[1].channel] as [number, number],
      thresholds: { method: s.threshold.method, ch1: null as number | null, ch2: null as number | null },
      background: [bg1, bg2] as [number | null, number | null],
      seed: s.seed,
      z,
      randomizationBlock: block,
      randomizationCount: 0,
      note: null as string | null,
      nanPixels,
      calibration: cal,
      ...(objects
        ? { objects: { sigmaPx: objects.spotSigma, k: objects.spotK, minSeparationPx: objects.minSeparation, pairDistancePx: objects.pairDistance, placements: objects.placements, seed: objects.seed, ...(volume && { volume }) } }
        : {}),
      computedAt,
    };
    const base = {
      cellId: cell.id,
      pixels: n,
      background1: bg1,
      background2: bg2,
      saturatedFraction1: sat == null || all.length === 0 ? null : s1 / all.length,
      saturatedFraction2: sat == null || all.length === 0 ? null : s2 / all.length,
      thresholdMethod: s.threshold.method,
    };
    if (n < Math.max(1, s.minCellPixels)) {
      provenance.note = n === 0 ? 'no measurable pixels' : `fewer than ${s.minCellPixels} measured pixels`;
      rows.push({ ...base, ...nullCoefficients, threshold1: null, threshold2: null, mean1: null, mean2: null, provenance });
      continue;
    }
    let pairs: PreparedPairs | undefined;
    if (yieldBig && slow && n >= THREAD_MIN_PAIRS) {
      pairs = prepare(collectPairs(ch1, ch2, { kind: 'indices', indices: idx }));
      yield pairs;
    }
    const r = measureRegion(ch1, ch2, idx, {
      pairs,
      width,
      height,
      threshold: fieldThresholds ?? threshold,
      randomization: block != null ? { count: s.randomization.count, blockSize: block, seed: s.seed, depth, blockDepth: blockZ } : undefined,
      skipSlow: !slow,
      mic: want.has('mic') ? s.mic : undefined,
    });
    provenance.thresholds = { method: r.thresholds.method, ch1: r.thresholds.ch1, ch2: r.thresholds.ch2 };
    provenance.randomizationCount = r.randomizationCount;
    // a measure is kept when its recipe choice was asked for; the randomization test's results always (the recipe switches the test itself)
    const values = Object.fromEntries(COEFFICIENTS.filter(isPixelEntry).map((c) => [c.key, c.recipeChoice === null || want.has(c.recipeChoice) ? r[c.key] : null])) as CoefficientValues;
    for (const k of OBJECT_KEYS) values[k] = null;
    if (objects && depth > 1) {
      // in 3D: σz from the recipe's axial width (else σ · pixel size / z step), distances in pixel widths with z scaled; z in the stack's slices (every slice is measured)
      const a = analyzeObjects3D(raw1, raw2!, width, height, depth, valued, { ...objects, zScale: volume!.zScale, spotSigmaZ: volume!.sigmaZ });
      Object.assign(values, objectMeasures(a.result as unknown as ObjectResult));
      for (const [channel, det] of [[1, a.detection1], [2, a.detection2]] as const)
        for (const sp of det?.spots ?? []) spots.push({ cellId: cell.id, channel, x: sp.x, y: sp.y, z: sp.z, peak: sp.peak, integrated: sp.integrated });
    } else if (objects) {
      const a = analyzeObjects(raw1, raw2!, width, height, valued, objects);
      Object.assign(values, objectMeasures(a.result));
      for (const [channel, det] of [[1, a.detection1], [2, a.detection2]] as const)
        for (const sp of det?.spots ?? []) spots.push({ cellId: cell.id, channel, x: sp.x, y: sp.y, peak: sp.peak, integrated: sp.integrated });
    }
    rows.push({
      ...base,
      ...values,
      pixels: n,
      threshold1: r.thresholds.ch1,
      threshold2: r.thresholds.ch2,
      mean1: meanOver(ch1, idx),
      mean2: meanOver(ch2, idx),
      provenance,
    });
  }
  // the rows hold numbers only: the arrays go back for the next field (a field that throws keeps its pair)
  if (unmixOut) giveBackUnmixBuffers(unmixOut);
  return { measurements: rows, spots };
}

/**
 * Output arrays of the one-pass alignment and unmixing, kept for the next field of the same size in this
 * thread: fresh arrays for a 2048² field cost more than the pass itself (74 against 37 ms CPU in
 * `BENCH=calibration`). A field takes a pair for its whole measurement and gives it back at the end, so
 * fields in flight at once (a worker process's concurrent jobs) never share one; one pair is kept
 * (16 bytes a pixel) until `dropSpareBuffers`.
 */
const unmixSpare: { t1: Float64Array; t2: Float64Array }[] = [];
function takeUnmixBuffers(n: number) {
  const i = unmixSpare.findIndex((b) => b.t1.length === n);
  return i >= 0 ? unmixSpare.splice(i, 1)[0] : { t1: new Float64Array(n), t2: new Float64Array(n) };
}
function giveBackUnmixBuffers(b: { t1: Float64Array; t2: Float64Array }) {
  unmixSpare.length = 0;
  unmixSpare.push(b);
}
/** Lets the kept output arrays go (the run pool's threads call it after each batch). */
export function dropSpareBuffers(): void {
  unmixSpare.length = 0;
}

/** Load + compute, never throwing: a failure becomes `{ ok: false, error }` with a one-line message. */
export async function runFieldJob(store: Pick<FileStore, 'get'>, job: FieldJob, threads: SweepThreads | null = null): Promise<FieldJobResult> {
  const t0 = performance.now();
  try {
    const px = await loadJobPixels(store, job);
    const loadMs = performance.now() - t0;
    const { measurements, spots } = threads ? await computeFieldResultThreaded(job, px, threads) : computeFieldResult(job, px);
    return { runId: job.runId, fieldId: job.fieldId, ok: true, measurements, spots, ms: performance.now() - t0, loadMs };
  } catch (e) {
    const msg = e instanceof Error ? e.message : String(e);
    return { runId: job.runId, fieldId: job.fieldId, ok: false, error: msg.split('\n')[0].slice(0, 500), ms: performance.now() - t0 };
  }
}
