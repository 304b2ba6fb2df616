/**
 * TIFF / OME-TIFF decoding shared by the intake routes and the `analyze` command.
 *
 * Every input is first walked with the bounded header reader (tiffheader.ts): magic bytes, page sizes,
 * sample layout, compression and data extents are checked against the pixel budget, and the whole file's
 * declared image data against the decoded-bytes budget, BEFORE any pixel is decoded; only then does
 * `geotiff` decode the chosen pages/samples, through our bounded codecs (codecs.ts), which refuse any strip
 * or tile that would unpack to more than its size.
 *
 * Channel model:
 *  - OME-TIFF (ImageDescription holds OME-XML, one sample per page): channels are the OME channels
 *    (SizeC), each with SizeZ slices (time point 0 of SizeT), planes located by DimensionOrder and TiffData.
 *    OME data model: Goldberg et al. 2005, Genome Biol. 6:R47, doi:10.1186/gb-2005-6-5-r47.
 *    Without TiffData the pages are the planes in order, and their number must be SizeC × SizeZ × SizeT.
 *  - plain multi-page TIFF whose ImageDescription states the sizes as `key=value` lines (`channels=`,
 *    `slices=`, `frames=`): pages ordered channel fastest, then slice, then time point; the page count must
 *    equal the stated product.
 *  - other plain TIFF: every full-resolution page contributes its samples as channels, in page order
 *    (page 1 samples 1..n, then page 2 ...); with `pages: 'slices'` (a per-channel stack) every page is
 *    a z slice of the one channel instead. Reduced-resolution pages (NewSubfileType bit 0) are skipped.
 *
 * Accepted pixel types: 8/16/32-bit unsigned integer and 32-bit IEEE float (TIFF 6.0 tag 339).
 * Accepted compression: none (1), LZW (5), Deflate (8, 32946), PackBits (32773), with or without the
 * horizontal (2) or floating-point (3) predictor.
 */
import fsp from 'node:fs/promises';
import { fromArrayBuffer } from 'geotiff';
import { checkRawSize } from './codecs.js';
import { XMLParser } from 'fast-xml-parser';
import { ImageInputError } from './errors.js';
import { plural } from '../../shared/format/plural.js';
import { bufferReader, checkPageExtents, MAX_PLANES, checkTrailingData, fileReader, pageBlocks, readTiffHeader, type ByteReader, type PageHeader, type TiffHeader } from './tiff-header.js';

export { ImageInputError };

export type PixelArray = Uint8Array | Uint16Array | Uint32Array | Float32Array;

export interface TiffChannelInfo {
  /** 1-based channel index as the user names it */
  index: number;
  name: string | null;
  /** width × height of this channel's planes (channels of a plain TIFF may differ) */
  width?: number;
  height?: number;
}

export interface TiffInfo {
  width: number;
  height: number;
  bitsPerSample: number; // 8, 16, 32
  sampleFormat: 'uint' | 'float';
  /** number of channels available (pages × samples for plain TIFF; SizeC for OME) */
  channelCount: number;
  channels: TiffChannelInfo[];
  /** z slices (1 unless OME z-stack) */
  sizeZ: number;
  sizeT: number;
  pixelSizeUm: number | null;
  bigTiff: boolean;
  compression: string;
  /** 'ome-tiff' | 'tiff' | 'bigtiff' | 'ome-bigtiff' */
  format?: string;
  /** OME DimensionOrder when present */
  dimensionOrder?: string | null;
  pageCount?: number;
  planar?: 'chunky' | 'planar';
  tiled?: boolean;
  fileSize?: number;
}

export interface DecodedPair {
  info: TiffInfo;
  width: number;
  height: number;
  /** one array per z slice for each channel; ch1[z].length === width*height */
  ch1: PixelArray[];
  ch2: PixelArray[];
}

export interface DecodeOptions {
  /** largest number of pixels in one plane, and of voxels in one channel (all z); default 2^28 */
  pixelBudget?: number;
  /** most bytes the image data of one file may unpack to (all pages, all samples); default 2 GiB */
  maxDecodedBytes?: number;
  /** how the pages of a plain multi-page file are read (default 'channels'; see `PlainPages`) */
  pages?: PlainPages;
}

