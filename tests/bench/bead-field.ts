/**
 * A synthetic bead field for the calibration benchmarks (invented data): about 2,000 Gaussian beads (σ 1.5 px)
 * per 2048² on a background with noise; `dx, dy` displace the beads (channel 2 of a shifted pair).
 */
import { Xoshiro128 } from '../../shared/analysis/prng';

export function beadField(S: number, dx: number, dy: number): Uint16Array {
  const N = Math.round((2000 * S * S) / (2048 * 2048));
  const rng = new Xoshiro128(7);
  const noise = new Xoshiro128(dx === 0 ? 1 : 2);
  const f = new Float32Array(S * S);
  for (let i = 0; i < f.length; i++) f[i] = 200 + 30 * (noise.nextFloat() + noise.nextFloat() + noise.nextFloat() - 1.5);
  for (let k = 0; k < N; k++) {
    const cx = 4 + rng.nextFloat() * (S - 8) + dx, cy = 4 + rng.nextFloat() * (S - 8) + dy, a = 300 + 900 * rng.nextFloat();
    for (let y = Math.max(0, Math.floor(cy - 7)); y < Math.min(S, cy + 7); y++)
      for (let x = Math.max(0, Math.floor(cx - 7)); x < Math.min(S, cx + 7); x++) f[y * S + x] += a * Math.exp(-((x - cx) ** 2 + (y - cy) ** 2) / 4.5);
  }
  return Uint16Array.from(f, (v) => Math.min(65535, Math.round(v)));
}
