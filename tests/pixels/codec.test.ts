/**
 * The pixel wire format (shared/pixels/codec.ts): round trips for every sample type and layout, the exact
 * byte layout, and rejection of malformed input with messages that quote the value received.
 */
import { describe, expect, it } from 'vitest';
import { decodePixels, decodePixelsHeader, encodePixels, PIXELS_HEADER_BYTES, PixelCodecError, sampleTypeOf, type PixelPlanes, type SampleArray, type SampleType } from '../../shared/pixels/codec.js';

const make: Record<SampleType, (n: number) => SampleArray> = {
  uint8: (n) => new Uint8Array(n),
  uint16: (n) => new Uint16Array(n),
  uint32: (n) => new Uint32Array(n),
  float32: (n) => new Float32Array(n),
};
/** extreme values of each type, so a lossy or wrongly signed conversion shows */
const extremes: Record<SampleType, number[]> = {
  uint8: [0, 1, 127, 128, 255],
  uint16: [0, 1, 255, 256, 32768, 65535],
  uint32: [0, 1, 65536, 2 ** 31, 2 ** 32 - 1, 16777217],
  float32: [0, -0, -1.5, Math.fround(Math.PI), Math.fround(1e-40), Math.fround(3.4e38), NaN, Math.fround(-123456.789)],
};
const BITS: Record<SampleType, number> = { uint8: 8, uint16: 16, uint32: 32, float32: 32 };

function planes(t: SampleType, width: number, height: number, depth: number): PixelPlanes {
  const n = width * height * depth;
  const ch1 = make[t](n), ch2 = make[t](n);
  const ex = extremes[t];
  for (let i = 0; i < n; i++) {
    ch1[i] = ex[i % ex.length];
    ch2[i] = ex[(i * 7 + 3) % ex.length];
  }
  return { width, height, depth, bitDepth: BITS[t], sampleType: t, ch1, ch2 };
}

const same = (a: SampleArray, b: SampleArray) => {
  expect(sampleTypeOf(b)).toBe(sampleTypeOf(a));
  expect(b.length).toBe(a.length);
  // Object.is: keeps NaN and −0 apart from 0
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) throw new Error(`sample ${i}: ${a[i]} became ${b[i]}`);
};

describe('round trip', () => {
  for (const t of ['uint8', 'uint16', 'uint32', 'float32'] as const) {
    for (const [w, h, d] of [[1, 1, 1], [7, 5, 1], [64, 48, 1], [6, 4, 3]] as const) {
      it(`${t} ${w}×${h}×${d}`, () => {
        const p = planes(t, w, h, d);
        const msg = encodePixels(p);
        expect(msg.byteLength).toBe(PIXELS_HEADER_BYTES + 2 * w * h * d * (t === 'uint8' ? 1 : t === 'uint16' ? 2 : 4));
        const back = decodePixels(msg);
        expect([back.width, back.height, back.depth, back.bitDepth, back.sampleType]).toEqual([w, h, d, p.bitDepth, t]);
        same(p.ch1, back.ch1);
        same(p.ch2, back.ch2);
      });
    }
  }
  it('decodes from an ArrayBuffer and from a Uint8Array that is a view into a larger buffer', () => {
    const msg = encodePixels(planes('uint16', 3, 2, 1));
    const fromBuffer = decodePixels(msg.buffer.slice(0) as ArrayBuffer);
    const big = new Uint8Array(msg.byteLength + 5);
    big.set(msg, 3); // odd offset: nothing may assume alignment
    const fromView = decodePixels(big.subarray(3, 3 + msg.byteLength));
    same(fromBuffer.ch2, fromView.ch2);
    expect(Array.from(fromView.ch1)).toEqual([0, 1, 255, 256, 32768, 65535]);
  });
  it('keeps a 12-bit depth stored in uint16 samples', () => {
    const p = { ...planes('uint16', 2, 2, 1), bitDepth: 12 };
    expect(decodePixels(encodePixels(p)).bitDepth).toBe(12);
  });
});

