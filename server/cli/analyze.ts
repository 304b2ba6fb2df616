/**
 * `npm run -s analyze -- (--ch1 A.tif --ch2 B.tif | --image X.tif --channels i,j)
 *    [--z all|N|A-B|mip|mip:A-B] [--mask LABELS.tif | --rois ROIS.json] [--threshold none|manual|otsu|costes] [--t1 N --t2 N] [--mic]
 *    [--objects [--spot-sigma PX] [--spot-k K] [--pair-distance PX] [--placements N] [--seed S]]
 *    [--measure-shift] [--shift DX,DY] [--bleed A21,A12] [--measure-bleed 1|2] [--json]`
 *
 * A contract other tools rely on: option names, JSON shape and exit codes stay as they are.
 *  - `--channels i,j` are 1-based channels of one file (pages, samples of RGB files, OME channels; the
 *    slices come from the OME metadata or the sizes the image description states). With `--ch1`/`--ch2`
 *    each file is one channel and its pages are the z slices.
 *  - `--z`: `all` (the default) measures every slice in 3D, voxel by voxel; `N` one slice (1-based); `A-B`
 *    slices A..B in 3D; `mip` / `mip:A-B` the maximum-intensity projection of all / of slices A..B
 *    (server/images/projection.ts), measured as one plane. The JSON states `depth` (planes measured: the
 *    slice count in 3D, 1 for one slice or a projection) and `z` ({ from, to, projection }).
 *  - `--mask`: label image (0 = background, each positive value one region, `label` = the value): one
 *    plane, applied to every measured slice, or a label stack with the image's slice count (3D regions: one
 *    value is one region across slices; only the measured slices take part).
 *  - `--rois`: JSON array of { "name": string, "points": [[x, y], ...], "z"?: [from, to] } polygons in pixel
 *    coordinates (x right, y down, origin at the top-left corner of pixel (0, 0)); pixel-centre even-odd
 *    rule; `z` (1-based, inclusive, default every slice) extrudes the polygon over slices from..to.
 *  - `pixels` counts voxels. Thresholds are computed once over the voxels of all regions (the whole volume
 *    when there are none); the default `none` means T1 = T2 = 0.
 *  - `--mic`: every region also gets `micE` and `ticE` (shared/analysis/mic.ts, α 0.6, c 15; TICe is the sum
 *    of the equicharacteristic matrix); without it the two keys are absent.
 *  - `--objects`: every region also gets `objects`, the object measures of `measureObjects`
 *    (shared/analysis/objects.ts) with exactly the keys of `OBJECT_RESULT_KEYS`; spot centres as [x, y] in
 *    the ROI coordinates above (a pixel's centre at +0.5). The settings used are echoed as `objectSettings`.
 *    `--seed` seeds the Monte Carlo placement test (the command runs no other randomized test). The spot
 *    options are an error without `--objects`. A stack measured in 3D (`--z all|A-B`, more than one slice)
 *    gets spots found in 3D (measureObjects3D), listed as [x, y, z] with z in slices of the stack (0-based,
 *    a slice's centre at +0.5), distances in pixel widths with z scaled by the slice spacing: `--z-step R`
 *    (z step / pixel size) or the file's OME voxel size, else an error; `objectSettings` then has `zStep`.
 *    The axial filter width is σz = σ / zStep slices (one physical width) unless `--spot-sigma-z SLICES` gives
 *    it (then echoed as `objectSettings.spotSigmaZ`; an error when the spots are not found in 3D).
 *  - Calibration (order: read → measure shift → align → measure bleed → unmix → measure):
 *    `--measure-shift` adds a top-level `"shift": { "dx", "dy" }` of the measured slices (channel 2 is
 *    displaced by (dx, dy): ch2(x + dx, y + dy) ≈ ch1(x, y); x right, y down, px; the whole image, z slices
 *    summed). `--shift DX,DY` samples channel 2 at (x + DX, y + DY) bilinearly (pixel (i, j) at integer
 *    position (i, j)); pixels whose position falls outside [0, W−1] × [0, H−1] are dropped from every
 *    region. `--measure-bleed 1|2` (a control labelled in channel 1 or 2; after `--shift`, over the union of
 *    the regions or the whole image) adds `"bleed": { "a21" }` or `{ "a12" }`. `--bleed A21,A12` unmixes
 *    o1 = t1 + A12·t2, o2 = A21·t1 + t2 per pixel, negatives set to 0 (after `--shift`). Corrected values
 *    are floating point. `--objects` detects spots on the aligned and unmixed channels; pixels without a
 *    value (dropped by `--shift`, or NaN in a float file) and the pixels within the spot filter's reach of
 *    one (⌈4σ⌉ + 1 px) are not searched, in either channel, nor used for the chance placements.
 *  - Exit 0 on success; 2 with one `error:` line on stderr for bad input; 1 for an internal failure
 *    (also one line). Never a stack trace.
 */
