/**
 * Calibration engine (fft, phase-correlation, cross-correlation, align, bleed, unmix): properties that make
 * a result right — identities, symmetries, exact cases, degenerate cases. Values from outside the project
 * are checked in calibration-fixtures.test.ts (scikit-image, SciPy, NumPy).
 */
import { describe, expect, it } from 'vitest';
import {
  alignAndUnmix,
  alignChannel,
  alignedAt,
  bleedThroughSlope,
  pooledBleedThroughSlope,
  crossCorrelationCurves,
  inverseRealFft2d,
  measureShift,
  nextPowerOfTwo,
  realFft2dPair,
  unmixChannels,
} from '../../shared/analysis/index';
import { Xoshiro128 } from '../../shared/analysis/prng';
import { naivePearson } from './naive';

const rng = (seed: number) => {
  const g = new Xoshiro128(seed);
  return () => g.nextFloat();
};

/** A smooth random texture (sum of random Gaussian spots), periodic in both directions, shifted by (dx, dy). */
function texture(w: number, h: number, dx: number, dy: number, seed: number, spots = 60): Float64Array {
  const r = rng(seed);
  const out = new Float64Array(w * h);
  for (let k = 0; k < spots; k++) {
    const cx = r() * w + dx, cy = r() * h + dy, a = 100 + 900 * r(), s = 1.2 + 1.5 * r();
    for (let y = 0; y < h; y++)
      for (let x = 0; x < w; x++) {
        // nearest periodic image of the centre
        let ex = x - cx, ey = y - cy;
        ex -= w * Math.round(ex / w);
        ey -= h * Math.round(ey / h);
        out[y * w + x] += a * Math.exp(-(ex * ex + ey * ey) / (2 * s * s));
      }
  }
  return out;
}

describe('fft (common practice: the DFT definition)', () => {
  it('matches the direct DFT and inverts exactly', () => {
    const w = 16, h = 8, r = rng(3);
    const a = Float64Array.from({ length: w * h }, r), b = Float64Array.from({ length: w * h }, r);
    const { A, B } = realFft2dPair(a, b, w, h);
    for (const [ky, kx] of [[0, 0], [1, 2], [5, 8], [7, 3]]) {
      for (const [img, S] of [[a, A], [b, B]] as const) {
        let re = 0, im = 0;
        for (let y = 0; y < h; y++)
          for (let x = 0; x < w; x++) {
            const t = -2 * Math.PI * ((ky * y) / h + (kx * x) / w);
            re += img[y * w + x] * Math.cos(t);
            im += img[y * w + x] * Math.sin(t);
          }
        expect(S[2 * (kx * h + ky)]).toBeCloseTo(re, 12);
        expect(S[2 * (kx * h + ky) + 1]).toBeCloseTo(im, 12);
      }
    }
    const back = inverseRealFft2d(A, w, h);
    for (let i = 0; i < w * h; i++) expect(back[i]).toBeCloseTo(a[i], 13);
  });
  it('refuses sizes that are not powers of two, quoting them', () => {
    expect(() => realFft2dPair(new Float64Array(12), new Float64Array(12), 6, 2)).toThrow(/received 6/);
    expect(nextPowerOfTwo(100)).toBe(128);
    expect(nextPowerOfTwo(1)).toBe(1);
    expect(() => nextPowerOfTwo(0)).toThrow(/received 0/);
  });
});