/** Input: bytes in memory or a path to a local file (read with bounded reads for the checks). */
export type TiffInput = Uint8Array | string;

const DEFAULT_BUDGET = 2 ** 28;
/** Default for `maxDecodedBytes` (env MAX_DECODED_BYTES): 2 GiB, the default upload limit, so any uncompressed file that may be uploaded fits. */
export const DEFAULT_MAX_DECODED_BYTES = 2 ** 31;
/** most strips/tiles per page (keeps the offset tables of a hostile header small) */
const MAX_BLOCKS = 1 << 22;
const COMPRESSION_NAMES: Record<number, string> = { 1: 'none', 5: 'LZW', 8: 'Deflate', 32946: 'Deflate', 32773: 'PackBits' };
const UNSUPPORTED_COMPRESSION: Record<number, string> = { 2: 'CCITT', 3: 'CCITT G3', 4: 'CCITT G4', 6: 'old JPEG', 7: 'JPEG', 34712: 'JPEG 2000', 34887: 'LERC', 34925: 'LZMA', 50000: 'Zstandard', 50001: 'WebP' };

interface PlaneRef {
  page: number;
  sample: number;
}

interface Plan {
  header: TiffHeader;
  info: TiffInfo;
  /** planes[c-1][z] */
  planes: PlaneRef[][];
}

const fmtSize = (w: number, h: number) => `${w}×${h}`;

function compressionName(c: number) {
  return COMPRESSION_NAMES[c] ?? UNSUPPORTED_COMPRESSION[c] ?? `code ${c}`;
}

/** Checks that a page's pixel type and compression can be decoded. */
function checkPageSupported(p: PageHeader, channelLabel: string) {
  const bits = p.bitsPerSample[0];
  const fmt = p.sampleFormat[0];
  if (!COMPRESSION_NAMES[p.compression]) {
    throw new ImageInputError(`${channelLabel} uses ${compressionName(p.compression)} compression, which Syntopy does not read; save it uncompressed or with LZW, Deflate or PackBits`, 415);
  }
  if (p.bitsPerSample.some((b) => b !== bits) || p.sampleFormat.some((f) => f !== fmt)) {
    throw new ImageInputError(`${channelLabel} mixes sample types within one page (bits ${p.bitsPerSample.join('/')}); save each channel with the same type`, 415);
  }
  if (fmt === 3 && bits !== 32) throw new ImageInputError(`${channelLabel} holds ${bits}-bit floating-point pixels; only 32-bit float is supported`, 415);
  if (fmt === 2) throw new ImageInputError(`${channelLabel} holds signed ${bits}-bit integers; export unsigned 8/16/32-bit integers or 32-bit float`, 415);
  if (fmt !== 1 && fmt !== 3 && fmt !== 4) throw new ImageInputError(`${channelLabel} has sample format code ${fmt}, which is not supported`, 415);
  if ((fmt === 1 || fmt === 4) && bits !== 8 && bits !== 16 && bits !== 32) {
    throw new ImageInputError(`${channelLabel} has ${bits}-bit pixels; only 8, 16 and 32-bit integer or 32-bit float pixels are supported`, 415);
  }
  if (p.tiled && (p.tileWidth <= 0 || p.tileHeight <= 0 || p.tileWidth > 65536 || p.tileHeight > 65536)) {
    throw new ImageInputError(`${channelLabel} declares tiles of ${p.tileWidth}×${p.tileHeight} pixels; the file is damaged`);
  }
  const blocks = p.tiled ? Math.ceil(p.width / p.tileWidth) * Math.ceil(p.height / p.tileHeight) : Math.ceil(p.height / p.rowsPerStrip);
  if (blocks * (p.planar === 2 ? p.samplesPerPixel : 1) > MAX_BLOCKS) {
    throw new ImageInputError(`${channelLabel} is cut into ${blocks} ${p.tiled ? 'tiles' : 'strips'}, more than the ${MAX_BLOCKS} Syntopy reads; re-save it with larger strips or tiles`, 413);
  }
  if (p.photometric === 3) throw new ImageInputError(`${channelLabel} is a palette (indexed-colour) image, not intensity data`, 415);
  if (p.photometric === 6) throw new ImageInputError(`${channelLabel} is stored as YCbCr colour, not intensity data`, 415);
}