import { readFile, stat } from 'node:fs/promises';
import { parseArgs } from 'node:util';
import {
  collectPairs,
  computeThresholds,
  ENGINE_VERSION,
  extrudeIndices,
  labelRegions,
  maskToIndices,
  prepare,
  rasterize,
  type ChannelArray,
  type RegionResult,
  type ThresholdInfo,
  type ThresholdOptions,
  measureObjects,
  measureObjects3D,
  OBJECT_DEFAULTS,
  MIC_DEFAULTS,
  type ObjectResult,
  type Object3Result,
} from '../../shared/analysis/index';
import { alignAndUnmix, alignChannel, bleedThroughSlope, measureShift, unmixChannels } from '../../shared/analysis/index';
import { COEFFICIENTS, isPixelEntry } from '../../shared/coefficients';
import { formatCount, formatFixed, formatMagnitude, type NumberKind } from '../../shared/format/number';
import { decodeChannel, decodeChannels, ImageInputError, type PixelArray } from '../images/decode';
import { readLabelStack } from '../images/mask';
import { concatSlices, project } from '../images/projection';
import { measurePairsThreaded, SweepThreads, THREAD_MIN_PAIRS } from '../analysis/sweep-threads';

/** `--threads` default: this thread and one helper (the values are the same with any number) */
export const DEFAULT_THREADS = 2;

/** Bad input: exit code 2 and the message on one line. */
export class UsageError extends Error {}

const USAGE =
  'usage: npm run -s analyze -- (--ch1 A.tif --ch2 B.tif | --image X.tif --channels i,j) [--z all|N|A-B|mip|mip:A-B] [--mask LABELS.tif | --rois ROIS.json] [--threshold none|manual|otsu|costes] [--t1 N --t2 N] [--mic] [--objects [--spot-sigma PX] [--spot-k K] [--pair-distance PX] [--placements N] [--seed S] [--z-step R] [--spot-sigma-z SLICES]] [--measure-shift] [--shift DX,DY] [--bleed A21,A12] [--measure-bleed 1|2] [--threads N] [--json]';

/** What `--help` / `-h` prints (stdout, exit 0). */
export const HELP = [
  USAGE,
  '',
  'Co-localization coefficients of two channels, for the whole image or per region.',
  '',
  '  --ch1 A.tif --ch2 B.tif     the two channels as two single-channel TIFFs (their pages are z slices)',
  '  --image X.tif --channels i,j  one multi-channel TIFF and its two channels (1-based)',
  '  --z WHICH                   z slices of a stack: all (default, every slice in 3D, voxel by voxel),',
  '                              N (one slice, 1-based), A-B (slices A to B in 3D),',
  '                              mip or mip:A-B (maximum-intensity projection, measured as one plane)',
  '  --mask LABELS.tif           a label image: one region per non-zero label; one plane (used on every',
  '                              measured slice) or a stack with as many slices as the image (3D regions)',
  '  --rois ROIS.json            regions as a JSON array of polygons, each with an optional "z": [from, to]',
  '  --threshold METHOD          none (default), manual (with --t1 and --t2), otsu or costes',
  '  --t1 N --t2 N               manual thresholds of channel 1 and channel 2',
  `  --mic                       also compute MICe and TICe (Reshef et al. 2016; alpha ${MIC_DEFAULTS.alpha}, c ${MIC_DEFAULTS.c}),`,
  '                              up to about 0.5 s per 20,000 pixels; adds "micE" and "ticE" to each region',
  '  --objects                   also detect spots in each channel, pair them and test against chance;',
  '                              the seven options below need --objects; on a stack measured in 3D spots are',
  '                              found in 3D and listed as [x, y, z] (z in slices of the stack, 0-based, a',
  '                              slice centre at +0.5); distances in pixel widths with z scaled by --z-step',
  `  --spot-sigma PX             spot scale σ in pixels, in (0, 50] (default ${OBJECT_DEFAULTS.spotSigma})`,
  `  --spot-k K                  keep spots whose filter response exceeds K × the noise (default ${OBJECT_DEFAULTS.spotK})`,
  `  --pair-distance PX          a spot is paired when its nearest partner is at most PX away (default ${OBJECT_DEFAULTS.pairDistance})`,
  `  --placements N              random placements of the channel-2 spots for the p-value, 1 to 1000000 (default ${OBJECT_DEFAULTS.placements})`,
  `  --seed S                    seed of the placement test, an integer 0 to 4294967295 (default ${OBJECT_DEFAULTS.seed})`,
  '  --z-step R                  slice spacing in pixel widths (z step / pixel size) for spots in 3D;',
  '                              default from the file\'s voxel size (OME-XML), required when it states none',
  '  --spot-sigma-z SLICES       axial spot scale σz in slices for spots in 3D, in (0, 50] (default σ / --z-step:',
  '                              as wide along z as across the plane in the specimen)',
  '  --measure-shift             measure how far channel 2 is displaced from channel 1 (adds "shift": dx, dy in px)',
  '  --shift DX,DY               align first: sample channel 2 at (x + DX, y + DY); pixels that fall outside are dropped',
  '  --bleed A21,A12             remove bleed-through (after --shift): A21 of channel 1 seen in channel 2, A12 the reverse,',
  '                              each a fraction in [0, 1)',
  '  --measure-bleed 1|2         on a control labelled only in channel 1 (or 2): add "bleed": a21 (or a12)',
  `  --threads N                 threads for the pair sweep of regions of ${THREAD_MIN_PAIRS.toLocaleString('en-US')} pixels or more, 1 to 64`,
  `                              (default ${DEFAULT_THREADS}: this one and ${DEFAULT_THREADS - 1} helper); the values do not depend on it`,
  '  --json                      print JSON instead of a table',
  '  -h, --help                  print this help',
  '',
  'Exit status: 0 done; 2 bad input (one "error:" line); 1 internal failure.',
].join('\n');

interface Roi {
  name: string;
  points: [number, number][];
  /** 1-based inclusive slice range; absent = every slice */
  z?: [number, number];
}