describe('measureShift', () => {
  it('finds 0 for identical channels with peak 1', () => {
    const a = texture(64, 64, 0, 0, 1);
    const s = measureShift(a, a, 64, 64);
    expect(s).toEqual({ dx: 0, dy: 0, peak: expect.any(Number) });
    expect(s.peak!).toBeCloseTo(1, 6);
  });
  it('recovers known sub-pixel shifts of a periodic texture, both signs, to 0.05 px', () => {
    for (const [dx, dy] of [[1.37, -2.61], [-7.4, 5.05], [0.5, -0.5], [6.83, 7.91]]) {
      const a = texture(128, 128, 0, 0, 7), b = texture(128, 128, dx, dy, 7);
      const s = measureShift(a, b, 128, 128);
      expect(Math.abs(s.dx! - dx)).toBeLessThan(0.05);
      expect(Math.abs(s.dy! - dy)).toBeLessThan(0.05);
    }
  });
  it('swapping the channels negates the shift (antisymmetry)', () => {
    const a = texture(96, 80, 0, 0, 11), b = texture(96, 80, 2.3, -1.2, 11);
    const s = measureShift(a, b, 96, 80), t = measureShift(b, a, 96, 80);
    expect(t.dx).toBeCloseTo(-s.dx!, 10);
    expect(t.dy).toBeCloseTo(-s.dy!, 10);
  });
  it('constant or all-NaN channels give null; infinity is refused', () => {
    const a = texture(32, 32, 0, 0, 2);
    expect(measureShift(a, new Float64Array(32 * 32).fill(5), 32, 32)).toEqual({ dx: null, dy: null, peak: null });
    expect(measureShift(new Float64Array(32 * 32).fill(NaN), a, 32, 32).dx).toBeNull();
    const bad = a.slice();
    bad[7] = Infinity;
    expect(() => measureShift(a, bad, 32, 32)).toThrow(/pixel 7: Infinity/);
    expect(() => measureShift(a, a, 30, 32)).toThrow(/received 1024 and 1024/);
  });
});

describe('alignChannel (bilinear, common practice)', () => {
  const w = 5, h = 4;
  const ch = Float64Array.from({ length: w * h }, (_, i) => (i % w) * 10 + Math.floor(i / w) * 100);
  it('a zero shift is the identity; an integer shift moves values and drops the border', () => {
    expect(Array.from(alignChannel(ch, w, h, 0, 0))).toEqual(Array.from(ch));
    const s = alignChannel(ch, w, h, 1, -1);
    for (let j = 0; j < h; j++)
      for (let i = 0; i < w; i++) {
        const v = s[j * w + i];
        if (i + 1 > w - 1 || j - 1 < 0) expect(v).toBeNaN();
        else expect(v).toBe(ch[(j - 1) * w + i + 1]);
      }
  });
  it('a linear ramp is reproduced exactly at fractional positions; positions at W − 1 are kept', () => {
    const s = alignChannel(ch, w, h, 0.25, 0.5);
    expect(s[0]).toBeCloseTo(2.5 + 50, 12);
    expect(s[w - 1]).toBeNaN(); // 4.25 > W − 1
    const t = alignChannel(ch, w, h, 0, 3); // row 0 samples row 3 (= H − 1)
    expect(t[0]).toBe(300);
    expect(t[w]).toBeNaN();
  });
  it('shifts every z slice alike and refuses non-finite shifts', () => {
    const st = new Float64Array(2 * w * h);
    st.set(ch);
    st.set(ch, w * h);
    const s = alignChannel(st, w, h, 0.5, 0, 2);
    expect(Array.from(s.subarray(w * h))).toEqual(Array.from(s.subarray(0, w * h)));
    expect(() => alignChannel(ch, w, h, NaN, 0)).toThrow(/dx .* received NaN/);
  });
});

