/**
 * Header fields that size allocations, page counts and the decoded-bytes budget, through the real upload
 * route: every such count is checked against the file's length and the documented limits before anything
 * is allocated, so each hostile file gets a 4xx within a second and the server keeps serving. Ends with a
 * seeded header fuzzer over a valid two-page TIFF. TIFF structure per TIFF 6.0 (Adobe 1992) §2.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { Xoshiro128 } from '../../shared/analysis/prng.js';
import { MAX_PAGES, MAX_PLANES, MAX_SAMPLES_PER_PIXEL } from '../../server/images/tiff-header.js';
import { lzwEncode, tiffFromEntries, tiffPages, tiffStripPages, twoChannels } from './tiff.js';
import { storedState, uploadTiffs } from './stored.js';

const MAX_DECODED = 32 * 2 ** 20;
let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({ MAX_DECODED_BYTES: String(MAX_DECODED) });
  // start the decoding thread once, so the timings below measure the checks, not a thread's start-up
  const agent = await t.login('microscopist');
  const [a, c] = twoChannels(8, 8);
  const warm = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', tiffPages(8, 8, [a, c]), 'warm.tif');
  expect(warm.status).toBe(201);
});
afterAll(() => t?.close());

let agent: Awaited<ReturnType<TestApp['login']>>;
async function upload(bytes: Buffer, name = 'hostile.tif') {
  agent ??= await t.login('microscopist');
  const t0 = performance.now();
  const res = await uploadTiffs(t, agent, [{ name, bytes }]);
  return { res, ms: performance.now() - t0 };
}

/** A 1×1 16-bit grey page whose SamplesPerPixel (and BitsPerSample count) is `spp`. */
const sppFile = (spp: number) =>
  tiffFromEntries([
    [256, 4, 1, 1],
    [257, 4, 1, 1],
    [258, 3, 1, 16],
    [259, 3, 1, 1],
    [262, 3, 1, 1],
    [273, 4, 1, -1],
    [277, 4, 1, spp],
    [278, 4, 1, 1],
    [279, 4, 1, 2],
  ], new Uint8Array(0), new Uint8Array(2));

describe('counts that size allocations are checked first', () => {
  const cases: [string, () => Buffer, number, RegExp][] = [
    ['SamplesPerPixel = 2^32 − 1 in a 122-byte file', () => sppFile(2 ** 32 - 1), 413, /declares 4294967295 samples per pixel; Syntopy reads 1 to 256/],
    ['SamplesPerPixel = 2,000,000', () => sppFile(2_000_000), 413, /declares 2000000 samples per pixel/],
    [`SamplesPerPixel = ${MAX_SAMPLES_PER_PIXEL + 1}`, () => sppFile(MAX_SAMPLES_PER_PIXEL + 1), 413, /samples per pixel/],
    ['SamplesPerPixel = 0', () => sppFile(0), 422, /declares 0 samples per pixel/],
    ['BitsPerSample claiming 2^31 values', () => tiffFromEntries([[256, 4, 1, 1], [257, 4, 1, 1], [258, 3, 2 ** 31, 8], [273, 4, 1, -1], [277, 3, 1, 1], [279, 4, 1, 1]], new Uint8Array(0), new Uint8Array(1)), 422, /claims 2147483648 values/],
    ['StripOffsets claiming 2^32 − 1 values', () => tiffFromEntries([[256, 4, 1, 8], [257, 4, 1, 8], [258, 3, 1, 8], [273, 4, 2 ** 32 - 1, 'blob'], [277, 3, 1, 1], [278, 4, 1, 1], [279, 4, 1, 64]], new Uint8Array(64)), 422, /./],
    ['OME description claiming 10^9 channels', () => tiffFromEntries([[256, 4, 1, 1], [257, 4, 1, 1], [258, 3, 1, 8], [270, 2, 200, 'blob'], [273, 4, 1, -1], [277, 3, 1, 1], [279, 4, 1, 1]], Buffer.from('<OME><Image><Pixels SizeC="1000000000" SizeZ="1" SizeT="1" DimensionOrder="XYCZT"/></Image></OME>'.padEnd(200, ' ')), new Uint8Array(1)), 413, /claims 1000000000 channels/],
  ];
  for (const [what, make, status, re] of cases) {
    it(`${what} → ${status} in under a second, nothing stored`, async () => {
      const before = await storedState(t);
      const { res, ms } = await upload(make());
      expect(res.status, JSON.stringify(res.body)).toBe(status);
      expect(res.body.error).toMatch(re);
      expect(ms).toBeLessThan(1000);
      expect(await storedState(t)).toEqual(before);
    });
  }
});

