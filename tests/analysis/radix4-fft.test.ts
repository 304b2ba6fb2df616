/**
 * radix4-fft.ts: the engine's 1-D FFT gives bit for bit the results of `fft.js` 4.0.4's `transform` (whose
 * arithmetic it keeps; fft.js stays a dependency as this reference), checked with Object.is on every output
 * value, and the DFT it stands for on a small case.
 */
import { describe, expect, it } from 'vitest';
import FFT from 'fft.js';
import { Radix4Fft } from '../../shared/analysis/radix4-fft';
import { Xoshiro128 } from '../../shared/analysis/prng';

describe('Radix4Fft', () => {
  const rng = new Xoshiro128(15);
  const inputs = (n: number): [string, Float64Array][] => [
    ['uniform', Float64Array.from({ length: 2 * n }, () => rng.nextFloat() - 0.5)],
    ['wide range', Float64Array.from({ length: 2 * n }, () => (rng.nextFloat() - 0.5) * 10 ** (12 * rng.nextFloat() - 6))],
    ['small integers', Float64Array.from({ length: 2 * n }, () => Math.floor(rng.nextFloat() * 5) - 2)],
    ['real only', Float64Array.from({ length: 2 * n }, (_, i) => (i % 2 === 0 ? rng.nextFloat() : 0))],
    ['zeros', new Float64Array(2 * n)],
    ['negative zeros', new Float64Array(2 * n).fill(-0)],
  ];

  it('equals fft.js bit for bit for every size 2 … 16384', () => {
    let checked = 0;
    for (let n = 2; n <= 16384; n *= 2) {
      const ref = new FFT(n), own = new Radix4Fft(n);
      for (const [what, x] of inputs(n)) {
        const want = new Float64Array(2 * n), got = new Float64Array(2 * n);
        ref.transform(want, x);
        own.transform(got, x);
        for (let i = 0; i < 2 * n; i++)
          if (!Object.is(got[i], want[i])) throw new Error(`n = ${n}, ${what}: value ${i} is ${got[i]}, fft.js gives ${want[i]}`);
        checked += 2 * n;
      }
    }
    expect(checked).toBe(6 * 2 * (32768 - 2));
  });

  it('is the DFT Σ x(j) e^{−2πi jk/n}', () => {
    const n = 32, own = new Radix4Fft(n);
    const x = Float64Array.from({ length: 2 * n }, () => rng.nextFloat() - 0.5), X = new Float64Array(2 * n);
    own.transform(X, x);
    for (let k = 0; k < n; k++) {
      let re = 0, im = 0;
      for (let j = 0; j < n; j++) {
        const a = (-2 * Math.PI * j * k) / n;
        re += x[2 * j] * Math.cos(a) - x[2 * j + 1] * Math.sin(a);
        im += x[2 * j] * Math.sin(a) + x[2 * j + 1] * Math.cos(a);
      }
      expect(X[2 * k]).toBeCloseTo(re, 12);
      expect(X[2 * k + 1]).toBeCloseTo(im, 12);
    }
  });

  it('refuses sizes that are not powers of two ≥ 2 and an output that is its input, quoting them', () => {
    for (const n of [0, 1, 3, 6, 2.5, -4, NaN]) expect(() => new Radix4Fft(n)).toThrow(new RegExp(`received ${n}`));
    const f = new Radix4Fft(8), x = new Float64Array(16);
    expect(() => f.transform(x, x)).toThrow(/must be different/);
    expect(() => f.transform(new Float64Array(8), x)).toThrow(/received 16 and 8/);
  });
});