function checkBudget(p: PageHeader, budget: number, label: string) {
  if (!(p.width > 0 && p.height > 0)) throw new ImageInputError(`${label} declares an empty size of ${fmtSize(p.width, p.height)} pixels`);
  const px = p.width * p.height;
  if (px > budget) {
    throw new ImageInputError(
      `${label} declares ${fmtSize(p.width, p.height)} pixels (${px.toExponential(2)}), more than the limit of ${budget} pixels per plane; crop or bin the image before uploading`,
      413,
    );
  }
}

/**
 * What the image data of the whole file unpacks to, from the header alone (width × height × bits per pixel
 * of every page), against the decoded-bytes budget: checked before any block is decoded, so the budget
 * bounds every decode of the file whatever its compression ratio.
 */
export function declaredImageBytes(h: TiffHeader): number {
  let total = 0;
  for (const p of h.pages) total += p.width * p.height * Math.ceil(p.bitsPerSample.reduce((a, b) => a + b, 0) / 8);
  return total;
}

function checkDecodedBytes(h: TiffHeader, maxBytes: number) {
  const total = declaredImageBytes(h);
  if (total > maxBytes) {
    throw new ImageInputError(
      `the image data of this file (${h.pages.length} page${h.pages.length === 1 ? '' : 's'}) would unpack to ${total.toExponential(2)} bytes, more than the limit of ${maxBytes} bytes per file; export only the channels and slices to analyse`,
      413,
    );
  }
}

// ---------------------------------------------------------------- OME-XML

const xml = new XMLParser({
  ignoreAttributes: false,
  attributeNamePrefix: '',
  removeNSPrefix: true,
  parseAttributeValue: false,
  isArray: (name) => ['Image', 'Channel', 'TiffData', 'Plane'].includes(name),
});

const UNIT_TO_UM: Record<string, number> = { 'µm': 1, 'μm': 1, um: 1, micron: 1, nm: 1e-3, 'Å': 1e-4, pm: 1e-6, mm: 1e3, cm: 1e4, m: 1e6 };

interface OmeMeta {
  sizeC: number;
  sizeZ: number;
  sizeT: number;
  order: string;
  names: (string | null)[];
  pixelSizeUm: number | null;
  tiffData: { ifd: number; firstC: number; firstZ: number; firstT: number; planeCount: number | null }[];
}

function parseOme(desc: string | null): OmeMeta | null {
  if (!desc || !/<\s*(\w+:)?OME[\s>]/.test(desc)) return null;
  let doc: any;
  try {
    doc = xml.parse(desc);
  } catch (e) {
    throw new ImageInputError(`the file's OME-XML description could not be read (${(e as Error).message.split('\n')[0]})`);
  }
  const img = doc?.OME?.Image?.[0];
  const px = img?.Pixels;
  if (!px) return null;
  const int = (v: unknown, d: number) => {
    const n = Number(v);
    return Number.isInteger(n) && n > 0 ? n : d;
  };
  const sizeC = int(px.SizeC, 1);
  const sizeZ = int(px.SizeZ, 1);
  const sizeT = int(px.SizeT, 1);
  // checked before anything is sized by these numbers (channel names, the plane table)
  if (sizeC * sizeZ * sizeT > MAX_PLANES) {
    throw new ImageInputError(`the OME description claims ${sizeC} channels × ${sizeZ} slices × ${sizeT} time points, more than the ${MAX_PLANES} image planes Syntopy reads from one file`, 413);
  }
  const order = typeof px.DimensionOrder === 'string' && /^XY[ZCT]{3}$/.test(px.DimensionOrder) ? px.DimensionOrder : 'XYCZT';
  const chans: any[] = Array.isArray(px.Channel) ? px.Channel : [];
  const names = Array.from({ length: sizeC }, (_, i) => {
    const n = chans[i]?.Name;
    return typeof n === 'string' && n.trim() ? n.trim() : n != null && typeof n !== 'object' ? String(n) : null;
  });
  let pixelSizeUm: number | null = null;
  const ps = Number(px.PhysicalSizeX);
  if (Number.isFinite(ps) && ps > 0) {
    const unit = typeof px.PhysicalSizeXUnit === 'string' ? px.PhysicalSizeXUnit : 'µm';
    const f = UNIT_TO_UM[unit];
    pixelSizeUm = f ? ps * f : null;
  }
  const tiffData = (Array.isArray(px.TiffData) ? px.TiffData : []).map((t: any) => ({
    ifd: Number(t?.IFD ?? 0) || 0,
    firstC: Number(t?.FirstC ?? 0) || 0,
    firstZ: Number(t?.FirstZ ?? 0) || 0,
    firstT: Number(t?.FirstT ?? 0) || 0,
    planeCount: t?.PlaneCount != null ? Number(t.PlaneCount) || null : null,
  }));
  return { sizeC, sizeZ, sizeT, order, names, pixelSizeUm, tiffData };
}