describe('page count and pages × pixels', () => {
  it(`a 65,535-page 1×1 TIFF is refused (more than ${MAX_PAGES} pages) in under a second of CPU time`, async () => {
    const pages = Array.from({ length: 65_535 }, (_, i) => Uint16Array.of(i));
    const file = tiffPages(1, 1, pages);
    expect(file.length).toBeGreaterThan(8_000_000);
    const before = await storedState(t);
    // CPU time of this process (client, server and decoding thread together), robust to a busy machine
    const cpu0 = process.cpuUsage();
    const { res, ms } = await upload(file, 'pages.tif');
    const cpu = process.cpuUsage(cpu0);
    expect(res.status, JSON.stringify(res.body)).toBe(413);
    expect(res.body.error).toMatch(/more than 10000 pages/);
    expect((cpu.user + cpu.system) / 1000).toBeLessThan(1000);
    expect(ms).toBeLessThan(5000);
    expect(await storedState(t)).toEqual(before);
  });
  it(`exactly ${MAX_PAGES} pages (${MAX_PLANES} planes) is still read`, async () => {
    const pages = Array.from({ length: MAX_PAGES }, (_, i) => Uint16Array.of(i, i + 1, i + 2, i + 3));
    const { res, ms } = await upload(tiffPages(2, 2, pages), 'many-pages.tif');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.results[0].field.facts.ch2.max).toBe(4);
    expect(ms).toBeLessThan(5000);
  });
  it('pages × pixels over MAX_DECODED_BYTES is refused before decoding (3 pages of 2048² 16-bit = 24 MiB of 32 MiB is read; 5 are not)', async () => {
    const W = 2048;
    const strip = lzwEncode(new Uint8Array(W * W * 2));
    const ok = await upload(tiffStripPages({ width: W, height: W, bits: 16, compression: 5, pages: [[strip], [strip], [strip]] }), 'three.tif');
    expect(ok.res.status, JSON.stringify(ok.res.body)).toBe(201);
    const before = await storedState(t);
    const { res, ms } = await upload(tiffStripPages({ width: W, height: W, bits: 16, compression: 5, pages: [[strip], [strip], [strip], [strip], [strip]] }), 'five.tif');
    expect(res.status, JSON.stringify(res.body)).toBe(413);
    expect(res.body.error).toMatch(/\(5 pages\) would unpack to 4\.19e\+7 bytes, more than the limit of 33554432 bytes per file/);
    expect(ms).toBeLessThan(1000);
    expect(await storedState(t)).toEqual(before);
  });
});

describe('seeded header fuzzer', () => {
  const CASES = 300;
  it(`${CASES} mutated headers of a valid two-page TIFF: every answer is 201 or 4xx, each within a second, and the server keeps serving`, async () => {
    const [a, c] = twoChannels(8, 8);
    const base = tiffPages(8, 8, [a, c]);
    // the structure: directory offsets and entry positions of the valid file
    const ifds: number[] = [];
    for (let o = base.readUInt32LE(4); o !== 0; o = base.readUInt32LE(o + 2 + base.readUInt16LE(o) * 12)) ifds.push(o);
    const entries = ifds.flatMap((o) => Array.from({ length: base.readUInt16LE(o) }, (_, k) => o + 2 + 12 * k));
    const rng = new Xoshiro128(20261202);
    const pick = <T,>(xs: T[]) => xs[rng.nextUint32() % xs.length];
    const u32s = () => [0, 1, 2, 3, 7, 8, 16, 255, 256, 4096, 65535, 65536, 2 ** 31 - 1, 2 ** 31, 2 ** 32 - 1, 2 ** 32 - 2, base.length, base.length + 1, base.length - 1, rng.nextUint32()];
    const u16s = () => [0, 1, 2, 3, 4, 5, 8, 12, 16, 32, 255, 256, 4095, 4097, 32767, 65535, rng.nextUint32() & 0xffff];
    const statuses = new Map<number, number>();
    let slowest = 0;
    for (let i = 0; i < CASES; i++) {
      const f = Buffer.from(base);
      const k = 1 + (rng.nextUint32() % 3);
      const did: string[] = [];
      for (let m = 0; m < k; m++) {
        const e = pick(entries);
        switch (rng.nextUint32() % 7) {
          case 0: f.writeUInt32LE(pick(u32s()), e + 4); did.push(`count@${e}`); break; // value count
          case 1: f.writeUInt32LE(pick(u32s()), e + 8); did.push(`value@${e}`); break; // value / offset
          case 2: f.writeUInt16LE(rng.nextUint32() % 20, e + 2); did.push(`type@${e}`); break; // field type
          case 3: f.writeUInt16LE(pick([254, 256, 257, 258, 259, 262, 270, 273, 277, 278, 279, 284, 317, 322, 323, 324, 325, 339]), e); did.push(`tag@${e}`); break;
          case 4: { const o = pick(ifds); f.writeUInt16LE(pick(u16s()), o); did.push(`entries@${o}`); break; } // entry count of a directory
          case 5: { const o = pick(ifds); f.writeUInt32LE(pick(u32s()), o + 2 + f.readUInt16LE(o) * 12 <= f.length - 4 ? o + 2 + base.readUInt16LE(o) * 12 : 4); did.push(`next@${o}`); break; }
          default: { const at = rng.nextUint32() % f.length; f[at] = rng.nextUint32() & 0xff; did.push(`byte@${at}`); }
        }
      }
      const { res, ms } = await upload(f, `fuzz-${i}.tif`);
      const ok = res.status === 201 || (res.status >= 400 && res.status < 500 && typeof res.body.error === 'string');
      expect(ok, `case ${i} (${did.join(', ')}): ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`).toBe(true);
      expect(ms, `case ${i} (${did.join(', ')})`).toBeLessThan(1000);
      slowest = Math.max(slowest, ms);
      statuses.set(res.status, (statuses.get(res.status) ?? 0) + 1);
    }
    // the mutations reach both outcomes: some files stay readable, most are refused
    expect(statuses.get(201) ?? 0).toBeGreaterThan(0);
    expect([...statuses.keys()].some((s) => s >= 400)).toBe(true);
    expect((await agent.get('/api/health')).status).toBe(200);
    console.info(`[fuzz] ${CASES} cases, statuses ${JSON.stringify(Object.fromEntries(statuses))}, slowest ${slowest.toFixed(0)} ms`);
  }, 120_000);
});