/** Checks the --rois file shape; returns the first problem as a sentence, or the ROIs. */
function checkRois(v: unknown): Roi[] | string {
  if (!Array.isArray(v)) return `the top level is ${v === null ? 'null' : typeof v}, not an array`;
  for (let k = 0; k < v.length; k++) {
    const r = v[k] as { name?: unknown; points?: unknown } | null;
    if (typeof r !== 'object' || r === null || Array.isArray(r)) return `item ${k} is not an object`;
    if (typeof r.name !== 'string' || r.name === '') return `item ${k} has no "name" string`;
    if (!Array.isArray(r.points)) return `item ${k} ("${r.name}") has no "points" array`;
    if (r.points.length < 3) return `item ${k} ("${r.name}") has ${r.points.length} points, a polygon needs at least 3`;
    for (let j = 0; j < r.points.length; j++) {
      const p = r.points[j] as unknown;
      if (!Array.isArray(p) || p.length !== 2 || !p.every((c) => typeof c === 'number' && Number.isFinite(c)))
        return `item ${k} ("${r.name}") point ${j} is ${JSON.stringify(p)}, not [x, y] with two finite numbers`;
    }
    const z = (r as { z?: unknown }).z;
    if (z !== undefined && !(Array.isArray(z) && z.length === 2 && z.every((v) => Number.isInteger(v) && v >= 1) && z[0] <= z[1]))
      return `item ${k} ("${r.name}") has "z": ${JSON.stringify(z)}, not [from, to] with 1-based slice numbers, from ≤ to`;
  }
  return v as Roi[];
}

export interface CliOptions {
  ch1?: string;
  ch2?: string;
  image?: string;
  channels?: [number, number];
  mask?: string;
  rois?: string;
  /** which z slices are measured (see `--z`) */
  z: ZChoice;
  threshold: ThresholdOptions;
  /** the object settings when --objects was given, else null */
  objects: ObjectSettings | null;
  /** --z-step: slice spacing in pixel widths for spots in 3D (null: from the file's voxel size) */
  zStep?: number | null;
  /** --spot-sigma-z: axial spot scale in slices for spots in 3D (absent: σ / zStep) */
  spotSigmaZ?: number;
  /** --mic: MICe and TICe with the default parameters */
  mic: boolean;
  /** --measure-shift */
  measureShift: boolean;
  /** --shift DX,DY: channel 2 is sampled at (x + dx, y + dy) */
  shift: { dx: number; dy: number } | null;
  /** --bleed A21,A12 */
  bleed: { a21: number; a12: number } | null;
  /** --measure-bleed: the labelled channel of the control */
  measureBleed: 1 | 2 | null;
  /** --threads: threads for the pair sweep of big regions (default DEFAULT_THREADS) */
  threads?: number;
  json: boolean;
}

/** The object settings of one run, every option resolved (echoed in the JSON as `objectSettings`). */
export interface ObjectSettings {
  spotSigma: number;
  spotK: number;
  pairDistance: number;
  placements: number;
  seed: number;
}

/**
 * `--z`: slices from..to (1-based, inclusive; null = up to the first / last slice), measured in 3D or as
 * their maximum-intensity projection.
 */
export interface ZChoice {
  projection: 'mip' | null;
  from: number | null;
  to: number | null;
}

/** Reads `--z`; a bad value is a UsageError quoting it. The range is checked against the image later. */
export function parseZ(v: string | undefined): ZChoice {
  if (v === undefined || v === 'all') return { projection: null, from: null, to: null };
  if (v === 'mip') return { projection: 'mip', from: null, to: null };
  const m = /^(mip:)?(\d+)(?:-(\d+))?$/.exec(v);
  const bad = () => new UsageError(`--z must be all, N, A-B, mip or mip:A-B with 1-based slice numbers and A ≤ B, received ${JSON.stringify(v)}`);
  if (!m || (m[1] && m[3] === undefined)) throw bad();
  const from = Number(m[2]), to = m[3] === undefined ? from : Number(m[3]);
  if (!(from >= 1 && to >= from && Number.isSafeInteger(to))) throw bad();
  return { projection: m[1] ? 'mip' : null, from, to };
}

const OBJECT_FLAGS = ['spot-sigma', 'spot-k', 'pair-distance', 'placements', 'seed', 'z-step', 'spot-sigma-z'] as const;

/** Reads the --objects options; each bad value is a UsageError quoting what was received. */
function parseObjectSettings(get: (k: string) => string | undefined): ObjectSettings {
  const num = (flag: string, dflt: number) => {
    const v = get(flag);
    return v === undefined ? dflt : parseNumber(v, `--${flag}`);
  };
  const out: ObjectSettings = {
    spotSigma: num('spot-sigma', OBJECT_DEFAULTS.spotSigma),
    spotK: num('spot-k', OBJECT_DEFAULTS.spotK),
    pairDistance: num('pair-distance', OBJECT_DEFAULTS.pairDistance),
    placements: num('placements', OBJECT_DEFAULTS.placements),
    seed: num('seed', OBJECT_DEFAULTS.seed),
  };
  const q = (flag: string) => JSON.stringify(get(flag));
  if (!(out.spotSigma > 0 && out.spotSigma <= 50)) throw new UsageError(`--spot-sigma must be a number of pixels in (0, 50], received ${q('spot-sigma')}`);
  if (!(out.spotK > 0)) throw new UsageError(`--spot-k must be a positive number, received ${q('spot-k')}`);
  if (!(out.pairDistance >= 0)) throw new UsageError(`--pair-distance must be a non-negative number of pixels, received ${q('pair-distance')}`);
  if (!(Number.isInteger(out.placements) && out.placements >= 1 && out.placements <= 1_000_000))
    throw new UsageError(`--placements must be a whole number from 1 to 1000000, received ${q('placements')}`);
  if (!(Number.isInteger(out.seed) && out.seed >= 0 && out.seed <= 0xffffffff))
    throw new UsageError(`--seed must be a whole number from 0 to 4294967295, received ${q('seed')}`);
  return out;
}

