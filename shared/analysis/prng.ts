/**
 * Seeded pseudo-random numbers for repeatable randomization tests.
 *
 * xoshiro128** after Blackman & Vigna (2021), "Scrambled linear pseudorandom number generators",
 * ACM Trans. Math. Softw. 47(4):36, doi:10.1145/3460772. The 128-bit state is filled from the 32-bit seed
 * with SplitMix32 (the 32-bit variant of Steele, Lea & Flood 2014, "Fast splittable pseudorandom number
 * generators", OOPSLA, doi:10.1145/2660193.2660195), so any seed (including 0) gives a valid state.
 */
export class Xoshiro128 {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;

  constructor(seed: number) {
    if (!Number.isFinite(seed)) throw new RangeError(`seed must be a finite number, received ${seed}`);
    let z = seed >>> 0;
    const next = () => {
      z = (z + 0x9e3779b9) | 0;
      let t = z ^ (z >>> 16);
      t = Math.imul(t, 0x21f0aaad);
      t ^= t >>> 15;
      t = Math.imul(t, 0x735a2d97);
      return (t ^ (t >>> 15)) >>> 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
  }

  /** a generator with an explicit 128-bit state (four 32-bit words, not all 0) — for reference checks */
  static fromState(s0: number, s1: number, s2: number, s3: number): Xoshiro128 {
    if ((s0 | s1 | s2 | s3) === 0) throw new RangeError('xoshiro128** state must not be all zero');
    const g = new Xoshiro128(0);
    g.s0 = s0 | 0;
    g.s1 = s1 | 0;
    g.s2 = s2 | 0;
    g.s3 = s3 | 0;
    return g;
  }

  /** next unsigned 32-bit integer */
  nextUint32(): number {
    const result = Math.imul(rotl(Math.imul(this.s1, 5), 7), 9) >>> 0;
    const t = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** uniform double in [0, 1) with 32 bits of randomness */
  nextFloat(): number {
    return this.nextUint32() / 4294967296;
  }

  /** unbiased uniform integer in [0, k), k ≤ 2^32 (rejection sampling) */
  nextInt(k: number): number {
    if (!(k >= 1 && k <= 4294967296)) throw new RangeError(`range must be in [1, 2^32], received ${k}`);
    const limit = 4294967296 - (4294967296 % k);
    let r: number;
    do r = this.nextUint32();
    while (r >= limit);
    return r % k;
  }

  /** Fisher–Yates (Durstenfeld 1964, Commun. ACM 7:420, doi:10.1145/364520.364540) in place */
  shuffle<T extends { length: number; [i: number]: number }>(a: T): T {
    for (let i = a.length - 1; i > 0; i--) {
      const j = this.nextInt(i + 1);
      const t = a[i];
      a[i] = a[j];
      a[j] = t;
    }
    return a;
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}