describe('unmixChannels and bleedThroughSlope', () => {
  it('unmixing undoes the mixing model exactly (identity case)', () => {
    const r = rng(5);
    const t1 = Float64Array.from({ length: 200 }, () => 1000 * r()), t2 = Float64Array.from({ length: 200 }, () => 1000 * r());
    const a21 = 0.2, a12 = 0.07;
    const o1 = t1.map((v, i) => v + a12 * t2[i]), o2 = t2.map((v, i) => a21 * t1[i] + v);
    const u = unmixChannels(o1, o2, a21, a12);
    for (let i = 0; i < 200; i++) {
      expect(u.t1[i]).toBeCloseTo(t1[i], 9);
      expect(u.t2[i]).toBeCloseTo(t2[i], 9);
    }
  });
  it('writing over channel 2 gives the same result as a new array', () => {
    const o1 = new Float64Array([10, 200, 30, 0]), o2 = new Float64Array([5, 40, 300, 7]);
    const fresh = unmixChannels(o1, o2, 0.1, 0.2);
    const copy = o2.slice();
    const reused = unmixChannels(o1, copy, 0.1, 0.2, { reuse: true });
    expect(reused.t2).toBe(copy);
    expect(Array.from(reused.t2)).toEqual(Array.from(fresh.t2));
    expect(Array.from(reused.t1)).toEqual(Array.from(fresh.t1));
  });
  it('sets negative results to 0, keeps NaN, refuses coefficients outside [0, 1)', () => {
    const u = unmixChannels(new Float64Array([0, NaN, 100]), new Float64Array([50, 1, 0]), 0.5, 0.5);
    expect(u.t1[0]).toBe(0);
    expect(u.t2[2]).toBe(0);
    expect(u.t1[1]).toBeNaN();
    expect(() => unmixChannels(new Uint16Array(1), new Uint16Array(1), 1, 0)).toThrow(/a21 .* received 1/);
    expect(() => unmixChannels(new Uint16Array(1), new Uint16Array(1), 0, -0.1)).toThrow(/a12 .* received -0.1/);
  });
  it('the slope is exact on noise-free controls whatever the constant background', () => {
    const r = rng(9);
    const t = Float64Array.from({ length: 500 }, () => 2000 * r());
    for (const [b1, b2] of [[0, 0], [100, 37], [5000, 2]]) {
      const o1 = t.map((v) => v + b1), o2 = t.map((v) => 0.137 * v + b2);
      expect(bleedThroughSlope(o1, o2)).toBeCloseTo(0.137, 12);
    }
    expect(bleedThroughSlope(new Uint16Array(10).fill(3), new Uint16Array(10))).toBeNull();
    expect(bleedThroughSlope(new Uint16Array([1]), new Uint16Array([1]))).toBeNull();
  });
  it('pooled over controls: one control is the plain slope; each control keeps its own background; by definition Σ Sxy / Σ Sxx', () => {
    const r = rng(11);
    const t1 = Float64Array.from({ length: 400 }, () => 2000 * r()), t2 = Float64Array.from({ length: 300 }, () => 500 * r());
    const noisy = (t: Float64Array, a: number, b: number) => t.map((v) => a * v + b + 20 * (r() - 0.5));
    const c1 = { labelled: t1.map((v) => v + 100), seen: noisy(t1, 0.2, 30) };
    const c2 = { labelled: t2.map((v) => v + 150), seen: noisy(t2, 0.2, 600) };
    expect(pooledBleedThroughSlope([c1])).toEqual({ slope: bleedThroughSlope(c1.labelled, c1.seen), n: 400 });
    // by definition, each control centred on its own means
    const moments = (x: Float64Array, y: Float64Array) => {
      const mx = x.reduce((a, b) => a + b, 0) / x.length, my = y.reduce((a, b) => a + b, 0) / y.length;
      let sxy = 0, sxx = 0;
      for (let i = 0; i < x.length; i++) (sxy += (x[i] - mx) * (y[i] - my)), (sxx += (x[i] - mx) ** 2);
      return { sxy, sxx };
    };
    const m1 = moments(c1.labelled, c1.seen), m2 = moments(c2.labelled, c2.seen);
    const pooled = pooledBleedThroughSlope([c1, c2]);
    expect(pooled.n).toBe(700);
    expect(pooled.slope!).toBeCloseTo((m1.sxy + m2.sxy) / (m1.sxx + m2.sxx), 12);
    // one regression over the concatenation would be pulled by the different backgrounds
    expect(Math.abs(pooled.slope! - 0.2)).toBeLessThan(0.005);
    expect(Math.abs(bleedThroughSlope(Float64Array.from([...c1.labelled, ...c2.labelled]), Float64Array.from([...c1.seen, ...c2.seen]))! - 0.2)).toBeGreaterThan(0.05);
    expect(pooledBleedThroughSlope([{ labelled: new Uint16Array(5).fill(2), seen: new Uint16Array(5) }])).toEqual({ slope: null, n: 0 });
  });
});