/** "A,B" → two finite numbers, or a UsageError quoting the text (`names` say what A and B are). */
function parseNumberPair(v: string, opt: string, names: string): [number, number] {
  const m = /^([^,]+),([^,]+)$/.exec(v);
  const a = m ? Number(m[1]) : NaN, b = m ? Number(m[2]) : NaN;
  if (!m || m[1].trim() === '' || m[2].trim() === '' || !Number.isFinite(a) || !Number.isFinite(b))
    throw new UsageError(`${opt} must be two numbers ${names} separated by a comma, received ${JSON.stringify(v)}`);
  return [a, b];
}

function parseNumber(v: string, what: string): number {
  const n = Number(v);
  if (v.trim() === '' || !Number.isFinite(n)) throw new UsageError(`${what} must be a number, received ${JSON.stringify(v)}`);
  return n;
}

const OPTIONS = {
  ch1: { type: 'string' },
  ch2: { type: 'string' },
  image: { type: 'string' },
  channels: { type: 'string' },
  mask: { type: 'string' },
  rois: { type: 'string' },
  z: { type: 'string' },
  threshold: { type: 'string' },
  t1: { type: 'string' },
  t2: { type: 'string' },
  json: { type: 'boolean' },
  objects: { type: 'boolean' },
  mic: { type: 'boolean' },
  'spot-sigma': { type: 'string' },
  'spot-k': { type: 'string' },
  'pair-distance': { type: 'string' },
  placements: { type: 'string' },
  seed: { type: 'string' },
  'measure-shift': { type: 'boolean' },
  'z-step': { type: 'string' },
  'spot-sigma-z': { type: 'string' },
  shift: { type: 'string' },
  bleed: { type: 'string' },
  'measure-bleed': { type: 'string' },
  threads: { type: 'string' },
} as const;

/**
 * `--opt -1` → `--opt=-1` for options that take a value, so a negative number reaches the option's own
 * check (node's parseArgs would otherwise read "-1" as an option and refuse it as ambiguous).
 */
function joinNegativeValues(argv: string[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const name = argv[i].startsWith('--') ? argv[i].slice(2) : '';
    const next = argv[i + 1];
    if (Object.hasOwn(OPTIONS, name) && OPTIONS[name as keyof typeof OPTIONS].type === 'string' && next !== undefined && /^-[\d.]/.test(next)) {
      out.push(`${argv[i]}=${next}`);
      i++;
    } else out.push(argv[i]);
  }
  return out;
}

