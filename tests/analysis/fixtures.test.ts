/**
 * Reference fixtures (tests/fixtures/analysis, made by generate.py): every coefficient of every region
 * of synthetic 8/12/16-bit, float and heavy-tie images against SciPy (pearsonr, spearmanr, kendalltau),
 * R energy (dcor, bcdcor, dcorT.test) and NumPy from the published definitions (Manders, overlap, ICQ),
 * to 1e-9 relative. p-values also to 1e-12 absolute (R reports 1 − pt(T), which is 0 below ~1e-16).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { labelRegions, measureRegion, REGION_RESULT_KEYS, type ChannelArray } from '../../shared/analysis/index';

const dir = fileURLToPath(new URL('../fixtures/analysis/', import.meta.url));
const expected = JSON.parse(readFileSync(dir + 'expected.json', 'utf8'));

function load(file: string, dtype: string): ChannelArray {
  const b = readFileSync(dir + file);
  const ab = b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength);
  switch (dtype) {
    case 'uint8':
      return new Uint8Array(ab);
    case 'uint16':
      return new Uint16Array(ab);
    case 'float32':
      return new Float32Array(ab);
    default:
      throw new Error(`unknown dtype ${dtype}`);
  }
}

const labels = load('labels.bin', 'uint16');
const regions = new Map(labelRegions(labels).map((r) => [r.label, r.indices]));

describe('reference fixtures (SciPy, R energy, NumPy definitions)', () => {
  it('covers 8/12/16-bit, float and heavy ties', () => {
    expect(expected.cases.map((c: { name: string }) => c.name)).toEqual(['u8', 'u12', 'u16', 'f32', 'ties']);
  });
  for (const c of expected.cases) {
    describe(`${c.name} (${c.dtype}, ${c.width}×${c.height})`, () => {
      const ch1 = load(`${c.name}.ch1.bin`, c.dtype);
      const ch2 = load(`${c.name}.ch2.bin`, c.dtype);
      for (const ref of c.regions) {
        it(`region ${ref.label}: every coefficient to 1e-9 relative`, () => {
          const region = ref.label === 0 ? null : regions.get(ref.label)!;
          const got = measureRegion(ch1, ch2, region, { threshold: { method: 'manual', t1: c.t1, t2: c.t2 } });
          for (const k of REGION_RESULT_KEYS) {
            const want = ref[k] as number | null;
            const have = got[k] as number | null;
            if (want === null || have === null) {
              expect(have, k).toBe(want);
              continue;
            }
            const tol = 1e-9 * Math.max(Math.abs(want), k === 'dcorPValue' ? 1e-3 : 0);
            expect(Math.abs(have - want), `${k}: ${have} vs ${want}`).toBeLessThanOrEqual(Math.max(tol, k === 'dcorPValue' ? 1e-12 : 0));
          }
        });
      }
    });
  }
});
