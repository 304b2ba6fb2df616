/**
 * The one binary format for a field's raw pixels on the wire (GET /api/fields/:id/pixels): the server encodes
 * with `encodePixels`, the browser decodes with `decodePixels`. Pure TypeScript on typed arrays (no DOM, no
 * Node APIs), so both sides import the same code.
 *
 * Layout (all numbers little-endian):
 *
 *   offset  size  field
 *        0     4  magic "SYPX"
 *        4     1  format version (1)
 *        5     1  sample type: 1 uint8 · 2 uint16 · 3 uint32 · 4 float32 (IEEE 754 binary32)
 *        6     1  channel count (2: channel 1 then channel 2)
 *        7     1  bit depth as recorded for the field (8, 12, 16, 32…; ≤ the sample type's width)
 *        8     4  width  (uint32)
 *       12     4  height (uint32)
 *       16     4  depth: planes per channel (uint32; 1 for one z slice or a projection)
 *       20     4  reserved (0)
 *       24     …  body: channel-major, then plane, then row-major samples:
 *                 ch1 plane 0 … ch1 plane depth−1, ch2 plane 0 … ch2 plane depth−1
 *
 * The header is 24 bytes, a multiple of every sample size, so the body can be viewed in place. The body must
 * be exactly channels × depth × width × height samples: a truncated or oversized message is rejected, and
 * every rejection quotes the value received.
 */

export const PIXELS_MAGIC = 'SYPX';
export const PIXELS_VERSION = 1;
export const PIXELS_HEADER_BYTES = 24;
export const PIXELS_CONTENT_TYPE = 'application/vnd.syntopy.pixels';

export type SampleType = 'uint8' | 'uint16' | 'uint32' | 'float32';
export type SampleArray = Uint8Array | Uint16Array | Uint32Array | Float32Array;

const CODES: Record<SampleType, number> = { uint8: 1, uint16: 2, uint32: 3, float32: 4 };
const BYTES: Record<SampleType, number> = { uint8: 1, uint16: 2, uint32: 4, float32: 4 };
const TYPES = Object.keys(CODES) as SampleType[];

export interface PixelPlanes {
  width: number;
  height: number;
  /** planes per channel */
  depth: number;
  /** bit depth recorded for the field (informational; the sample type decides the storage) */
  bitDepth: number;
  sampleType: SampleType;
  /** each depth × width × height samples, plane after plane */
  ch1: SampleArray;
  ch2: SampleArray;
}

/** Input or message that does not follow the format; the message quotes the value received. */
export class PixelCodecError extends Error {
  override name = 'PixelCodecError';
}

/** The sample type of a typed array, or an error naming what was given. */
export function sampleTypeOf(a: unknown): SampleType {
  if (a instanceof Uint8Array) return 'uint8';
  if (a instanceof Uint16Array) return 'uint16';
  if (a instanceof Uint32Array) return 'uint32';
  if (a instanceof Float32Array) return 'float32';
  const name = a === null ? 'null' : typeof a === 'object' ? (a as object).constructor?.name ?? 'object' : typeof a;
  throw new PixelCodecError(`pixel samples must be a Uint8Array, Uint16Array, Uint32Array or Float32Array, got ${name}`);
}

function checkDim(name: string, v: unknown, max = 2 ** 32 - 1): number {
  if (typeof v !== 'number' || !Number.isInteger(v) || v < 1 || v > max) throw new PixelCodecError(`${name} must be an integer from 1 to ${max}, got ${JSON.stringify(v)}`);
  return v;
}

/** Encodes two channels of the same sample type and shape into one message (header + body). */
export function encodePixels(p: PixelPlanes): Uint8Array {
  const width = checkDim('width', p.width);
  const height = checkDim('height', p.height);
  const depth = checkDim('depth', p.depth);
  const bitDepth = checkDim('bitDepth', p.bitDepth, 255);
  const t1 = sampleTypeOf(p.ch1);
  const t2 = sampleTypeOf(p.ch2);
  if (t1 !== p.sampleType || t2 !== p.sampleType) throw new PixelCodecError(`both channels must hold ${p.sampleType} samples, got ${t1} and ${t2}`);
  if (bitDepth > 8 * BYTES[p.sampleType]) throw new PixelCodecError(`bit depth ${bitDepth} does not fit ${p.sampleType} samples`);
  const n = width * height * depth;
  if (p.ch1.length !== n || p.ch2.length !== n) {
    throw new PixelCodecError(`each channel must have ${width}×${height}×${depth} = ${n} samples, got ${p.ch1.length} and ${p.ch2.length}`);
  }
  const size = BYTES[p.sampleType];
  const out = new Uint8Array(PIXELS_HEADER_BYTES + 2 * n * size);
  const dv = new DataView(out.buffer);
  for (let i = 0; i < 4; i++) out[i] = PIXELS_MAGIC.charCodeAt(i);
  dv.setUint8(4, PIXELS_VERSION);
  dv.setUint8(5, CODES[p.sampleType]);
  dv.setUint8(6, 2);
  dv.setUint8(7, bitDepth);
  dv.setUint32(8, width, true);
  dv.setUint32(12, height, true);
  dv.setUint32(16, depth, true);
  dv.setUint32(20, 0, true);
  writeSamples(dv, PIXELS_HEADER_BYTES, p.ch1, p.sampleType);
  writeSamples(dv, PIXELS_HEADER_BYTES + n * size, p.ch2, p.sampleType);
  return out;
}