/** The parsed command line, or 'help' when --help / -h was given (then nothing else is checked). */
export function parseCli(argv: string[]): CliOptions | 'help' {
  if (argv.includes('--help') || argv.includes('-h')) return 'help';
  let values: Record<string, string | boolean | undefined>;
  try {
    ({ values } = parseArgs({ args: joinNegativeValues(argv), strict: true, allowPositionals: false, options: OPTIONS }));
  } catch (e) {
    throw new UsageError(`${(e as Error).message.split('\n')[0]}; ${USAGE}`);
  }
  const s = (k: string) => values[k] as string | undefined;
  const pairForm = s('ch1') !== undefined || s('ch2') !== undefined;
  const imageForm = s('image') !== undefined || s('channels') !== undefined;
  if (pairForm && imageForm) throw new UsageError('give either --ch1 and --ch2, or --image and --channels, not both');
  if (!pairForm && !imageForm) throw new UsageError(`no image given; ${USAGE}`);
  const out: CliOptions = { threshold: { method: 'none' }, z: parseZ(s('z')), objects: null, mic: values.mic === true, measureShift: values['measure-shift'] === true, shift: null, bleed: null, measureBleed: null, json: values.json === true };
  if (pairForm) {
    if (!s('ch1') || !s('ch2')) throw new UsageError(`--ch1 and --ch2 go together; received only ${s('ch1') ? '--ch1' : '--ch2'}`);
    out.ch1 = s('ch1');
    out.ch2 = s('ch2');
  } else {
    if (!s('image')) throw new UsageError('--channels needs --image');
    const c = s('channels');
    if (c === undefined) throw new UsageError('--image needs --channels i,j (1-based channel numbers)');
    const m = /^\s*(\d+)\s*,\s*(\d+)\s*$/.exec(c);
    if (!m || Number(m[1]) < 1 || Number(m[2]) < 1) throw new UsageError(`--channels must be two 1-based channel numbers like 1,2, received ${JSON.stringify(c)}`);
    out.image = s('image');
    out.channels = [Number(m[1]), Number(m[2])];
  }
  if (s('mask') !== undefined && s('rois') !== undefined) throw new UsageError('give either --mask or --rois, not both');
  out.mask = s('mask');
  out.rois = s('rois');
  const method = s('threshold') ?? 'none';
  if (!['none', 'manual', 'otsu', 'costes'].includes(method))
    throw new UsageError(`--threshold must be none, manual, otsu or costes, received ${JSON.stringify(method)}`);
  const t1 = s('t1'), t2 = s('t2');
  if (method === 'manual') {
    if (t1 === undefined || t2 === undefined) throw new UsageError('--threshold manual needs both --t1 and --t2');
    out.threshold = { method: 'manual', t1: parseNumber(t1, '--t1'), t2: parseNumber(t2, '--t2') };
  } else {
    if (t1 !== undefined || t2 !== undefined) throw new UsageError(`--t1 and --t2 apply to --threshold manual only, received --threshold ${method}`);
    out.threshold = { method } as ThresholdOptions;
  }
  const shift = s('shift');
  if (shift !== undefined) {
    const [dx, dy] = parseNumberPair(shift, '--shift', 'DX,DY (pixels)');
    out.shift = { dx, dy };
  }
  const bleed = s('bleed');
  if (bleed !== undefined) {
    const [a21, a12] = parseNumberPair(bleed, '--bleed', 'A21,A12 (fractions in [0, 1))');
    for (const [name, v] of [['A21', a21], ['A12', a12]] as const)
      if (!(v >= 0 && v < 1)) throw new UsageError(`--bleed ${name} must be a fraction in [0, 1), received ${JSON.stringify(bleed)}`);
    out.bleed = { a21, a12 };
  }
  const mb = s('measure-bleed');
  if (mb !== undefined) {
    if (mb !== '1' && mb !== '2') throw new UsageError(`--measure-bleed must be 1 or 2 (the labelled channel of the control), received ${JSON.stringify(mb)}`);
    out.measureBleed = mb === '1' ? 1 : 2;
  }
  const th = s('threads');
  if (th !== undefined) {
    if (!/^\d+$/.test(th.trim()) || Number(th) < 1 || Number(th) > 64) throw new UsageError(`--threads must be a whole number from 1 to 64, received ${JSON.stringify(th)}`);
    out.threads = Number(th);
  }
  if (values.objects === true) {
    out.objects = parseObjectSettings(s);
    const zs = s('z-step');
    if (zs !== undefined) {
      const v = parseNumber(zs, '--z-step');
      if (!(v > 0 && v <= 1000)) throw new UsageError(`--z-step must be the slice spacing in pixel widths (z step / pixel size), a number in (0, 1000], received ${JSON.stringify(zs)}`);
      out.zStep = v;
    }
    const sz = s('spot-sigma-z');
    if (sz !== undefined) {
      const v = parseNumber(sz, '--spot-sigma-z');
      if (!(v > 0 && v <= 50)) throw new UsageError(`--spot-sigma-z must be a number of slices in (0, 50], received ${JSON.stringify(sz)}`);
      out.spotSigmaZ = v;
    }
  } else {
    const given = OBJECT_FLAGS.filter((f) => s(f) !== undefined);
    if (given.length > 0) throw new UsageError(`${given.map((f) => `--${f}`).join(', ')} ${given.length === 1 ? 'applies' : 'apply'} to --objects only; add --objects or leave ${given.length === 1 ? 'it' : 'them'} out`);
  }
  return out;
}

async function mustExist(path: string, opt: string): Promise<void> {
  try {
    const st = await stat(path);
    if (!st.isFile()) throw new UsageError(`${opt} ${path}: not a file`);
  } catch (e) {
    if (e instanceof UsageError) throw e;
    const code = (e as NodeJS.ErrnoException).code;
    throw new UsageError(`${opt} ${path}: ${code === 'ENOENT' ? 'no such file' : `cannot be read (${code ?? 'error'})`}`);
  }
}

/** Runs `what`, prefixing image errors with the option and path they concern. */
async function about<T>(opt: string, path: string, what: () => Promise<T>): Promise<T> {
  try {
    return await what();
  } catch (e) {
    if (e instanceof ImageInputError) throw new UsageError(`${opt} ${path}: ${e.message}`);
    throw e;
  }
}

/** The sum over z of a stack (Float64, one plane): the lateral shift of a stack is measured on it. */
function sumSlices(ch: ChannelArray, plane: number, nz: number): Float64Array {
  const out = new Float64Array(plane);
  for (let z = 0; z < nz; z++) for (let i = 0; i < plane; i++) out[i] += ch[z * plane + i];
  return out;
}


export interface AnalyzeOutput {
  engineVersion: string;
  width: number;
  height: number;
  /** z slices in the image */
  slices: number;
  /** planes measured: the slice count measured in 3D, 1 for one slice or a projection */
  depth: number;
  /** the measured slices (1-based, inclusive) and whether they were projected */
  z: { from: number; to: number; projection: 'mip' | null };
  thresholds: ThresholdInfo;
  /** present with --objects: the settings every region's `objects` was measured with */
  objectSettings?: ObjectSettings & { zStep?: number; spotSigmaZ?: number };
  /** present with --measure-shift: channel 2's displacement, ch2(x + dx, y + dy) ≈ ch1(x, y), in pixels */
  shift?: { dx: number | null; dy: number | null };
  /** present with --measure-bleed: the coefficient of the control's labelled channel */
  bleed?: { a21: number | null } | { a12: number | null };
  /** `micE` and `ticE` are present with --mic only */
  regions: (Omit<RegionResult, 'thresholds' | 'micE' | 'ticE'> & Partial<Pick<RegionResult, 'micE' | 'ticE'>> & { label: number | string; objects?: ObjectResult | Object3Result })[];
}