/** Plane index of (c, z, t) under an OME DimensionOrder (letters after XY, fastest first). */
function planeIndex(order: string, sizes: Record<'C' | 'Z' | 'T', number>, idx: Record<'C' | 'Z' | 'T', number>) {
  const [a, b, c] = order.slice(2).split('') as ('C' | 'Z' | 'T')[];
  return idx[a] + sizes[a] * (idx[b] + sizes[b] * idx[c]);
}

// ---------------------------------------------------------------- plan

/**
 * Sizes stated in a plain multi-page file's ImageDescription as `key=value` lines (`channels=C`, `slices=Z`,
 * `frames=T`, optionally `images=N`), the pages ordered channel fastest, then slice, then time point. null
 * when the description is not made only of such lines or states none of the three sizes.
 */
export function parseStatedSizes(desc: string | null): { channels: number; slices: number; frames: number; images: number | null } | null {
  if (!desc) return null;
  const lines = desc.split(/\r?\n/).map((l) => l.trim()).filter((l) => l !== '');
  if (lines.length === 0 || !lines.every((l) => /^[A-Za-z][\w.]*=/.test(l))) return null;
  const kv = new Map(lines.map((l) => [l.slice(0, l.indexOf('=')).toLowerCase(), l.slice(l.indexOf('=') + 1).trim()]));
  if (!kv.has('channels') && !kv.has('slices') && !kv.has('frames')) return null;
  const count = (key: string): number | null => {
    const v = kv.get(key);
    if (v === undefined) return null;
    const n = Number(v);
    if (!/^\d+$/.test(v) || !Number.isSafeInteger(n) || n < 1) throw new ImageInputError(`the image description states ${key}=${JSON.stringify(v)}, which is not a whole number of at least 1`);
    return n;
  };
  const out = { channels: count('channels') ?? 1, slices: count('slices') ?? 1, frames: count('frames') ?? 1, images: count('images') };
  if (out.channels * out.slices * out.frames > MAX_PLANES) {
    throw new ImageInputError(`the image description states ${out.channels} channels × ${out.slices} slices × ${out.frames} time points, more than the ${MAX_PLANES} image planes Syntopy reads from one file`, 413);
  }
  return out;
}

const sizesText = (c: number, z: number, t: number) => `${plural(c, 'channel')} × ${plural(z, 'slice')} × ${plural(t, 'time point')} = ${plural(c * z * t, 'plane')}`;

/**
 * How the pages of a plain multi-page file (no OME-XML, no stated sizes) are read: as channels (a field's
 * file, the intake default) or as the z slices of one channel (a per-channel stack: `analyze --ch1/--ch2`,
 * label stacks).
 */
export type PlainPages = 'channels' | 'slices';

