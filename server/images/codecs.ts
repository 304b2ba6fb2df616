/**
 * Bounded strip/tile decoders for every compression Syntopy reads (none, LZW, Deflate, PackBits), registered
 * with geotiff in place of its own. Each block is unpacked into a buffer allocated once with exactly the
 * block's expected size (tile width × tile height × bytes per pixel, i.e. rows × row bytes); a block that
 * would produce one byte more is refused with an ImageInputError naming both sizes, so a small hostile file
 * cannot expand into gigabytes ("decompression bomb"). The predictors (horizontal differencing, floating
 * point) are applied afterwards by geotiff's BaseDecoder and never change the size.
 *
 * Formats: TIFF 6.0 specification (Adobe, 1992), section 9 (PackBits), section 13 (LZW, MSB-first codes of
 * 9–12 bits with the table growing one code early, as libtiff writes them) and section 14 (predictor);
 * Deflate per RFC 1950/1951 (Deutsch & Gailly 1996) through node:zlib with `maxOutputLength`.
 */
import zlib from 'node:zlib';
import { addDecoder, BaseDecoder } from 'geotiff';
import { ImageInputError } from './errors.js';

export interface BlockParams {
  tileWidth: number;
  tileHeight: number;
  bitsPerSample: number[];
  planarConfiguration: number;
  predictor: number;
  /** bytes one full strip/tile unpacks to */
  maxBytes: number;
}

function tooLarge(codec: string, expected: number): never {
  throw new ImageInputError(
    `${codec === 'LZW' ? 'an' : 'a'} ${codec}-compressed block unpacks to more than its declared ${expected} bytes (the rows × row bytes of its strip or tile); decoding stopped at ${expected} bytes: the file is damaged or not a genuine image`,
  );
}

/** Uncompressed: a stored block may be as large as its strip/tile (a padded last strip), never larger. */
export function checkRawSize(stored: number, maxBytes: number): void {
  if (stored > maxBytes) {
    throw new ImageInputError(`an uncompressed block holds ${stored} bytes, but its strip/tile has only ${maxBytes} bytes (expected at most ${maxBytes}, got ${stored}); the file is damaged`);
  }
}

export function copyRaw(input: Uint8Array, maxBytes: number): Uint8Array {
  checkRawSize(input.byteLength, maxBytes);
  return input;
}

/** PackBits (TIFF 6.0 §9): n ≥ 0 copies n+1 literal bytes, −127 ≤ n ≤ −1 repeats the next byte 1−n times, −128 is a no-op. */
export function unpackBits(input: Uint8Array, maxBytes: number): Uint8Array {
  const out = new Uint8Array(maxBytes);
  let o = 0;
  let i = 0;
  while (i < input.length) {
    const n = (input[i++] << 24) >> 24;
    if (n >= 0) {
      const len = n + 1;
      if (i + len > input.length) throw new ImageInputError(`a PackBits-compressed block ends inside a literal run (byte ${i} of ${input.length}); the file is damaged`);
      if (o + len > maxBytes) tooLarge('PackBits', maxBytes);
      out.set(input.subarray(i, i + len), o);
      o += len;
      i += len;
    } else if (n !== -128) {
      const len = 1 - n;
      if (i >= input.length) throw new ImageInputError('a PackBits-compressed block ends inside a repeat run; the file is damaged');
      if (o + len > maxBytes) tooLarge('PackBits', maxBytes);
      out.fill(input[i++], o, o + len);
      o += len;
    }
  }
  return o === maxBytes ? out : out.subarray(0, o);
}

const CLEAR = 256;
const EOI = 257;
const TABLE = 4096;