describe('alignAndUnmix (alignment and unmixing in one pass)', () => {
  it('equals alignChannel then unmixChannels bit for bit: sub-pixel, integer and out-of-image shifts, NaN, stacks', () => {
    const r = rng(21);
    for (let t = 0; t < 40; t++) {
      const w = 1 + Math.floor(r() * 30), h = 1 + Math.floor(r() * 30), z = 1 + Math.floor(r() * 3);
      const dx = t % 5 === 0 ? Math.round((r() - 0.5) * 10) : (r() - 0.5) * (t % 7 === 0 ? 80 : 12), dy = (r() - 0.5) * 12;
      const float = t % 2 === 0;
      const o1 = float ? new Float32Array(w * h * z) : new Uint16Array(w * h * z), o2 = float ? new Float64Array(w * h * z) : new Uint16Array(w * h * z);
      for (let i = 0; i < o1.length; i++) {
        o1[i] = 1000 * r();
        o2[i] = 1000 * r();
        if (float && r() < 0.05) o2[i] = NaN;
        if (float && r() < 0.05) o1[i] = NaN;
      }
      const a21 = 0.5 * r(), a12 = t % 4 === 0 ? 0 : 0.5 * r();
      const two = unmixChannels(o1, alignChannel(o2, w, h, dx, dy, z), a21, a12);
      const one = alignAndUnmix(o1, o2, w, h, dx, dy, a21, a12, z);
      const differ = [];
      for (let i = 0; i < o1.length; i++) if (!Object.is(one.t1[i], two.t1[i]) || !Object.is(one.t2[i], two.t2[i])) differ.push(i);
      expect(differ, `case ${t}: pixels that differ`).toEqual([]);
    }
  });
  it('with backgrounds and caller-owned outputs: equals align, subtract (v > b ? v − b : 0, NaN kept), unmix, bit for bit', () => {
    const r = rng(22);
    // the subtraction of a run (server/runs/compute.ts): a background of 0 leaves the channel as it is
    const subtract = (a: ArrayLike<number>, b: number) => (b === 0 ? Float64Array.from(a) : Float64Array.from(a, (v) => (v > b ? v - b : v === v ? 0 : NaN)));
    let out: { t1: Float64Array; t2: Float64Array } | null = null;
    for (let t = 0; t < 30; t++) {
      const w = 1 + Math.floor(r() * 25), h = 1 + Math.floor(r() * 25), z = 1 + Math.floor(r() * 2);
      const dx = (r() - 0.5) * 12, dy = t % 3 === 0 ? Math.round((r() - 0.5) * 6) : (r() - 0.5) * 12;
      const float = t % 2 === 0;
      const o1 = float ? new Float32Array(w * h * z) : new Uint16Array(w * h * z), o2 = float ? new Float64Array(w * h * z) : new Uint16Array(w * h * z);
      for (let i = 0; i < o1.length; i++) {
        o1[i] = 1000 * r() - (float ? 100 : 0);
        o2[i] = 1000 * r();
        if (float && r() < 0.05) o2[i] = NaN;
        if (float && r() < 0.05) o1[i] = NaN;
      }
      const b1 = t % 5 === 0 ? 0 : t % 2 ? Math.round(300 * r()) : 300 * r(), b2 = t % 7 === 0 ? null : 300 * r();
      const a21 = 0.5 * r(), a12 = 0.5 * r();
      const two = unmixChannels(subtract(o1, b1), subtract(alignChannel(o2, w, h, dx, dy, z), b2 ?? 0), a21, a12);
      // the same output arrays for every case of one size (a run's fields of one size share them)
      if (out === null || out.t1.length !== o1.length) out = { t1: new Float64Array(o1.length), t2: new Float64Array(o1.length) };
      out.t1.fill(7);
      const one = alignAndUnmix(o1, o2, w, h, dx, dy, a21, a12, z, { background: [b1, b2], out });
      expect(one.t1).toBe(out.t1);
      expect(one.t2).toBe(out.t2);
      const differ = [];
      for (let i = 0; i < o1.length; i++) if (!Object.is(one.t1[i], two.t1[i]) || !Object.is(one.t2[i], two.t2[i])) differ.push(i);
      expect(differ, `case ${t}: pixels that differ`).toEqual([]);
      // alignedAt: alignChannel's values at chosen pixels
      const idx = Array.from({ length: Math.min(20, o2.length) }, () => Math.floor(r() * o2.length));
      const whole = alignChannel(o2, w, h, dx, dy, z), at = alignedAt(o2, w, h, dx, dy, idx, z);
      expect(idx.filter((p, k) => !Object.is(at[k], whole[p]))).toEqual([]);
    }
  });
  it('refuses wrong-size or aliased output arrays and bad backgrounds, quoting them', () => {
    const c = new Uint16Array(4), d = new Float64Array(4), e = new Float64Array(4);
    expect(() => alignAndUnmix(c, c, 2, 2, 0.5, 0, 0, 0, 1, { out: { t1: new Float64Array(3), t2: e } })).toThrow(/4 values, received 3 and 4/);
    expect(() => alignAndUnmix(c, d, 2, 2, 0.5, 0, 0, 0, 1, { out: { t1: e, t2: d } })).toThrow(/separate arrays/);
    expect(() => alignAndUnmix(c, c, 2, 2, 0.5, 0, 0, 0, 1, { out: { t1: e, t2: e } })).toThrow(/separate arrays/);
    expect(() => alignAndUnmix(c, c, 2, 2, 0.5, 0, 0, 0, 1, { background: [NaN, 0] })).toThrow(/channel 1 background .* received NaN/);
    expect(() => alignedAt(c, 2, 2, 0.5, 0, [4])).toThrow(/index 4/);
  });
  it('refuses bad shifts, coefficients and sizes, quoting them', () => {
    const c = new Uint16Array(4);
    expect(() => alignAndUnmix(c, c, 2, 2, Infinity, 0, 0, 0)).toThrow(/dx .* received Infinity/);
    expect(() => alignAndUnmix(c, c, 2, 2, 0, 0, 1, 0)).toThrow(/a21 .* received 1/);
    expect(() => alignAndUnmix(c, new Uint16Array(3), 2, 2, 0, 0, 0, 0)).toThrow(/received 3|has 3 values/);
  });
});