function planFromHeader(h: TiffHeader, plainPages: PlainPages = 'channels'): Plan {
  const ome = parseOme(h.description);
  const p0 = h.pages[0];
  const fullRes = h.pages.filter((p) => !(p.newSubfileType & 1) || p === p0);
  const singleSample = fullRes.every((p) => p.samplesPerPixel === 1);
  const stated = ome ? null : parseStatedSizes(h.description);
  const planes: PlaneRef[][] = [];
  const channels: TiffChannelInfo[] = [];
  let sizeZ = 1;
  let sizeT = 1;
  let pixelSizeUm: number | null = null;
  let dimensionOrder: string | null = null;
  if (ome && h.pages.every((p) => p.samplesPerPixel === 1)) {
    const sizes = { C: ome.sizeC, Z: ome.sizeZ, T: ome.sizeT };
    const total = ome.sizeC * ome.sizeZ * ome.sizeT;
    // without TiffData the planes are the pages in order, so the counts must agree
    if (ome.tiffData.length === 0 && fullRes.length !== total) {
      throw new ImageInputError(`the OME description declares ${sizesText(ome.sizeC, ome.sizeZ, ome.sizeT)}, but the file has ${plural(fullRes.length, 'page')}; the file is incomplete or its description is wrong`);
    }
    const ifdOf = new Array<number>(total);
    for (let i = 0; i < total; i++) ifdOf[i] = i;
    for (const td of ome.tiffData) {
      const start = planeIndex(ome.order, sizes, { C: td.firstC, Z: td.firstZ, T: td.firstT });
      const n = td.planeCount ?? (ome.tiffData.length === 1 ? total - start : 1);
      for (let k = 0; k < n && start + k < total; k++) ifdOf[start + k] = td.ifd + k;
    }
    for (let c = 0; c < ome.sizeC; c++) {
      const zs: PlaneRef[] = [];
      for (let z = 0; z < ome.sizeZ; z++) {
        const page = ifdOf[planeIndex(ome.order, sizes, { C: c, Z: z, T: 0 })];
        if (page >= h.pages.length) {
          throw new ImageInputError(`the OME description declares ${sizesText(ome.sizeC, ome.sizeZ, ome.sizeT)} and places channel ${c + 1}, slice ${z + 1} on page ${page + 1}, but the file has ${plural(h.pages.length, 'page')}; the file is incomplete or its description is wrong (multi-file OME datasets are not supported; upload a single-file OME-TIFF)`);
        }
        zs.push({ page, sample: 0 });
      }
      planes.push(zs);
      const pg = h.pages[zs[0].page];
      channels.push({ index: c + 1, name: ome.names[c], width: pg.width, height: pg.height });
    }
    sizeZ = ome.sizeZ;
    sizeT = ome.sizeT;
    pixelSizeUm = ome.pixelSizeUm;
    dimensionOrder = ome.order;
  } else if (stated && singleSample) {
    const total = stated.channels * stated.slices * stated.frames;
    if (stated.images !== null && stated.images !== total) {
      throw new ImageInputError(`the image description states images=${stated.images} but ${sizesText(stated.channels, stated.slices, stated.frames)}; the description is inconsistent`);
    }
    if (fullRes.length !== total) {
      throw new ImageInputError(`the image description states ${sizesText(stated.channels, stated.slices, stated.frames)}, but the file has ${plural(fullRes.length, 'page')}; the file is incomplete or its description is wrong`);
    }
    // channel fastest, then slice, then time point; time point 0 is read
    for (let c = 0; c < stated.channels; c++) {
      const zs: PlaneRef[] = [];
      for (let z = 0; z < stated.slices; z++) zs.push({ page: fullRes[c + stated.channels * z].index, sample: 0 });
      planes.push(zs);
      const pg = h.pages[zs[0].page];
      channels.push({ index: c + 1, name: null, width: pg.width, height: pg.height });
    }
    sizeZ = stated.slices;
    sizeT = stated.frames;
  } else if (plainPages === 'slices') {
    if (!singleSample) {
      const p = fullRes.find((q) => q.samplesPerPixel > 1)!;
      throw new ImageInputError(`page ${p.index + 1} holds ${p.samplesPerPixel} samples per pixel (colour or several channels); a per-channel stack has one sample per pixel on every page`, 415);
    }
    planes.push(fullRes.map((p) => ({ page: p.index, sample: 0 })));
    channels.push({ index: 1, name: null, width: p0.width, height: p0.height });
    sizeZ = fullRes.length;
  } else {
    for (const p of fullRes) {
      for (let s = 0; s < p.samplesPerPixel; s++) {
        planes.push([{ page: p.index, sample: s }]);
        const rgb = p.photometric === 2 && p.samplesPerPixel >= 3 ? (['red', 'green', 'blue'][s] ?? null) : null;
        channels.push({ index: channels.length + 1, name: rgb, width: p.width, height: p.height });
      }
    }
  }
  const bits = p0.bitsPerSample[0];
  const info: TiffInfo = {
    width: p0.width,
    height: p0.height,
    bitsPerSample: bits,
    sampleFormat: p0.sampleFormat[0] === 3 ? 'float' : 'uint',
    channelCount: channels.length,
    channels,
    sizeZ,
    sizeT,
    pixelSizeUm,
    bigTiff: h.bigTiff,
    compression: compressionName(p0.compression),
    format: `${ome ? 'ome-' : ''}${h.bigTiff ? 'bigtiff' : 'tiff'}`,
    dimensionOrder,
    pageCount: h.pages.length,
    planar: p0.samplesPerPixel > 1 && p0.planar === 2 ? 'planar' : 'chunky',
    tiled: p0.tiled,
    fileSize: h.fileSize,
  };
  return { header: h, info, planes };
}

