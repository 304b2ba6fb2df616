/**
 * The slab split of the pair sweep (shared/analysis/sweep.ts): with the y levels cut into many small slabs,
 * the merged sweep gives the definitions' values (naive O(n²) sums of |Δx||Δy| and of sign products), the
 * same C − D as the one-slab sweep, and its result does not depend on the order in which the slab partials
 * are computed.
 */
import { describe, expect, it } from 'vitest';
import { distanceCorrelation, kendallS, pairsFromArrays, prepare, spearman, Xoshiro128 } from '../../shared/analysis/index';
import { sweepLevels } from '../../shared/analysis/dcor';
import { mergeSweep, pairSweep, planSweep, slabCuts, slabPartial, SLAB_MIN_PAIRS } from '../../shared/analysis/sweep';
import { naiveDcor, naiveSpearman } from './naive';

/** Σ_ij |x_i − x_j||y_i − y_j| and Σ_{i<j} sign(Δx)·sign(Δy), straight from the definitions */
function naiveSums(x: number[], y: number[]): { s1: number; cd: number } {
  let s1 = 0, cd = 0;
  for (let i = 0; i < x.length; i++)
    for (let j = 0; j < i; j++) {
      s1 += 2 * Math.abs(x[i] - x[j]) * Math.abs(y[i] - y[j]);
      cd += Math.sign(x[i] - x[j]) * Math.sign(y[i] - y[j]);
    }
  return { s1, cd };
}

function data(rng: Xoshiro128, n: number, kind: 'ties' | 'wide' | 'float'): [number[], number[]] {
  const x: number[] = [], y: number[] = [];
  for (let i = 0; i < n; i++) {
    const c = rng.nextFloat();
    if (kind === 'ties') {
      x.push(rng.nextInt(6));
      y.push(Math.floor(c * 9));
    } else if (kind === 'wide') {
      x.push(Math.floor((0.6 * c + 0.4 * rng.nextFloat()) * 65536));
      y.push(Math.floor((0.5 * c + 0.5 * rng.nextFloat()) * 65536));
    } else {
      x.push(c * 3.1 + rng.nextFloat());
      y.push(Math.round((c - rng.nextFloat()) * 30) / 7);
    }
  }
  return [x, y];
}

describe('pair sweep in y slabs', () => {
  it('cuts at most `levels` levels per slab and one slab for small data', () => {
    const counts = Int32Array.from({ length: 100 }, (_, k) => 1 + (k % 3));
    expect(Array.from(slabCuts(counts, 1000))).toEqual([0, 100]);
    const cut = slabCuts(counts, SLAB_MIN_PAIRS, { levels: 16 });
    expect(cut[0]).toBe(0);
    expect(cut[cut.length - 1]).toBe(100);
    for (let s = 0; s + 1 < cut.length; s++) {
      expect(cut[s + 1] - cut[s]).toBeGreaterThan(0);
      expect(cut[s + 1] - cut[s]).toBeLessThanOrEqual(16);
    }
  });

  it('many small slabs give the definitions’ S1 and C − D, and ρ and dCor as the naive versions', () => {
    const rng = new Xoshiro128(2026);
    for (const kind of ['ties', 'wide', 'float'] as const)
      for (let trial = 0; trial < 40; trial++) {
        const n = 4 + rng.nextInt(120);
        const [x, y] = data(rng, n, kind);
        const ref = naiveSums(x, y);
        for (const levels of [1, 2, 3, 7]) {
          const p = prepare(pairsFromArrays(x, y));
          const lv = sweepLevels(p);
          if (!lv) continue;
          const plan = planSweep(p, lv, { levels, minPairs: 0 });
          expect(plan.slabs, `${kind} n=${n}`).toBeGreaterThan(1);
          const sw = mergeSweep(plan, Array.from({ length: plan.slabs }, (_, s) => slabPartial(plan.input, s)));
          expect(sw.kendallS, `${kind} n=${n} levels=${levels}`).toBe(ref.cd);
          expect(Math.abs(sw.s1 - ref.s1), `${kind} n=${n} levels=${levels}`).toBeLessThanOrEqual(1e-11 * Math.max(1, ref.s1));
          p.useSweep(sw);
          const d = distanceCorrelation(p), nd = naiveDcor(x, y);
          if (nd.dcor === null) expect(d.dcor).toBeNull();
          else expect(Math.abs(d.dcor! - nd.dcor)).toBeLessThanOrEqual(1e-9);
          const r = spearman(p), nr = naiveSpearman(x, y);
          if (nr === null) expect(r).toBeNull();
          else expect(Math.abs(r! - nr)).toBeLessThanOrEqual(1e-12);
        }
      }
  });

  it('the merged result does not depend on the order the slabs are computed in, and equals one slab on integer counts', () => {
    const rng = new Xoshiro128(7);
    const [x, y] = data(rng, 3000, 'wide');
    const p = prepare(pairsFromArrays(x, y));
    const lv = sweepLevels(p)!;
    const plan = planSweep(p, lv, { levels: 64, minPairs: 0 });
    const forward = Array.from({ length: plan.slabs }, (_, s) => slabPartial(plan.input, s));
    const backward: ReturnType<typeof slabPartial>[] = [];
    for (let s = plan.slabs - 1; s >= 0; s--) backward[s] = slabPartial(plan.input, s);
    expect(mergeSweep(plan, backward)).toEqual(mergeSweep(plan, forward));
    const one = pairSweep(prepare(pairsFromArrays(x, y)), lv, { minPairs: Infinity });
    const many = mergeSweep(plan, forward);
    expect(many.kendallS).toBe(one.kendallS);
    expect(many.kendallS).toBe(kendallS(pairsFromArrays(x, y)));
    expect(Math.abs(many.s1 - one.s1)).toBeLessThanOrEqual(1e-13 * one.s1);
    expect(() => mergeSweep(plan, forward.slice(1))).toThrow(/received/);
  });
});
