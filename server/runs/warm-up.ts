/**
 * The warm-up of a run pool thread (2026-12-03): as the thread starts, before it takes its first batch, it
 * measures a few small synthetic fields through the path every job takes (`runFieldJob`: reading the files,
 * decoding the TIFFs, measuring every cell), so that V8 has compiled and optimised the decoder, the engine and
 * the run glue before the first real field instead of during it (that first field's engine time was ~1.4× its
 * later ones). The work is discarded: the files are TIFFs in this thread's memory (a `get` over a Map, no file
 * store), nothing is written anywhere, and the results, the pixel arrays and the kept unmixing arrays are
 * dropped at the end. A warm-up that fails is reported with its message (the pool logs it) and changes nothing
 * else: the thread then takes jobs exactly as it would have, only not warmed.
 *
 * The fields (made here, a few ms): 128² 16-bit, each channel its own single-page TIFF, a dim background with
 * seeded noise and six cells (polygons, an ellipse, a rectangle) holding Gaussian puncta, some in both
 * channels, a few bright enough to saturate. One is measured with the recipe defaults (every coefficient,
 * Costes thresholds per cell) with Spots on, as the demo recipe does; the other with an approved calibration (a
 * sub-pixel shift and bleed-through: the one-pass alignment and unmixing), a constant background and Otsu
 * thresholds over the field. WARM_UP_MIN_ROUNDS rounds over both fields always (one round left much of the cold
 * cost in place: the first, where the code is first compiled, takes ~150–250 ms, a later one ~50–80 ms),
 * then up to WARM_UP_ROUNDS while the warm-up is below WARM_UP_BUDGET_MS, so it stays near 0.3 s: a machine
 * busy with other work does fewer rounds rather than delay the thread more.
 */
import type { FileStore } from '../services.js';
import type { SweepThreads } from '../analysis/sweep-threads.js';
import { writeTiff16 } from '../db/seed/tiff.js';
import { Xoshiro128 } from '../../shared/analysis/prng.js';
import type { CellGeometry } from '../../shared/schemas/cells.js';
import { DEFAULT_RECIPE_SETTINGS, type RecipeSettings } from '../../shared/schemas/recipes.js';
import type { FieldJob } from './job.js';
import { dropSpareBuffers, runFieldJob } from './compute.js';

/** What a thread's warm-up did: its wall time, the fields it measured, and why it stopped early (null: it did not). */
export interface WarmUpReport {
  ms: number;
  fields: number;
  error: string | null;
}

/** The key of the message a pool thread posts when its warm-up ended (`{ [WARM_UP_MESSAGE]: WarmUpReport }`). */
export const WARM_UP_MESSAGE = 'syntopyWarmUp';

/** Rounds over the warm-up fields (each round: every field once): always the first two, at most three. */
export const WARM_UP_MIN_ROUNDS = 2;
export const WARM_UP_ROUNDS = 3;
/** No round beyond WARM_UP_MIN_ROUNDS starts once the warm-up has taken this long. */
export const WARM_UP_BUDGET_MS = 250;

/** the fields' edge in pixels; the layout below is drawn for 128 and scaled by S */
const SIZE = 128;
const S = SIZE / 128;

/** The warm-up cells: four polygons (12-gons around ellipses), an ellipse and a rectangle, none touching. */
const CELLS: CellGeometry[] = [
  ...[[30, 30], [98, 30], [30, 98], [98, 98]].map(([cx, cy], k): CellGeometry => ({
    kind: 'polygon',
    points: Array.from({ length: 12 }, (_, i) => {
      const a = (2 * Math.PI * i) / 12 + 0.2 * k;
      return [S * (cx + (18 + (i % 3)) * Math.cos(a)), S * (cy + (14 + (i % 2)) * Math.sin(a))] as [number, number];
    }),
  })),
  { kind: 'ellipse', cx: 64 * S, cy: 64 * S, rx: 10 * S, ry: 8 * S },
  { kind: 'rect', x: 52 * S, y: 2 * S, width: 24 * S, height: 16 * S },
];