async function withReader<T>(input: TiffInput, fn: (r: ByteReader) => Promise<T>): Promise<T> {
  let r: ByteReader;
  if (typeof input === 'string') {
    try {
      r = await fileReader(input);
    } catch (e) {
      throw new ImageInputError(`the file could not be opened (${(e as NodeJS.ErrnoException).code ?? 'error'})`);
    }
  } else r = bufferReader(input);
  try {
    return await fn(r);
  } finally {
    await r.close();
  }
}

async function planOf(r: ByteReader, opts: DecodeOptions): Promise<Plan> {
  const header = await readTiffHeader(r);
  checkBudget(header.pages[0], opts.pixelBudget ?? DEFAULT_BUDGET, 'the image');
  checkDecodedBytes(header, opts.maxDecodedBytes ?? DEFAULT_MAX_DECODED_BYTES);
  return planFromHeader(header, opts.pages);
}

/** Reads what the file holds (sizes, channels, type, OME metadata) with bounded reads; decodes no pixels. */
export async function readTiffInfo(input: TiffInput, opts: DecodeOptions = {}): Promise<TiffInfo> {
  return withReader(input, async (r) => (await planOf(r, opts)).info);
}

/** Checks a channel choice against the plan (exists, supported, within budget, data inside the file). */
async function checkChannel(r: ByteReader, plan: Plan, channel: number, label: string, budget: number) {
  const { info } = plan;
  if (!Number.isInteger(channel) || channel < 1 || channel > info.channelCount) {
    throw new ImageInputError(`${label}: the file has ${info.channelCount} channel${info.channelCount === 1 ? '' : 's'}, so channel ${JSON.stringify(channel)} does not exist`);
  }
  const zs = plan.planes[channel - 1];
  for (const ref of zs) {
    const p = plan.header.pages[ref.page];
    checkBudget(p, budget, label);
    checkPageSupported(p, label);
  }
  const p = plan.header.pages[zs[0].page];
  const voxels = p.width * p.height * zs.length;
  if (voxels > budget) {
    throw new ImageInputError(`${label} has ${zs.length} slices of ${fmtSize(p.width, p.height)} (${voxels.toExponential(2)} voxels), more than the limit of ${budget}`, 413);
  }
  for (const ref of zs) {
    const pg = plan.header.pages[ref.page];
    if (pg.width !== p.width || pg.height !== p.height) {
      throw new ImageInputError(`${label}: slice sizes differ (${fmtSize(pg.width, pg.height)} and ${fmtSize(p.width, p.height)})`);
    }
  }
  const pages = [...new Set(zs.map((z) => z.page))];
  for (const pi of pages) await checkPageExtents(r, plan.header, plan.header.pages[pi]);
  return { width: p.width, height: p.height, bits: p.bitsPerSample[0], float: p.sampleFormat[0] === 3 };
}

export interface ChannelCheck {
  info: TiffInfo;
  width: number;
  height: number;
  bitsPerSample: number;
  sampleFormat: 'uint' | 'float';
  sizeZ: number;
}

/** All checks for one channel of one file, without decoding pixels (used before moving an upload into the store). */
export async function checkChannel1(input: TiffInput, channel: number, label = `channel ${channel}`, opts: DecodeOptions = {}): Promise<ChannelCheck> {
  return withReader(input, async (r) => {
    const plan = await planOf(r, opts);
    const c = await checkChannel(r, plan, channel, label, opts.pixelBudget ?? DEFAULT_BUDGET);
    await checkTrailingData(r, plan.header);
    return { info: plan.info, width: c.width, height: c.height, bitsPerSample: c.bits, sampleFormat: c.float ? 'float' : 'uint', sizeZ: plan.planes[channel - 1].length };
  });
}