describe('byte layout', () => {
  it('is the documented header, then ch1 planes, then ch2 planes, little-endian', () => {
    const ch1 = new Uint16Array([1, 2, 3, 4, 0x0102, 6]);
    const ch2 = new Uint16Array([10, 20, 30, 40, 50, 0xabcd]);
    const b = encodePixels({ width: 3, height: 1, depth: 2, bitDepth: 16, sampleType: 'uint16', ch1, ch2 });
    expect(Array.from(b.subarray(0, 24))).toEqual([0x53, 0x59, 0x50, 0x58, 1, 2, 2, 16, 3, 0, 0, 0, 1, 0, 0, 0, 2, 0, 0, 0, 0, 0, 0, 0]);
    const dv = new DataView(b.buffer);
    expect(dv.getUint16(24 + 2 * 4, true)).toBe(0x0102);
    expect(b[24 + 8]).toBe(0x02); // low byte first
    expect(dv.getUint16(24 + 2 * 6 + 2 * 5, true)).toBe(0xabcd);
    const f = encodePixels({ width: 1, height: 1, depth: 1, bitDepth: 32, sampleType: 'float32', ch1: new Float32Array([1]), ch2: new Float32Array([-2]) });
    expect(f[5]).toBe(4);
    expect(Array.from(f.subarray(24))).toEqual([0, 0, 0x80, 0x3f, 0, 0, 0, 0xc0]); // 1.0f and -2.0f, IEEE 754 LE
  });
});

describe('encoding rejects', () => {
  const ok = () => planes('uint16', 4, 3, 1);
  const err = (f: () => unknown, re: RegExp) => {
    expect(f).toThrow(PixelCodecError);
    expect(f).toThrow(re);
  };
  it('channels of the wrong length, quoting both lengths', () => err(() => encodePixels({ ...ok(), ch2: new Uint16Array(11) }), /4×3×1 = 12 samples, got 12 and 11/));
  it('mixed or mislabelled sample types', () => {
    err(() => encodePixels({ ...ok(), ch2: new Float32Array(12) }), /uint16 samples, got uint16 and float32/);
    err(() => encodePixels({ ...ok(), sampleType: 'uint8' }), /uint8 samples, got uint16 and uint16/);
  });
  it('unsupported arrays, naming them', () => err(() => encodePixels({ ...ok(), ch1: new Float64Array(12) as never }), /got Float64Array/));
  it('bad dimensions, quoting the value', () => {
    err(() => encodePixels({ ...ok(), width: 0 }), /width .* got 0/);
    err(() => encodePixels({ ...ok(), height: 2.5 }), /height .* got 2\.5/);
    err(() => encodePixels({ ...ok(), depth: NaN }), /depth .* got null/);
    err(() => encodePixels({ ...ok(), bitDepth: 17 }), /bit depth 17 does not fit uint16/);
  });
});

describe('decoding rejects', () => {
  const good = () => encodePixels(planes('float32', 4, 3, 2));
  const err = (b: Uint8Array, re: RegExp) => {
    expect(() => decodePixels(b)).toThrow(PixelCodecError);
    expect(() => decodePixels(b)).toThrow(re);
  };
  it('a truncated body, quoting both sizes', () => {
    const b = good();
    err(b.subarray(0, b.byteLength - 1), /pixel body is 191 bytes, but the header \(4×3×2, 2 channels, float32\) needs 192 \(truncated\)/);
  });
  it('an oversized body', () => {
    const b = good();
    const big = new Uint8Array(b.byteLength + 4);
    big.set(b);
    err(big, /is 196 bytes, .* needs 192 \(oversized\)/);
  });
  it('a message shorter than its header', () => err(good().subarray(0, 10), /10 bytes, shorter than its 24-byte header/));
  it('a wrong magic, quoting it (e.g. an HTML error page)', () => err(new TextEncoder().encode('<!doctype html><html>……'), /starts with "<!do"/));
  it('an unknown version, sample type or channel count', () => {
    const patch = (at: number, v: number) => {
      const b = good().slice();
      b[at] = v;
      return b;
    };
    err(patch(4, 9), /version 9 is not supported/);
    err(patch(5, 7), /sample type code 7/);
    err(patch(6, 3), /3 channels, expected 2/);
    err(patch(7, 40), /bit depth 40 does not fit float32/);
  });
  it('a zero dimension in the header, quoting it', () => {
    const b = good().slice();
    new DataView(b.buffer).setUint32(12, 0, true);
    err(b, /height .* got 0/);
  });
  it('the header alone is readable for a size check before the body arrives', () => {
    const h = decodePixelsHeader(good().subarray(0, 24));
    expect(h).toEqual({ width: 4, height: 3, depth: 2, bitDepth: 32, sampleType: 'float32', bodyBytes: 192 });
  });
});
