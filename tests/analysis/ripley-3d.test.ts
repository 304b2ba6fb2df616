/**
 * Cross-type Ripley's K in 3D (shared/analysis/ripley3d.ts) and its Monte Carlo envelope (spot-test3d.ts,
 * analyzeObjects3D). References: a direct O(n₁·n₂) count over every pair straight from the definition (to
 * 1e-9); the analytical K(r) = 4/3 π r³ of independent uniform patterns (complete spatial randomness; Ripley
 * 1977) in a box with the translation correction; the envelope of uniform placements in the same cell must
 * contain the observed K of independent spots and lie below that of spots coupled at a fixed offset.
 */
import { describe, expect, it } from 'vitest';
import { analyzeObjects3D, crossK3D, lFromK3, spotPlacementTest3D, Xoshiro128 } from '../../shared/analysis/index';

type P3 = { x: number[]; y: number[]; z: number[] };
const uniformBox = (n: number, W: number, H: number, D: number, rng: Xoshiro128): P3 => {
  const p: P3 = { x: [], y: [], z: [] };
  for (let i = 0; i < n; i++) p.x.push(rng.nextFloat() * W), p.y.push(rng.nextFloat() * H), p.z.push(rng.nextFloat() * D);
  return p;
};

/** K straight from the definition: every pair, z scaled, weight V / ∏(side − |Δ|) for 'translation' */
function naiveK(p1: P3, p2: P3, zScale: number, radii: number[], box: [number, number, number] | null, volume: number): number[] {
  const [W, H, D] = box ?? [0, 0, 0];
  return radii.map((r) => {
    let s = 0;
    for (let i = 0; i < p1.x.length; i++)
      for (let j = 0; j < p2.x.length; j++) {
        const dx = p1.x[i] - p2.x[j], dy = p1.y[i] - p2.y[j], dz = (p1.z[i] - p2.z[j]) * zScale;
        if (Math.sqrt(dx * dx + dy * dy + dz * dz) < r) s += box ? volume / ((W - Math.abs(dx)) * (H - Math.abs(dy)) * (D * zScale - Math.abs(dz))) : 1;
      }
    return (volume * s) / (p1.x.length * p2.x.length);
  });
}

describe("cross-type Ripley's K in 3D", () => {
  it('equals the direct count over every pair to 1e-9, with and without the translation correction', () => {
    const rng = new Xoshiro128(5);
    const [W, H, D, zs] = [40, 30, 12, 2.5];
    const a = uniformBox(150, W, H, D, rng), b = uniformBox(120, W, H, D, rng);
    const radii = [1.5, 3, 6, 9.5];
    const V = W * H * D * zs;
    const none = crossK3D(a, b, zs, radii, { kind: 'volume', volume: V });
    const tr = crossK3D(a, b, zs, radii, { kind: 'box', x0: 0, y0: 0, z0: 0, x1: W, y1: H, z1: D }, 'translation');
    const wantNone = naiveK(a, b, zs, radii, null, V), wantTr = naiveK(a, b, zs, radii, [W, H, D], V);
    radii.forEach((_, q) => {
      expect(Math.abs(none.K[q]! - wantNone[q])).toBeLessThanOrEqual(1e-9 * wantNone[q]);
      expect(Math.abs(tr.K[q]! - wantTr[q])).toBeLessThanOrEqual(1e-9 * wantTr[q]);
      expect(none.L[q]).toBeCloseTo(Math.cbrt((3 * none.K[q]!) / (4 * Math.PI)), 12);
    });
    // the uncorrected K misses the pairs cut off by the box faces
    expect(none.K[3]!).toBeLessThan(tr.K[3]!);
  });

  it('is 4/3 π r³ for independent uniform patterns in a box (translation correction), L ≈ r', () => {
    const rng = new Xoshiro128(77);
    const [W, H, D, zs] = [60, 60, 20, 2];
    const radii = [2, 4, 6, 8];
    const sum = radii.map(() => 0);
    const reps = 40;
    for (let t = 0; t < reps; t++) {
      const a = uniformBox(200, W, H, D, rng), b = uniformBox(200, W, H, D, rng);
      crossK3D(a, b, zs, radii, { kind: 'box', x0: 0, y0: 0, z0: 0, x1: W, y1: H, z1: D }, 'translation').K.forEach((k, q) => (sum[q] += k! / reps));
    }
    // 40 replicates of 200 × 200 points: the relative standard error at r = 2 is about 4 %, less at larger r
    radii.forEach((r, q) => {
      const ball = (4 / 3) * Math.PI * r ** 3;
      expect(Math.abs(sum[q] / ball - 1), `r = ${r}`).toBeLessThan(q === 0 ? 0.12 : 0.06);
      expect(Math.abs(lFromK3(sum[q]) / r - 1)).toBeLessThan(0.04);
    });
  });

  it('degenerate and bad inputs: a channel without points gives null; bad radii, volume, box or zScale are refused, quoting the value', () => {
    const p = { x: [1], y: [1], z: [1] }, none = { x: [], y: [], z: [] };
    expect(crossK3D(p, none, 2, [1, 2], { kind: 'volume', volume: 10 })).toEqual({ radii: [1, 2], K: [null, null], L: [null, null] });
    expect(() => crossK3D(p, p, 2, [0], { kind: 'volume', volume: 10 })).toThrow(/received 0/);
    expect(() => crossK3D(p, p, 2, [], { kind: 'volume', volume: 10 })).toThrow(/received \[\]/);
    expect(() => crossK3D(p, p, 2, [1], { kind: 'volume', volume: -3 })).toThrow(/received -3/);
    expect(() => crossK3D(p, p, 2, [1], { kind: 'volume', volume: 10 }, 'translation')).toThrow(/needs a box/);
    expect(() => crossK3D(p, p, 2, [1], { kind: 'box', x0: 0, y0: 0, z0: 2, x1: 5, y1: 5, z1: 2 }, 'translation')).toThrow(/has no volume/);
    expect(() => crossK3D(p, p, 0, [1], { kind: 'volume', volume: 10 })).toThrow(/received 0/);
  });
});

