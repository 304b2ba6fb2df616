/**
 * The grid's sort of rows by 64-bit keys (server/compare/grid-index.ts `sortByKeys`): the key's low bits share
 * a word with the row number, so rows whose keys differ only there are put in order afterwards. Checked
 * against a plain comparison sort by (hi, lo, row) on keys made to collide in every part.
 */
import { describe, expect, it } from 'vitest';
import { sortByKeys } from '../../server/compare/grid-index.js';
import { Xoshiro128 } from '../../shared/analysis/prng.js';

function reference(hi: Uint32Array, lo: Uint32Array) {
  return Array.from({ length: hi.length }, (_, i) => i).sort((a, b) => hi[a] - hi[b] || lo[a] - lo[b] || a - b);
}

describe('sortByKeys', () => {
  it('orders by (hi, lo), ties by row, for keys equal in hi, in lo, or in all but their lowest bits', () => {
    const rng = new Xoshiro128(4);
    for (const n of [1, 2, 3, 17, 1000, 5000, 70_000]) {
      const hi = new Uint32Array(n), lo = new Uint32Array(n);
      for (let r = 0; r < n; r++) {
        hi[r] = rng.nextInt(4) === 0 ? 0xffffffff : rng.nextInt(5); // few distinct high words, and the NULL key
        const kind = rng.nextInt(3);
        // identical lo, lo differing only in the bits the row number takes, or any lo
        lo[r] = kind === 0 ? 0x12345678 : kind === 1 ? (0xabc00000 | rng.nextInt(1 << 16)) >>> 0 : rng.nextUint32();
      }
      expect(Array.from(sortByKeys(hi, lo)), `n = ${n}`).toEqual(reference(hi, lo));
    }
  });
  it('an empty input gives an empty order', () => {
    expect(sortByKeys(new Uint32Array(0), new Uint32Array(0)).length).toBe(0);
  });
});