/** Two channels: background ~100 with noise, cytoplasm inside the cells, seeded Gaussian puncta (40 % in both). */
function warmUpPixels(seed: number): [Uint16Array, Uint16Array] {
  const rng = new Xoshiro128(seed);
  const e1 = new Float64Array(SIZE * SIZE).fill(110);
  const e2 = new Float64Array(SIZE * SIZE).fill(120);
  const spot = (e: Float64Array, x: number, y: number, amp: number) => {
    for (let j = Math.max(0, Math.floor(y - 6)); j < Math.min(SIZE, y + 6); j++)
      for (let i = Math.max(0, Math.floor(x - 6)); i < Math.min(SIZE, x + 6); i++) e[j * SIZE + i] += amp * Math.exp(-((i + 0.5 - x) ** 2 + (j + 0.5 - y) ** 2) / (2 * 1.6 ** 2));
  };
  for (const [cx, cy, r] of [[30, 30, 15], [98, 30, 15], [30, 98, 15], [98, 98, 15], [64, 64, 8], [64, 10, 7]].map((c) => c.map((v) => v * S))) {
    for (let j = cy - r; j < cy + r; j++) for (let i = cx - r; i < cx + r; i++) ((e1[j * SIZE + i] += 150), (e2[j * SIZE + i] += 130));
    for (let k = 0; k < 8 * S * S; k++) {
      const x = cx + (rng.nextFloat() - 0.5) * 1.6 * r, y = cy + (rng.nextFloat() - 0.5) * 1.6 * r;
      const u = rng.nextFloat();
      // both channels below 0.4, channel 1 only up to 0.7, channel 2 only above
      if (u < 0.7) spot(e1, x, y, 800 + 2000 * rng.nextFloat());
      if (u < 0.4 || u >= 0.7) spot(e2, x + 0.3 * (rng.nextFloat() - 0.5), y, 700 + 2000 * rng.nextFloat());
    }
  }
  spot(e1, 8 * S, 120 * S, 90000);
  spot(e2, 8 * S, 120 * S, 90000);
  const out = (e: Float64Array) => Uint16Array.from(e, (v) => Math.min(65535, Math.round(v + 12 * (rng.nextFloat() - 0.5) * Math.sqrt(v / 10))));
  return [out(e1), out(e2)];
}

/** The warm-up fields as jobs, and the one thing a job reads from a store: `get` of their TIFFs, in memory. */
export function warmUpFields(): { store: Pick<FileStore, 'get'>; jobs: FieldJob[] } {
  const files = new Map<string, Buffer>();
  const jobs: FieldJob[] = [];
  const withSpots: RecipeSettings = { ...DEFAULT_RECIPE_SETTINGS, objects: { ...DEFAULT_RECIPE_SETTINGS.objects, enabled: true } };
  const calibrated: RecipeSettings = {
    ...DEFAULT_RECIPE_SETTINGS,
    calibration: 'approved',
    background: { method: 'constant', ch1: 100, ch2: 100 },
    threshold: { method: 'otsu' },
    thresholdScope: 'field',
  };
  for (const [k, settings] of [withSpots, calibrated].entries()) {
    const sources = warmUpPixels(9001 + k).map((px, c) => {
      const key = `warm-up/${k}-${c + 1}.tif`;
      const tif = writeTiff16(SIZE, SIZE, px);
      files.set(key, Buffer.from(tif.buffer, tif.byteOffset, tif.byteLength));
      return { key, sha256: key, channel: 1 };
    }) as FieldJob['sources'];
    const cells: FieldJob['cells'] = CELLS.map((geometry, i) => ({ id: i + 1, role: 'cell', geometry }));
    jobs.push({
      runId: 0,
      fieldId: k + 1,
      fieldName: `warm-up ${k + 1}`,
      sources,
      width: SIZE,
      height: SIZE,
      sizeZ: 1,
      bitDepth: 16,
      sampleFormat: 'uint',
      pixelSizeUm: null,
      zStepUm: null,
      cells,
      settings,
      recipe: { id: 0, name: 'warm-up', version: 1, status: 'approved' },
      provisional: false,
      calibration: settings.calibration === 'approved' ? { id: 0, instrumentId: 0, instrument: 'warm-up', version: 1, dx: 0.4, dy: -0.3, a21: 0.05, a12: 0.02 } : null,
      calibrationProblem: null,
      instrumentId: null,
    });
  }
  return {
    store: {
      get: async (key) => {
        const b = files.get(key);
        if (!b) throw new Error(`the warm-up has no file ${key}`);
        return b;
      },
    },
    jobs,
  };
}

/**
 * Runs the warm-up fields through `runFieldJob` (with the thread's sweep helpers, as a batch does) and
 * discards the results. Never rejects: a failing field ends the warm-up with that field's message in `error`.
 */
export async function warmUpRunPath(threads: SweepThreads | null, fields: () => ReturnType<typeof warmUpFields> = warmUpFields): Promise<WarmUpReport> {
  const t0 = performance.now();
  let done = 0;
  try {
    const { store, jobs } = fields();
    for (let round = 0; round < WARM_UP_ROUNDS && (round < WARM_UP_MIN_ROUNDS || performance.now() - t0 < WARM_UP_BUDGET_MS); round++)
      for (const job of jobs) {
        const r = await runFieldJob(store, job, threads);
        if (!r.ok) return { ms: performance.now() - t0, fields: done, error: `${job.fieldName}: ${r.error}` };
        done++;
      }
    return { ms: performance.now() - t0, fields: done, error: null };
  } catch (e) {
    return { ms: performance.now() - t0, fields: done, error: e instanceof Error ? e.message : String(e) };
  } finally {
    dropSpareBuffers();
  }
}