/** Checks that the two chosen channels agree (same size, type, number of slices); messages name both. */
export function checkPairCompatible(a: ChannelCheck, b: ChannelCheck) {
  if (a.width !== b.width || a.height !== b.height) {
    throw new ImageInputError(`channel 2 is ${fmtSize(b.width, b.height)} but channel 1 is ${fmtSize(a.width, a.height)}; both channels of a field must have the same size`);
  }
  if (a.bitsPerSample !== b.bitsPerSample || a.sampleFormat !== b.sampleFormat) {
    const d = (c: ChannelCheck) => `${c.bitsPerSample}-bit ${c.sampleFormat === 'float' ? 'float' : 'integer'}`;
    throw new ImageInputError(`channel 2 is ${d(b)} but channel 1 is ${d(a)}; export both channels with the same pixel type`);
  }
  if (a.sizeZ !== b.sizeZ) throw new ImageInputError(`channel 2 has ${b.sizeZ} z slices but channel 1 has ${a.sizeZ}`);
}

function toArrayBuffer(buf: Uint8Array): ArrayBuffer {
  if (buf.byteOffset === 0 && buf.byteLength === buf.buffer.byteLength && buf.buffer instanceof ArrayBuffer) return buf.buffer;
  return buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength) as ArrayBuffer;
}

async function decodePlanes(bytes: Uint8Array, plan: Plan, refs: PlaneRef[]): Promise<PixelArray[]> {
  try {
    const tiff = await fromArrayBuffer(toArrayBuffer(bytes));
    const out: PixelArray[] = [];
    for (const ref of refs) {
      const img = await tiff.getImage(ref.page);
      const r = (await img.readRasters({ samples: [ref.sample], interleave: false })) as unknown as PixelArray[];
      let a = r[0];
      if (a instanceof Int8Array || a instanceof Int16Array || a instanceof Int32Array || a instanceof Float64Array) {
        throw new ImageInputError(`page ${ref.page + 1} decoded to an unsupported pixel type`, 415);
      }
      if (a.length !== img.getWidth() * img.getHeight()) throw new ImageInputError(`page ${ref.page + 1} decoded to ${a.length} pixels, expected ${img.getWidth() * img.getHeight()}`);
      out.push(a);
    }
    return out;
  } catch (e) {
    if (e instanceof ImageInputError) throw e;
    throw new ImageInputError(`the image data could not be decoded; the file may be damaged (${String((e as Error)?.message ?? e).split('\n')[0].slice(0, 200)})`);
  }
}

async function bytesOf(input: TiffInput): Promise<Uint8Array> {
  return typeof input === 'string' ? fsp.readFile(input) : input;
}

/** Uncompressed strips with one sample per pixel (or planar layout): copied straight from the file. */
function canCopyDirect(p: PageHeader) {
  return p.compression === 1 && !p.tiled && (p.samplesPerPixel === 1 || p.planar === 2) && [8, 16, 32].includes(p.bitsPerSample[0]);
}

async function copyDirect(r: ByteReader, h: TiffHeader, p: PageHeader, sample: number): Promise<PixelArray> {
  const bps = p.bitsPerSample[0] / 8;
  const n = p.width * p.height;
  const bytes = new Uint8Array(n * bps);
  const { offsets, counts, perSample } = await pageBlocks(r, h, p);
  const rowBytes = p.width * bps;
  for (let k = 0; k < perSample; k++) {
    const idx = sample * (p.planar === 2 ? perSample : 0) + k;
    const start = k * p.rowsPerStrip * rowBytes;
    const want = Math.min(p.rowsPerStrip * rowBytes, bytes.length - start);
    if (want <= 0) break;
    if (counts[idx] < want) throw new ImageInputError(`the file is damaged: strip ${idx + 1} of page ${p.index + 1} holds ${counts[idx]} bytes, expected ${want}`);
    // as for every codec (codecs.ts): a stored block may be padded up to its full strip, never beyond
    checkRawSize(counts[idx], p.rowsPerStrip * rowBytes);
    const chunk = await r.read(offsets[idx], want);
    if (chunk.length < want) throw new ImageInputError(`the file is truncated inside the image data of page ${p.index + 1}`);
    bytes.set(chunk, start);
  }
  if (!h.littleEndian && bps > 1) {
    for (let i = 0; i < bytes.length; i += bps) {
      if (bps === 2) {
        const t = bytes[i];
        bytes[i] = bytes[i + 1];
        bytes[i + 1] = t;
      } else {
        let t = bytes[i];
        bytes[i] = bytes[i + 3];
        bytes[i + 3] = t;
        t = bytes[i + 1];
        bytes[i + 1] = bytes[i + 2];
        bytes[i + 2] = t;
      }
    }
  }
  const fmt = p.sampleFormat[0];
  if (bps === 1) return bytes;
  if (bps === 2) return new Uint16Array(bytes.buffer, 0, n);
  return fmt === 3 ? new Float32Array(bytes.buffer, 0, n) : new Uint32Array(bytes.buffer, 0, n);
}