/** The --z choice resolved against the image's slice count (1-based, inclusive). */
function resolveZ(z: ZChoice, nz: number): { from: number; to: number; projection: 'mip' | null } {
  const from = z.from ?? 1, to = z.to ?? nz;
  if (to > nz) {
    const asked = z.from === z.to ? `slice ${z.from}` : `slices ${z.from}-${z.to}`;
    throw new UsageError(`--z asks for ${asked}, but the image has ${nz} z slice${nz === 1 ? '' : 's'}`);
  }
  return { from, to, projection: z.projection };
}

/** Region voxel indices in the measured volume (depth planes of width × height, measured slice `from` first). */
type Region = { label: number | string; indices: Uint32Array | null };

export async function analyze(o: CliOptions): Promise<AnalyzeOutput> {
  let width: number, height: number, s1: PixelArray[], s2: PixelArray[];
  /** the files' voxel size, when stated (OME-XML PhysicalSizeX / PhysicalSizeZ) */
  let voxel: { pixelSizeUm: number | null; zStepUm: number | null } = { pixelSizeUm: null, zStepUm: null };
  if (o.image) {
    const path = o.image;
    await mustExist(path, '--image');
    const d = await about('--image', path, () => decodeChannels(path, o.channels!));
    ({ width, height } = d);
    s1 = d.ch1;
    s2 = d.ch2;
    voxel = { pixelSizeUm: d.info.pixelSizeUm, zStepUm: d.info.zStepUm };
  } else {
    const p1 = o.ch1!, p2 = o.ch2!;
    await mustExist(p1, '--ch1');
    await mustExist(p2, '--ch2');
    const a = await about('--ch1', p1, () => decodeChannel(p1, 1, { pages: 'slices' }));
    const b = await about('--ch2', p2, () => decodeChannel(p2, 1, { pages: 'slices' }));
    if (a.width !== b.width || a.height !== b.height)
      throw new UsageError(`--ch2 ${p2} is ${b.width}×${b.height} but --ch1 ${p1} is ${a.width}×${a.height}; both channels must have the same size`);
    if (a.slices.length !== b.slices.length)
      throw new UsageError(`--ch2 ${p2} has ${b.slices.length} z slices but --ch1 ${p1} has ${a.slices.length}`);
    ({ width, height } = a);
    s1 = a.slices;
    s2 = b.slices;
    voxel = { pixelSizeUm: a.info.pixelSizeUm, zStepUm: a.info.zStepUm };
  }
  const nz = s1.length;
  const z = resolveZ(o.z, nz);
  const z0 = z.from - 1, z1 = z.to - 1;
  const depth = z.projection ? 1 : z.to - z.from + 1;
  const plane = width * height;
  // the measured volume: slices z0..z1 one after the other, or their projection
  let ch1: ChannelArray = z.projection ? project(s1, z0, z1) : concatSlices(s1, z0, z1);
  let ch2: ChannelArray = z.projection ? project(s2, z0, z1) : concatSlices(s2, z0, z1);
  // helper threads for the pair sweep of big regions, started now so that they are ready when it comes
  const nThreads = o.threads ?? DEFAULT_THREADS;
  const threads = nThreads > 1 && ch1.length >= THREAD_MIN_PAIRS ? new SweepThreads(nThreads - 1) : null;
  try {
    const measured: Pick<AnalyzeOutput, 'shift' | 'bleed'> = {};
    if (o.measureShift) {
      const r = depth === 1 ? measureShift(ch1, ch2, width, height) : measureShift(sumSlices(ch1, plane, depth), sumSlices(ch2, plane, depth), width, height);
      measured.shift = { dx: r.dx, dy: r.dy };
    }
    // alignment and unmixing in one pass when nothing needs the aligned channel 2 on its own (--measure-bleed does)
    const fused = o.shift !== null && o.bleed !== null && o.measureBleed === null;
    if (o.shift && !fused) ch2 = alignChannel(ch2, width, height, o.shift.dx, o.shift.dy, depth);
    // spots in 3D need the slice spacing in pixel widths: --z-step, or the files' voxel size
    let zStep: number | null = null;
    if (o.objects && depth > 1) {
      zStep = o.zStep ?? (voxel.pixelSizeUm && voxel.zStepUm ? voxel.zStepUm / voxel.pixelSizeUm : null);
      if (zStep === null)
        throw new UsageError(`--objects in 3D (${depth} z slices) needs the slice spacing: give --z-step (z step / pixel size, e.g. 2.5 for 0.1 µm pixels and 0.25 µm steps), or a file that states its voxel size`);
    }
    if (o.spotSigmaZ !== undefined && zStep === null)
      throw new UsageError(`--spot-sigma-z applies to spots found in 3D, but ${depth === 1 ? 'one plane is measured' : 'the spots are found in one plane'} here (received ${JSON.stringify(String(o.spotSigmaZ))}); measure several slices in 3D with --z or leave it out`);
    let regions: Region[] = [{ label: 0, indices: null }];
    if (o.mask) {
      const path = o.mask;
      await mustExist(path, '--mask');
      const lab = await about('--mask', path, () => readLabelStack(path, { width, height }));
      const lz = lab.slices.length;
      if (lz === 1) regions = labelRegions(lab.slices[0]).map((r) => ({ label: r.label, indices: extrudeIndices(r.indices, plane, 0, depth - 1) }));
      else if (lz !== nz) throw new UsageError(`--mask ${path} has ${lz} slices but the image has ${nz}; give a label stack with ${nz} slices or one plane`);
      else if (z.projection) throw new UsageError(`--mask ${path} is a label stack of ${lz} slices, but --z ${z.projection} measures one projected plane; give a one-plane label image or measure in 3D`);
      else regions = labelRegions(concatSlices(lab.slices, z0, z1)).map((r) => ({ label: r.label, indices: r.indices }));
    } else if (o.rois) {
      const path = o.rois;
      await mustExist(path, '--rois');
      let parsed: unknown;
      try {
        parsed = JSON.parse(await readFile(path, 'utf8'));
      } catch (e) {
        throw new UsageError(`--rois ${path}: not valid JSON (${(e as Error).message.split('\n')[0]})`);
      }
      const rois = checkRois(parsed);
      if (typeof rois === 'string') throw new UsageError(`--rois ${path}: expected an array of { "name": string, "points": [[x, y], ...], "z"?: [from, to] }; ${rois}`);
      regions = rois.map((roi, k) => {
        const inPlane = maskToIndices(rasterize({ kind: 'polygon', points: roi.points }, width, height));
        if (!roi.z) return { label: roi.name, indices: extrudeIndices(inPlane, plane, 0, depth - 1) };
        if (roi.z[1] > nz) throw new UsageError(`--rois ${path}: item ${k} ("${roi.name}") has "z": ${JSON.stringify(roi.z)}, but the image has ${nz} z slice${nz === 1 ? '' : 's'}`);
        if (z.projection) throw new UsageError(`--rois ${path}: item ${k} ("${roi.name}") has "z", but --z ${z.projection} measures one projected plane; leave "z" out or measure in 3D`);
        // the ROI's slices within the measured ones (none: an empty region, its measures null)
        return { label: roi.name, indices: extrudeIndices(inPlane, plane, Math.max(roi.z[0] - 1, z0) - z0, Math.min(roi.z[1] - 1, z1) - z0) };
      });
    }
    const whole = regions.length === 1 && regions[0].indices === null;
    // thresholds once over the union of all regions' voxels
    let union: Uint32Array | null = null;
    if (!whole) {
      const m = new Uint8Array(ch1.length);
      for (const r of regions) for (const i of r.indices!) m[i] = 1;
      union = maskToIndices(m);
    }
    if (o.measureBleed !== null) {
      const region = union === null ? null : { kind: 'indices' as const, indices: union };
      measured.bleed = o.measureBleed === 1 ? { a21: bleedThroughSlope(ch1, ch2, region) } : { a12: bleedThroughSlope(ch2, ch1, region) };
    }
    // channel 2 is the command's own copy once aligned, so the unmixed channel 2 may overwrite it
    if (fused) ({ t1: ch1, t2: ch2 } = alignAndUnmix(ch1, ch2, width, height, o.shift!.dx, o.shift!.dy, o.bleed!.a21, o.bleed!.a12, depth));
    else if (o.bleed) ({ t1: ch1, t2: ch2 } = unmixChannels(ch1, ch2, o.bleed.a21, o.bleed.a12, { reuse: o.shift !== null }));
    // (none/manual need no pixels; with no regions the union is the one region, so its pairs are reused)
    const needsPixels = o.threshold.method === 'otsu' || o.threshold.method === 'costes';
    const unionPairs = needsPixels ? prepare(collectPairs(ch1, ch2, union === null ? null : { kind: 'indices', indices: union })) : null;
    const thresholds = computeThresholds(unionPairs ?? prepare({ n: 0, x: new Uint16Array(0), y: new Uint16Array(0), integer: true }), o.threshold);
    const results = [];
    for (const r of regions) {
      const pairs = r.indices === null && unionPairs ? unionPairs : collectPairs(ch1, ch2, r.indices === null ? null : { kind: 'indices', indices: r.indices });
      const { thresholds: _t, micE, ticE, ...computed } = await measurePairsThreaded(threads, pairs, thresholds, o.mic ? { mic: MIC_DEFAULTS } : {});
      const rest = o.mic ? { ...computed, micE, ticE } : computed;
      if (!o.objects) {
        results.push({ label: r.label, ...rest });
        continue;
      }
      // on the aligned and unmixed channels; pixels without a value (dropped by --shift, NaN in a float
      // file) and those within the filter's reach of one are not searched in either channel
      if (zStep !== null) {
        // spots in the measured volume; z reported in slices of the stack (0-based, centre of slice at +0.5)
        const v = measureObjects3D(ch1, ch2, width, height, depth, r.indices, { ...o.objects, zScale: zStep, spotSigmaZ: o.spotSigmaZ, missing: 'exclude' });
        const shiftZ = (p: [number, number, number][]) => p.map(([x, y, zz]): [number, number, number] => [x, y, zz + z0]);
        results.push({ label: r.label, ...rest, objects: { ...v, spots1: shiftZ(v.spots1), spots2: shiftZ(v.spots2) } });
        continue;
      }
      // one measured plane here, so the region's indices are plane indices
      const objects = measureObjects(ch1, ch2, width, height, r.indices, { ...o.objects, missing: 'exclude' });
      results.push({ label: r.label, ...rest, objects });
    }
    return { engineVersion: ENGINE_VERSION, width, height, slices: nz, depth, z, thresholds, ...(o.objects ? { objectSettings: zStep === null ? o.objects : { ...o.objects, zStep, ...(o.spotSigmaZ !== undefined && { spotSigmaZ: o.spotSigmaZ }) } } : {}), ...measured, regions: results };
  } finally {
    await threads?.close();
  }
}