describe('crossCorrelationCurves (van Steensel 1996)', () => {
  it('peaks at the integer shift along each axis', () => {
    const a = texture(64, 64, 0, 0, 4), b = texture(64, 64, 3, -2, 4);
    const c = crossCorrelationCurves(a, b, 64, 64, 5);
    expect(c.shifts).toEqual([-5, -4, -3, -2, -1, 0, 1, 2, 3, 4, 5]);
    const arg = (v: (number | null)[]) => c.shifts[v.indexOf(Math.max(...v.map((t) => t ?? -2)))];
    // along x the curve passes through the peak row only when dy = 0; check each axis on a shift along it
    const bx = texture(64, 64, 3, 0, 4), by = texture(64, 64, 0, -2, 4);
    expect(arg(crossCorrelationCurves(a, bx, 64, 64, 5).x)).toBe(3);
    expect(arg(crossCorrelationCurves(a, by, 64, 64, 5).y)).toBe(-2);
    expect(c.x.every((v) => v !== null && v >= -1 && v <= 1)).toBe(true);
  });
  it('swapping the channels mirrors the curve; r at 0 is Pearson; constant → null', () => {
    const a = texture(40, 30, 0, 0, 8), b = texture(40, 30, 1.5, 0.5, 8);
    const c = crossCorrelationCurves(a, b, 40, 30, 3), d = crossCorrelationCurves(b, a, 40, 30, 3);
    for (let k = 0; k < 7; k++) {
      expect(d.x[k]).toBeCloseTo(c.x[6 - k]!, 12);
      expect(d.y[k]).toBeCloseTo(c.y[6 - k]!, 12);
    }
    expect(crossCorrelationCurves(a, new Float64Array(1200), 40, 30, 1).x).toEqual([null, null, null]);
    expect(() => crossCorrelationCurves(a, b, 40, 30, -1)).toThrow(/received -1/);
  });
  it('through a fixed shift of the other axis: a diagonal shift peaks on both curves; r there is Pearson of the shifted pairs', () => {
    const a = texture(64, 64, 0, 0, 4), b = texture(64, 64, 3, -2, 4);
    const c = crossCorrelationCurves(a, b, 64, 64, 5, null, { dx: 3, dy: -2 });
    const arg = (v: (number | null)[]) => c.shifts[v.indexOf(Math.max(...v.map((t) => t ?? -2)))];
    expect([arg(c.x), arg(c.y)]).toEqual([3, -2]);
    // r(δ = 1, dy = −2) straight from the definition
    const xs: number[] = [], ys: number[] = [];
    for (let y = 0; y < 64; y++)
      for (let x = 0; x < 64; x++) if (x + 1 < 64 && y - 2 >= 0) xs.push(a[y * 64 + x]), ys.push(b[(y - 2) * 64 + x + 1]);
    expect(c.x[6]).toBeCloseTo(naivePearson(xs, ys)!, 12);
    expect(crossCorrelationCurves(a, b, 64, 64, 5)).toEqual(crossCorrelationCurves(a, b, 64, 64, 5, null, { dx: 0, dy: 0 }));
    expect(() => crossCorrelationCurves(a, b, 64, 64, 5, null, { dx: 0.5, dy: 0 })).toThrow(/received \(0.5, 0\)/);
  });
});