/** Decodes planes: direct copies where the layout allows, geotiff otherwise (whole file read once). */
async function decodeInput(input: TiffInput, plan: Plan, refs: PlaneRef[]): Promise<PixelArray[]> {
  const out: (PixelArray | null)[] = refs.map(() => null);
  const rest: number[] = [];
  await withReader(input, async (r) => {
    for (let i = 0; i < refs.length; i++) {
      const p = plan.header.pages[refs[i].page];
      if (canCopyDirect(p)) out[i] = await copyDirect(r, plan.header, p, refs[i].sample);
      else rest.push(i);
    }
  });
  if (rest.length) {
    const dec = await decodePlanes(await bytesOf(input), plan, rest.map((i) => refs[i]));
    rest.forEach((i, k) => (out[i] = dec[k]));
  }
  return out as PixelArray[];
}

/** channels are 1-based. Decodes both channels, all z slices, after every check. */
export async function decodeChannels(input: TiffInput, channels: [number, number], opts: DecodeOptions = {}): Promise<DecodedPair> {
  const budget = opts.pixelBudget ?? DEFAULT_BUDGET;
  const plan = await withReader(input, async (r) => {
    const plan = await planOf(r, opts);
    if (plan.info.channelCount < 2) {
      throw new ImageInputError('this file has only one channel; a field needs two: choose a file with two or more channels, or pair it with a second single-channel file');
    }
    const a = await checkChannel(r, plan, channels[0], 'channel 1', budget);
    const b = await checkChannel(r, plan, channels[1], 'channel 2', budget);
    const mk = (c: typeof a, ch: number): ChannelCheck => ({ info: plan.info, width: c.width, height: c.height, bitsPerSample: c.bits, sampleFormat: c.float ? 'float' : 'uint', sizeZ: plan.planes[ch - 1].length });
    checkPairCompatible(mk(a, channels[0]), mk(b, channels[1]));
    return plan;
  });
  const all = await decodeInput(input, plan, [...plan.planes[channels[0] - 1], ...plan.planes[channels[1] - 1]]);
  const nz = plan.planes[channels[0] - 1].length;
  const ch1 = all.slice(0, nz);
  const ch2 = all.slice(nz);
  const p = plan.header.pages[plan.planes[channels[0] - 1][0].page];
  return { info: plan.info, width: p.width, height: p.height, ch1, ch2 };
}

/** Decode channel `channel` (1-based) of a single file: all z slices. */
export async function decodeChannel(input: TiffInput, channel: number, opts: DecodeOptions = {}): Promise<{ info: TiffInfo; slices: PixelArray[]; width: number; height: number }> {
  const budget = opts.pixelBudget ?? DEFAULT_BUDGET;
  const { plan, c } = await withReader(input, async (r) => {
    const plan = await planOf(r, opts);
    const c = await checkChannel(r, plan, channel, `channel ${channel}`, budget);
    return { plan, c };
  });
  const slices = await decodeInput(input, plan, plan.planes[channel - 1]);
  return { info: plan.info, slices, width: c.width, height: c.height };
}

/** Largest value the pixel type can hold (null for float). */
export function maxRepresentable(bitsPerSample: number, sampleFormat: 'uint' | 'float'): number | null {
  if (sampleFormat === 'float') return null;
  return 2 ** bitsPerSample - 1;
}