function writeSamples(dv: DataView, at: number, a: SampleArray, t: SampleType) {
  const n = a.length;
  if (t === 'uint8') new Uint8Array(dv.buffer, dv.byteOffset + at, n).set(a);
  else if (t === 'uint16') for (let i = 0; i < n; i++) dv.setUint16(at + 2 * i, a[i], true);
  else if (t === 'uint32') for (let i = 0; i < n; i++) dv.setUint32(at + 4 * i, a[i], true);
  else for (let i = 0; i < n; i++) dv.setFloat32(at + 4 * i, a[i], true);
}

function readSamples(dv: DataView, at: number, n: number, t: SampleType): SampleArray {
  if (t === 'uint8') return new Uint8Array(dv.buffer, dv.byteOffset + at, n).slice();
  if (t === 'uint16') {
    const a = new Uint16Array(n);
    for (let i = 0; i < n; i++) a[i] = dv.getUint16(at + 2 * i, true);
    return a;
  }
  if (t === 'uint32') {
    const a = new Uint32Array(n);
    for (let i = 0; i < n; i++) a[i] = dv.getUint32(at + 4 * i, true);
    return a;
  }
  const a = new Float32Array(n);
  for (let i = 0; i < n; i++) a[i] = dv.getFloat32(at + 4 * i, true);
  return a;
}

/** Reads the 24-byte header; checks magic, version, sample type, channel count and dimensions. */
export function decodePixelsHeader(bytes: Uint8Array): Omit<PixelPlanes, 'ch1' | 'ch2'> & { bodyBytes: number } {
  if (bytes.byteLength < PIXELS_HEADER_BYTES) throw new PixelCodecError(`pixel message is ${bytes.byteLength} bytes, shorter than its ${PIXELS_HEADER_BYTES}-byte header`);
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const magic = String.fromCharCode(bytes[0], bytes[1], bytes[2], bytes[3]);
  if (magic !== PIXELS_MAGIC) throw new PixelCodecError(`pixel message starts with ${JSON.stringify(magic)}, not ${JSON.stringify(PIXELS_MAGIC)}`);
  const version = dv.getUint8(4);
  if (version !== PIXELS_VERSION) throw new PixelCodecError(`pixel format version ${version} is not supported (expected ${PIXELS_VERSION})`);
  const code = dv.getUint8(5);
  const sampleType = TYPES.find((t) => CODES[t] === code);
  if (!sampleType) throw new PixelCodecError(`sample type code ${code} is not one of 1 uint8, 2 uint16, 3 uint32, 4 float32`);
  const channels = dv.getUint8(6);
  if (channels !== 2) throw new PixelCodecError(`pixel message has ${channels} channels, expected 2`);
  const bitDepth = dv.getUint8(7);
  if (bitDepth < 1 || bitDepth > 8 * BYTES[sampleType]) throw new PixelCodecError(`bit depth ${bitDepth} does not fit ${sampleType} samples`);
  const width = checkDim('width', dv.getUint32(8, true));
  const height = checkDim('height', dv.getUint32(12, true));
  const depth = checkDim('depth', dv.getUint32(16, true));
  const bodyBytes = 2 * width * height * depth * BYTES[sampleType];
  return { width, height, depth, bitDepth, sampleType, bodyBytes };
}

/** Decodes a whole message; the body must have exactly the size its header announces. */
export function decodePixels(message: ArrayBuffer | Uint8Array): PixelPlanes {
  const bytes = message instanceof Uint8Array ? message : new Uint8Array(message);
  const h = decodePixelsHeader(bytes);
  const got = bytes.byteLength - PIXELS_HEADER_BYTES;
  if (got !== h.bodyBytes) {
    throw new PixelCodecError(
      `pixel body is ${got} bytes, but the header (${h.width}×${h.height}×${h.depth}, 2 channels, ${h.sampleType}) needs ${h.bodyBytes} (${got < h.bodyBytes ? 'truncated' : 'oversized'})`,
    );
  }
  const n = h.width * h.height * h.depth;
  const size = BYTES[h.sampleType];
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  return {
    width: h.width,
    height: h.height,
    depth: h.depth,
    bitDepth: h.bitDepth,
    sampleType: h.sampleType,
    ch1: readSamples(dv, PIXELS_HEADER_BYTES, n, h.sampleType),
    ch2: readSamples(dv, PIXELS_HEADER_BYTES + n * size, n, h.sampleType),
  };
}