/** TIFF LZW (TIFF 6.0 §13): codes MSB-first, 9 bits up to 12, Clear = 256, EndOfInformation = 257. */
export function unpackLzw(input: Uint8Array, maxBytes: number): Uint8Array {
  const out = new Uint8Array(maxBytes);
  // string table: each code is its prefix code plus one byte; strings are written back to front
  const prefix = new Int32Array(TABLE);
  const suffix = new Uint8Array(TABLE);
  const length = new Uint16Array(TABLE);
  const firstByte = new Uint8Array(TABLE);
  for (let c = 0; c < 256; c++) {
    prefix[c] = -1;
    suffix[c] = c;
    length[c] = 1;
    firstByte[c] = c;
  }
  let next = 258;
  let width = 9;
  let prev = -1;
  let o = 0;
  let acc = 0;
  let accBits = 0;
  let i = 0;
  const write = (code: number) => {
    const len = length[code];
    if (o + len > maxBytes) tooLarge('LZW', maxBytes);
    let c = code;
    for (let k = o + len - 1; k >= o; k--) {
      out[k] = suffix[c];
      c = prefix[c];
    }
    o += len;
  };
  for (;;) {
    // read `width` bits MSB-first; a stream that ends without EndOfInformation ends here
    while (accBits < width && i < input.length) {
      acc = ((acc & 0xffffff) << 8) | input[i++];
      accBits += 8;
    }
    if (accBits < width) break;
    const code = (acc >>> (accBits - width)) & ((1 << width) - 1);
    accBits -= width;
    if (code === EOI) break;
    if (code === CLEAR) {
      next = 258;
      width = 9;
      prev = -1;
      continue;
    }
    if (prev === -1) {
      if (code > 255) throw new ImageInputError(`an LZW-compressed block starts with code ${code}, which is not a literal; the file is damaged`);
      write(code);
      prev = code;
      continue;
    }
    if (code < next) {
      write(code);
      if (next < TABLE) {
        prefix[next] = prev;
        suffix[next] = firstByte[code];
        length[next] = length[prev] + 1;
        firstByte[next] = firstByte[prev];
        next++;
      }
    } else if (code === next && next < TABLE) {
      prefix[next] = prev;
      suffix[next] = firstByte[prev];
      length[next] = length[prev] + 1;
      firstByte[next] = firstByte[prev];
      next++;
      write(code);
    } else {
      throw new ImageInputError(`an LZW-compressed block holds code ${code} before it is defined (next free code ${next}); the file is damaged`);
    }
    prev = code;
    if (next + 1 >= 1 << width && width < 12) width++;
  }
  return o === maxBytes ? out : out.subarray(0, o);
}

/** Deflate (zlib stream) with the output capped at the block size. */
export function inflateBounded(input: Uint8Array, maxBytes: number): Uint8Array {
  try {
    return zlib.inflateSync(input, { maxOutputLength: Math.max(1, maxBytes) });
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'ERR_BUFFER_TOO_LARGE') tooLarge('Deflate', maxBytes);
    throw new ImageInputError(`a Deflate-compressed block could not be unpacked; the file is damaged (${(e as Error).message})`);
  }
}

function toBuffer(a: Uint8Array): ArrayBuffer {
  if (a.byteOffset === 0 && a.byteLength === a.buffer.byteLength && a.buffer instanceof ArrayBuffer) return a.buffer;
  return a.slice().buffer as ArrayBuffer;
}

type Unpack = (input: Uint8Array, maxBytes: number) => Uint8Array;

function decoderClass(unpack: Unpack) {
  return class extends BaseDecoder {
    decodeBlock(buffer: ArrayBufferLike): ArrayBufferLike {
      const p = (this as unknown as { parameters: BlockParams }).parameters;
      return toBuffer(unpack(new Uint8Array(buffer), p.maxBytes));
    }
  };
}

type Ifd = { hasTag(t: string): boolean; loadValue(t: string): Promise<unknown> };

/** geotiff hands these to the decoder of each page: the block geometry and its size in bytes. */
async function blockParams(fd: Ifd): Promise<BlockParams> {
  const tiled = !fd.hasTag('StripOffsets');
  const width = Number(await fd.loadValue('ImageWidth'));
  const height = Number(await fd.loadValue('ImageLength'));
  const bits = Array.from((await fd.loadValue('BitsPerSample')) as ArrayLike<number>);
  const planar = Number((await fd.loadValue('PlanarConfiguration')) ?? 1) || 1;
  const tileWidth = tiled ? Number(await fd.loadValue('TileWidth')) : width;
  const tileHeight = tiled ? Number(await fd.loadValue('TileLength')) : Math.min(height, Number((await fd.loadValue('RowsPerStrip')) || height));
  const bitsPerPixel = planar === 2 ? bits[0] : bits.reduce((a, b) => a + b, 0);
  return {
    tileWidth,
    tileHeight,
    bitsPerSample: bits,
    planarConfiguration: planar,
    predictor: Number(await fd.loadValue('Predictor')) || 1,
    maxBytes: tileHeight * Math.ceil((tileWidth * bitsPerPixel) / 8),
  };
}

const CODECS: [number[], Unpack][] = [
  [[1], copyRaw],
  [[5], unpackLzw],
  [[8, 32946], inflateBounded],
  [[32773], unpackBits],
];
for (const [cases, unpack] of CODECS) {
  const Decoder = decoderClass(unpack);
  addDecoder(cases, async () => Decoder as never, blockParams as never, false);
}