/** Terminal numbers: 4 decimals (p-values in scientific notation), "n/a" when undefined, never "-0.0000". */
const fmt = (v: number | null, kind: NumberKind) => (v === null ? 'n/a' : kind === 'pValue' ? formatMagnitude(v) : kind === 'count' ? formatCount(v) : formatFixed(v, 4));
const fmtT = (v: number | null) => (v === null ? 'n/a' : Number.isInteger(v) ? String(v) : formatFixed(v, 3));

/** The registry measures with a terminal header (`cliLabel`, shared/coefficients.ts), in registry order. */
const CLI_COLUMNS = COEFFICIENTS.filter(isPixelEntry).filter((c) => c.cliLabel !== null);

type OutRegion = AnalyzeOutput['regions'][number];

/** Right-aligned columns under a header row (the first column left-aligned). */
function columns(cols: [string, (r: OutRegion) => string][], regions: OutRegion[]): string[] {
  const rows = [cols.map((c) => c[0]), ...regions.map((r) => cols.map((c) => c[1](r)))];
  const widths = cols.map((_, k) => Math.max(...rows.map((row) => row[k].length)));
  return rows.map((row) => row.map((v, k) => (k === 0 ? v.padEnd(widths[k]) : v.padStart(widths[k]))).join('  '));
}