describe("the K envelope of the 3D chance placement test", () => {
  // a cell: a ball of radius 14 pixel widths (z scaled) in a 40 × 40 × 14-slice volume, slice spacing 2.5
  const [W, H, D, zs] = [40, 40, 14, 2.5];
  const cell: number[] = [];
  for (let z = 0; z < D; z++)
    for (let y = 0; y < H; y++)
      for (let x = 0; x < W; x++) if ((x + 0.5 - 20) ** 2 + (y + 0.5 - 20) ** 2 + ((z + 0.5 - 7) * zs) ** 2 <= 14 * 14) cell.push((z * H + y) * W + x);
  const uniformIn = (n: number, rng: Xoshiro128): P3 => {
    const p: P3 = { x: [], y: [], z: [] };
    for (let i = 0; i < n; i++) {
      const v = cell[rng.nextInt(cell.length)];
      const z = Math.floor(v / (W * H)), r = v - z * W * H, y = Math.floor(r / W);
      p.x.push(r - y * W + rng.nextFloat()), p.y.push(y + rng.nextFloat()), p.z.push(z + rng.nextFloat());
    }
    return p;
  };
  const radii = [2, 4, 7];

  it("observed K equals crossK3D 'none' on the cell's volume; independent spots lie inside the envelope, coupled ones above it", () => {
    let inside = 0, total = 0;
    for (let c = 0; c < 20; c++) {
      const rng = new Xoshiro128(300 + c);
      const a = uniformIn(40, rng), b = uniformIn(40, rng);
      const r = spotPlacementTest3D(a, b, cell, W, H, zs, { pairDistance: 2, placements: 199, seed: c + 1, kRadii: radii });
      const k = crossK3D(a, b, zs, radii, { kind: 'volume', volume: cell.length * zs });
      r.envelope!.observed.forEach((v, q) => expect(Math.abs(v - k.K[q]!)).toBeLessThanOrEqual(1e-9 * Math.max(k.K[q]!, 1)));
      for (let q = 0; q < radii.length; q++) {
        expect(r.envelope!.lo[q]).toBeLessThanOrEqual(r.envelope!.mean[q]);
        expect(r.envelope!.mean[q]).toBeLessThanOrEqual(r.envelope!.hi[q]);
        total++;
        if (r.envelope!.observed[q] >= r.envelope!.lo[q] && r.envelope!.observed[q] <= r.envelope!.hi[q]) inside++;
      }
    }
    // a pointwise 95 % envelope: about 95 % of (cell, radius) pairs inside; 20 cells × 3 radii
    expect(inside / total).toBeGreaterThanOrEqual(0.85);
    // coupled: each channel-2 spot 1 pixel width from its channel-1 spot
    const rng = new Xoshiro128(9);
    const a = uniformIn(40, rng);
    const b = { x: a.x.map((x) => x + 0.6), y: a.y.map((y) => y - 0.5), z: a.z.map((z) => z + 0.2) };
    const r = spotPlacementTest3D(a, b, cell, W, H, zs, { pairDistance: 2, placements: 199, seed: 3, kRadii: radii });
    expect(r.envelope!.observed[0]).toBeGreaterThan(r.envelope!.hi[0]);
    expect(r.envelope!.pValue[0]).toBeLessThan(0.01);
    expect(r.envelope!.L[0]).toBeCloseTo(lFromK3(r.envelope!.observed[0]), 12);
  });

  it('asking for the envelope leaves the p-value and chance fraction unchanged (same generator stream)', () => {
    const rng = new Xoshiro128(12);
    const a = uniformIn(30, rng), b = uniformIn(25, rng);
    const plain = spotPlacementTest3D(a, b, cell, W, H, zs, { pairDistance: 2, placements: 99, seed: 4 });
    const withK = spotPlacementTest3D(a, b, cell, W, H, zs, { pairDistance: 2, placements: 99, seed: 4, kRadii: [3, 9] });
    expect(plain.envelope).toBeNull();
    expect({ ...withK, envelope: null }).toEqual(plain);
    expect(() => spotPlacementTest3D(a, b, cell, W, H, zs, { pairDistance: 2, placements: 9, kRadii: [-1] })).toThrow(/received -1/);
  });

  it('analyzeObjects3D returns the envelope when asked, as analyzeObjects does in 2D; measureObjects3D never computes it', () => {
    // two channels of planted Gaussian spots in the cell, channel 2 one pixel to the right
    const rng = new Xoshiro128(21);
    const centres = uniformIn(12, rng);
    const v1 = new Float64Array(W * H * D), v2 = new Float64Array(W * H * D);
    for (let z = 0; z < D; z++)
      for (let y = 0; y < H; y++)
        for (let x = 0; x < W; x++) {
          let s1 = 0, s2 = 0;
          for (let i = 0; i < centres.x.length; i++) {
            const dz = ((z + 0.5 - centres.z[i]) * zs) ** 2, dy = (y + 0.5 - centres.y[i]) ** 2;
            s1 += 1000 * Math.exp(-((x + 0.5 - centres.x[i]) ** 2 + dy + dz) / (2 * 1.5 ** 2));
            s2 += 1000 * Math.exp(-((x - 0.5 - centres.x[i]) ** 2 + dy + dz) / (2 * 1.5 ** 2));
          }
          const i = (z * H + y) * W + x;
          v1[i] = 100 + s1 + 5 * rng.nextFloat();
          v2[i] = 100 + s2 + 5 * rng.nextFloat();
        }
    const opts = { zScale: zs, placements: 99, seed: 2 };
    const a = analyzeObjects3D(v1, v2, W, H, D, cell, { ...opts, kRadii: radii });
    const plain = analyzeObjects3D(v1, v2, W, H, D, cell, opts);
    expect(plain.envelope).toBeNull();
    expect(a.result).toEqual(plain.result);
    const s1 = a.result.spots1, s2 = a.result.spots2;
    expect(s1.length).toBeGreaterThan(5);
    const k = crossK3D({ x: s1.map((p) => p[0]), y: s1.map((p) => p[1]), z: s1.map((p) => p[2]) }, { x: s2.map((p) => p[0]), y: s2.map((p) => p[1]), z: s2.map((p) => p[2]) }, zs, radii, { kind: 'volume', volume: cell.length * zs });
    a.envelope!.observed.forEach((v, q) => expect(Math.abs(v - k.K[q]!)).toBeLessThanOrEqual(1e-9 * k.K[q]!));
    // partners 1 pixel width apart: far more close pairs than chance at r = 2
    expect(a.envelope!.observed[0]).toBeGreaterThan(a.envelope!.hi[0]);
  });
});
