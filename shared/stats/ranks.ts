/**
 * Average ranks ("mid-ranks") of pooled samples and the tie term Σ(t³ − t) over groups of tied values,
 * as used by the Mann–Whitney and Kruskal–Wallis tie corrections.
 */
export interface Ranked {
  ranks: Float64Array;
  /** Σ (t³ − t) over tie groups of size t */
  tieTerm: number;
  hasTies: boolean;
}

export function averageRanks(values: ArrayLike<number>): Ranked {
  const n = values.length;
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => values[a] - values[b]);
  const ranks = new Float64Array(n);
  let tieTerm = 0;
  let i = 0;
  while (i < n) {
    let j = i + 1;
    while (j < n && values[order[j]] === values[order[i]]) j++;
    const r = (i + 1 + j) / 2; // average of ranks i+1..j
    for (let k = i; k < j; k++) ranks[order[k]] = r;
    const t = j - i;
    if (t > 1) tieTerm += t * t * t - t;
    i = j;
  }
  return { ranks, tieTerm, hasTies: tieTerm > 0 };
}