/** The objects section: spot counts, paired fractions, mutual pairs, chance fraction and the p-value. */
function objectLines(out: AnalyzeOutput): string[] {
  const o = out.objectSettings!;
  const ob = (r: OutRegion) => r.objects!;
  return [
    '',
    `objects · spot σ ${o.spotSigma} px, k ${o.spotK}, pair distance ${o.pairDistance} px, ${o.placements} placements, seed ${o.seed}`,
    ...columns(
      [
        ['region', (r) => String(r.label)],
        ['spots1', (r) => fmt(ob(r).count1, 'count')],
        ['spots2', (r) => fmt(ob(r).count2, 'count')],
        ['paired1', (r) => fmt(ob(r).paired1, 'fraction')],
        ['paired2', (r) => fmt(ob(r).paired2, 'fraction')],
        ['mutual', (r) => fmt(ob(r).mutualPairs, 'count')],
        ['chance1', (r) => fmt(ob(r).chanceFraction1, 'fraction')],
        ['p', (r) => fmt(ob(r).pValue, 'pValue')],
      ],
      out.regions,
    ),
  ];
}

function zText(z: AnalyzeOutput['z']): string {
  const range = z.from === z.to ? `slice ${z.from}` : `slices ${z.from}-${z.to}`;
  return z.projection ? `maximum projection of ${range}` : z.from === z.to ? range : `${range} in 3D`;
}

export function formatTable(out: AnalyzeOutput): string {
  const t = out.thresholds;
  const lines = [
    `image ${out.width}×${out.height}${out.slices > 1 ? ` × ${out.slices} slices · ${zText(out.z)}` : ''} · thresholds ${t.method}: ch1 > ${fmtT(t.ch1)}, ch2 > ${fmtT(t.ch2)}`,
  ];
  const cols: [string, (r: OutRegion) => string][] = [
    ['region', (r) => String(r.label)],
    // measures computed on request only (MICe/TICe) are columns when the regions carry them
    ...CLI_COLUMNS.filter((c) => out.regions.length === 0 || c.key in out.regions[0]).map((c): [string, (r: OutRegion) => string] => [c.cliLabel!, (r) => fmt(r[c.key] ?? null, c.format)]),
  ];
  if (out.shift) lines.push(`shift of channel 2: dx ${out.shift.dx === null ? 'n/a' : formatFixed(out.shift.dx, 2)} px, dy ${out.shift.dy === null ? 'n/a' : formatFixed(out.shift.dy, 2)} px`);
  if (out.bleed) lines.push('a21' in out.bleed ? `bleed-through a21 ${fmt(out.bleed.a21, 'fraction')}` : `bleed-through a12 ${fmt(out.bleed.a12, 'fraction')}`);
  lines.push(...columns(cols, out.regions));
  if (out.regions.length === 0) lines.push('(the label image has no regions)');
  else if (out.objectSettings) lines.push(...objectLines(out));
  return lines.join('\n');
}

function oneLine(s: string): string {
  return s.replace(/\s*\n\s*/g, ' ').trim();
}

export async function main(argv: string[]): Promise<number> {
  try {
    const o = parseCli(argv);
    if (o === 'help') {
      process.stdout.write(HELP + '\n');
      return 0;
    }
    const out = await analyze(o);
    process.stdout.write(o.json ? JSON.stringify(out) + '\n' : formatTable(out) + '\n');
    return 0;
  } catch (e) {
    if (e instanceof UsageError || e instanceof ImageInputError || e instanceof RangeError) {
      process.stderr.write(`error: ${oneLine(e.message)}\n`);
      return 2;
    }
    process.stderr.write(`error: internal failure: ${oneLine(String((e as Error)?.message ?? e))}\n`);
    return 1;
  }
}

// run when executed directly (not when imported by tests)
const isMain = (() => {
  try {
    return import.meta.url === new URL(`file://${process.argv[1]}`).href || /analyze\.ts$/.test(process.argv[1] ?? '');
  } catch {
    return false;
  }
})();
if (isMain) {
  process.on('uncaughtException', (e) => {
    process.stderr.write(`error: internal failure: ${oneLine(String((e as Error)?.message ?? e))}\n`);
    process.exit(1);
  });
  main(process.argv.slice(2)).then((code) => {
    process.exitCode = code;
  });
}
