/**
 * comparisonFrom: one coefficient across the conditions of a study, with coverslips as replicates, from the
 * measured cells handed to it (a pure function: server/compare/compute.ts gathers the input from the grid
 * index and runs this in a thread, server/compare/compare-worker.ts).
 *
 * - Points: every included cell (not excluded, value defined), with its coverslip and condition
 *   (`pointsFromGrid`); the answer's JSON lists at most COMPARE_POINTS_MAX of them (`samplePoints`).
 * - Coverslip summary: number of cells, mean (Fisher's z average for correlation coefficients, Fisher 1915
 *   Biometrika 10:507), median, SD.
 * - Condition summary: number of coverslips, mean of coverslip means, median of coverslip medians (shown
 *   beside the mean; "Read with care" says when a Fisher-z mean and its median differ materially, see
 *   MEAN_MEDIAN_GAP), and a hierarchical bootstrap interval
 *   (resample coverslips, then cells; Saravanan et al. 2020 Neurons Behav. Data Anal. Theory 3(5)); the cells
 *   of a coverslip with more than NORMAL_ABOVE cells are resampled through the normal limit of their mean
 *   (shared/stats/bootstrap.ts `normalAbove`).
 * - Effects: every pair of conditions, difference of means of coverslip means with its bootstrap interval.
 * - Tests on coverslip means (the replicate level; Lord et al. 2020 J. Cell Biol. 219:e202001064): Welch's t
 *   and Mann–Whitney U for two conditions, one-way ANOVA and Kruskal–Wallis for more (shared/stats).
 * - Histograms of the coefficient and of the per-cell mean intensity of each channel, per condition, with
 *   the chi-squared, Earth Mover's and quadratic-chi (QCS m = 0.5, QCN m = 0.9, A_ij = max(0, 1 − |i − j|/2);
 *   Pele & Werman 2010) distances between every pair of conditions.
 */
import { byKey } from '../../shared/coefficients.js';
import { formatMagnitude, formatP } from '../../shared/format/number.js';
import {
  ComparisonHead,
  type Comparison,
  type CompareQuery,
  type ConditionStats,
  type CoverslipStats,
  type HistogramSet,
  type TestRow,
} from '../../shared/schemas/compare.js';
import {
  chiSquaredDistance,
  earthMoversDistance,
  QUADRATIC_CHI,
  quadraticChiDistance,
  triangleSimilarity,
  equalEdges,
  fisherZ,
  hierarchicalBootstrap,
  kruskalWallis,
  mannWhitneyU,
  mean,
  median,
  oneWayAnova,
  sd,
  welchT,
  type TestResult,
} from '../../shared/stats/index.js';
import { plural } from '../../shared/format/plural.js';

const TEST_LABELS: Record<TestRow['test'], string> = {
  welch_t: "Welch's t-test",
  mann_whitney_u: 'Mann–Whitney U test',
  one_way_anova: 'one-way ANOVA',
  kruskal_wallis: 'Kruskal–Wallis test',
};

/**
 * A mean through Fisher's z and the median of the same values "differ materially" when they are at least this
 * far apart in the coefficient's own units (a coverslip of 3 or more cells, or a condition of 2 or more
 * coverslips): on the z scale values near 1 weigh far more than the rest (atanh(0.999) ≈ 3.8, atanh(0.2) ≈ 0.2),
 * so the mean can sit well above most cells. Our rule (no outside source for the cut-off).
 */
export const MEAN_MEDIAN_GAP = 0.1;

/** resamples × cells drawn per comparison, at most */
export const BOOTSTRAP_BUDGET = 5e7;

const nn = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? null : v);


/**
 * Coverslips with more cells than this have their cell-level bootstrap resample drawn from the normal limit of
 * their mean (skewness-corrected) rather than cell by cell: there the two differ by far less than the
 * bootstrap's own Monte Carlo error (tests/stats/bootstrap.test.ts), and a resample no longer costs one draw per
 * cell (2,000 resamples of a million cells would be 2·10⁹ draws, about 8 s of CPU). Our cut-off.
 */
export const NORMAL_ABOVE = 1000;

/** The grid index's rows of a study (cell id order) and what a comparison names. */
export interface CompareTask {
  studyId: number;
  opts: CompareQuery;
  source: ComparisonHead['source'];
  conds: { id: number; name: string }[];
  slips: { id: number; name: string; replicate: number; conditionId: number }[];
  grid: {
    cellId: Int32Array;
    /** field index of each row */
    field: Int32Array;
    measured: Uint8Array;
    excluded: Uint8Array;
    saturated: Uint8Array;
    /** the coefficient's column */
    value: Float64Array;
    mean1: Float64Array;
    mean2: Float64Array;
    /** 1, 0 or NaN (unmeasured) */
    provisional: Float64Array;
    calibration: Float64Array;
    fieldId: Int32Array;
    coverslipId: Int32Array;
    conditionId: Int32Array;
  };
}

/** The points of a comparison as columns (what `Comparison.points` lists, one entry per index). */
export interface PointColumns {
  cellId: Int32Array;
  fieldId: Int32Array;
  coverslipId: Int32Array;
  conditionId: Int32Array;
  value: Float64Array;
}

/** The task's grid rows and fields, in a form the passes below read: the coverslip and condition position of
 * each field (-1 for fields outside the chosen conditions). */
function fieldPositions(task: CompareTask) {
  const g = task.grid;
  const condPos = denseIndex(task.conds.map((c) => c.id));
  const slipPos = denseIndex(task.slips.map((s) => s.id));
  const nf = g.fieldId.length;
  const fieldSlip = new Int32Array(nf);
  const fieldCond = new Int32Array(nf);
  for (let f = 0; f < nf; f++) {
    const c = condPos(g.conditionId[f]);
    const s = c < 0 ? -1 : slipPos(g.coverslipId[f]);
    fieldCond[f] = s < 0 ? -1 : c;
    fieldSlip[f] = s;
  }
  return { fieldSlip, fieldCond };
}

/**
 * The rows a comparison uses (measured, in a chosen condition, not excluded, value defined; for a coefficient
 * averaged through Fisher's z also |value| ≤ 1), in the grid's (cell id) order, and what was left out.
 */
export function usedRowsOf(task: CompareTask) {
  const g = task.grid;
  const fisher = byKey(task.opts.coefficient).fisherZ;
  const { fieldSlip, fieldCond } = fieldPositions(task);
  const omitted = { excluded: 0, undefinedValue: 0, provisional: 0, saturated: 0 };
  const total = g.cellId.length;
  const rows = new Int32Array(total);
  let n = 0;
  for (let r = 0; r < total; r++) {
    if (!g.measured[r] || fieldSlip[g.field[r]] < 0) continue;
    if (g.excluded[r]) {
      omitted.excluded++;
      continue;
    }
    const v = g.value[r];
    if (!Number.isFinite(v) || (fisher && Math.abs(v) > 1)) {
      omitted.undefinedValue++;
      continue;
    }
    if (g.provisional[r]) omitted.provisional++;
    if (g.saturated[r]) omitted.saturated++;
    rows[n++] = r;
  }
  return { rows: rows.subarray(0, n), omitted, fieldSlip, fieldCond };
}

/**
 * Every statistic of a comparison, read straight from the grid's columns in a few passes over the used rows:
 * the values of each coverslip in cell id order (and their Fisher z, computed once for the coverslip means and
 * the bootstrap), the three histograms counted while those are gathered, the calibrations used. The same
 * numbers as the per-row computation it replaced (tests/compare/reference-comparison.ts; checked in
 * tests/compare/comparison-fast.test.ts).
 */
export function comparisonFrom(task: CompareTask): ComparisonHead {
  const { opts, conds, slips, studyId } = task;
  const g = task.grid;
  const coefficient = opts.coefficient;
  const entry = byKey(coefficient);
  const fisher = entry.fisherZ;

  const { rows: usedRows, omitted, fieldSlip, fieldCond } = usedRowsOf(task);
  const nUsed = usedRows.length;

  // ---- one pass: cells per coverslip, the histograms' ranges, the calibrations used
  const counts = new Int32Array(slips.length);
  const value = g.value;
  const hists = [
    { key: 'coefficient' as const, label: entry.label, column: value, range: entry.axis ? ([entry.axis[0], entry.axis[1]] as [number, number]) : null },
    { key: 'mean1' as const, label: 'mean intensity, channel 1', column: g.mean1, range: null },
    { key: 'mean2' as const, label: 'mean intensity, channel 2', column: g.mean2, range: null },
  ].map((h) => ({ ...h, any: false, lo: h.range ? h.range[0] : Infinity, hi: h.range ? h.range[1] : -Infinity }));
  const calibrationsUsed = new Set<number>();
  let lastCalibration = NaN;
  for (let k = 0; k < nUsed; k++) {
    const r = usedRows[k];
    counts[fieldSlip[g.field[r]]]++;
    const id = g.calibration[r];
    if (id !== lastCalibration) {
      calibrationsUsed.add(Number.isNaN(id) ? 0 : id);
      lastCalibration = id;
    }
  }
  for (const h of hists) {
    const col = h.column;
    if (h.range) {
      for (let k = 0; k < nUsed && !h.any; k++) if (Number.isFinite(col[usedRows[k]])) h.any = true;
      continue;
    }
    let lo = Infinity, hi = -Infinity, any = false;
    for (let k = 0; k < nUsed; k++) {
      const v = col[usedRows[k]];
      if (!Number.isFinite(v)) continue;
      any = true;
      lo = v < lo ? v : lo;
      hi = v > hi ? v : hi;
    }
    Object.assign(h, { lo, hi, any });
  }

  // ---- the second pass: each coverslip's values (and z) in cell id order; the histograms' counts
  /** analysis scale: z for correlation coefficients */
  const back = (v: number) => (fisher ? Math.tanh(v) : v);
  const slipValues = slips.map((_, i) => new Float64Array(counts[i]));
  const slipZ = fisher ? slips.map((_, i) => new Float64Array(counts[i])) : slipValues;
  const bins = hists.map((h) => {
    if (!h.any) return null;
    const edges = equalEdges(h.lo, h.hi, opts.bins);
    // as `histogram` (shared/stats/histogram.ts) bins a value: the range and width from the edges
    const nb = edges.length - 1;
    const lo = edges[0], hi = edges[nb];
    return { edges, nb, lo, hi, w: (hi - lo) / nb, counts: new Int32Array(conds.length * nb) };
  });
  counts.fill(0);
  const [hv, h1, h2] = bins;
  const m1 = g.mean1, m2 = g.mean2;
  for (let k = 0; k < nUsed; k++) {
    const r = usedRows[k];
    const f = g.field[r];
    const i = fieldSlip[f];
    const v = value[r];
    const at = counts[i]++;
    slipValues[i][at] = v;
    if (fisher) slipZ[i][at] = fisherZ(v);
    const c = fieldCond[f];
    if (hv) countBin(hv, c, v);
    if (h1) countBin(h1, c, m1[r]);
    if (h2) countBin(h2, c, m2[r]);
  }

  // ---- coverslip level
  const slipMeanZ = new Map<number, number>();
  const coverslips: CoverslipStats[] = slips.map((s, i) => {
    const vals = slipValues[i];
    let m: number | null = null;
    if (vals.length) {
      const z = mean(slipZ[i]);
      slipMeanZ.set(s.id, z);
      m = back(z);
    }
    const meanZ = fisher && slipMeanZ.has(s.id) ? nn(slipMeanZ.get(s.id)!) : null;
    return { id: s.id, name: s.name, replicate: s.replicate, conditionId: s.conditionId, colorIndex: i, nCells: vals.length, mean: nn(m), meanZ, median: vals.length ? nn(median(vals)) : null, sd: vals.length > 1 ? nn(sd(vals)) : null };
  });

  // ---- bootstrap (coverslips, then cells), on the z values computed above
  const hierarchy = conds.map((c) => slips.flatMap((s, i) => (s.conditionId === c.id ? [slipZ[i]] : [])));
  // work budget: resamples × cells drawn one by one ≤ 5e7 (about half a second on one core), but never fewer
  // than 500 resamples; coverslips above NORMAL_ABOVE cost one draw a resample, not one per cell
  let nExact = 0;
  for (const v of slipValues) if (v.length <= NORMAL_ABOVE) nExact += v.length;
  const resamples = Math.max(Math.min(opts.resamples, 500), Math.min(opts.resamples, Math.floor(BOOTSTRAP_BUDGET / Math.max(1, nExact))));
  const boot = hierarchicalBootstrap(hierarchy, { seed: opts.seed, resamples, confidence: opts.confidence, transform: fisher ? 'fisher_z' : 'identity', normalAbove: NORMAL_ABOVE, transformed: true });

  const slipMeansByCond = conds.map((c) => slips.filter((s) => s.conditionId === c.id && slipMeanZ.has(s.id)).map((s) => slipMeanZ.get(s.id)!));
  const conditions: ConditionStats[] = conds.map((c, i) => {
    const ms = slipMeansByCond[i];
    return {
      id: c.id,
      name: c.name,
      nCoverslips: ms.length,
      nCells: hierarchy[i].reduce((s, v) => s + v.length, 0),
      mean: ms.length ? nn(back(mean(ms))) : null,
      meanZ: fisher && ms.length ? nn(mean(ms)) : null,
      median: medianOfMedians(coverslips.filter((s) => s.conditionId === c.id)),
      sdOfCoverslipMeans: ms.length > 1 ? nn(sd(ms)) : null,
      ci: { lower: nn(boot.conditions[i].lower), upper: nn(boot.conditions[i].upper) },
    };
  });
  const effects = boot.differences.map((d) => ({
    a: conds[d.a].id,
    b: conds[d.b].id,
    aName: conds[d.a].name,
    bName: conds[d.b].name,
    label: `${conds[d.b].name} − ${conds[d.a].name}`,
    estimate: nn(d.estimate),
    ci: { lower: nn(d.lower), upper: nn(d.upper) },
  }));

  // ---- tests on coverslip means
  const withData = slipMeansByCond.map((ms, i) => ({ ms, i })).filter((g) => g.ms.length > 0);
  const tests: TestRow[] = [];
  const scaleNote = fisher ? ' on coverslip means (Fisher z scale)' : ' on coverslip means';
  const push = (t: TestResult, direction = '') => tests.push({ test: t.test, label: TEST_LABELS[t.test], statistic: nn(t.statistic), df: t.df.filter(Number.isFinite), p: nn(t.p), note: t.note + scaleNote + direction });
  if (withData.length === 2) {
    // Later condition (b) first, so the statistics point the same way as the effect "b − a" shown beside them:
    // Welch's t > 0 and U > n_a·n_b/2 when b is higher (p-values are two-sided, unchanged by the order).
    const [a, b] = [conds[withData[0].i].name, conds[withData[1].i].name];
    push(welchT(withData[1].ms, withData[0].ms), `; t > 0 when ${b} is higher than ${a}`);
    push(mannWhitneyU(withData[1].ms, withData[0].ms), `; U counts pairs with ${b} above ${a}`);
  } else if (withData.length > 2) {
    push(oneWayAnova(withData.map((g) => g.ms)));
    push(kruskalWallis(withData.map((g) => g.ms)));
  }

  // ---- histograms (counted in the second pass)
  const histograms: HistogramSet[] = [];
  hists.forEach((h, j) => {
    const hb = bins[j];
    if (!hb) return;
    const { edges, nb } = hb;
    const byCondition = conds.map((c, i) => ({ conditionId: c.id, counts: Array.from(hb.counts.subarray(i * nb, (i + 1) * nb)) }));
    const width = edges[1] - edges[0];
    const similarity = triangleSimilarity(edges.length - 1, QUADRATIC_CHI.similarityBins);
    const distances: HistogramSet['distances'] = [];
    for (let a = 0; a < conds.length; a++)
      for (let b = a + 1; b < conds.length; b++) {
        const [ha, hb2] = [byCondition[a].counts, byCondition[b].counts];
        distances.push({
          a: conds[a].id,
          b: conds[b].id,
          chiSquared: nn(chiSquaredDistance(ha, hb2)),
          emd: nn(earthMoversDistance(ha, hb2, width)),
          quadraticChiS: nn(quadraticChiDistance(ha, hb2, similarity, QUADRATIC_CHI.mS)),
          quadraticChiN: nn(quadraticChiDistance(ha, hb2, similarity, QUADRATIC_CHI.mN)),
        });
      }
    histograms.push({ key: h.key, label: h.label, edges, byCondition, distances });
  });

  // ---- warnings and the plain sentence
  const warnings: string[] = [];
  if (task.source.recipeId === null) warnings.push('No measurements yet: run a recipe on this study\'s fields first.');
  for (const c of conditions) {
    if (c.nCoverslips < 3) warnings.push(`${capitalize(c.name)} has ${plural(c.nCoverslips, 'coverslip')} with measured cells; at least 3 are needed for a replicate-level comparison to mean much.`);
  }
  if (omitted.undefinedValue) warnings.push(`${omitted.undefinedValue} cell${omitted.undefinedValue === 1 ? ' has' : 's have'} no defined ${entry.label} (for example no pixels above threshold or a constant channel) and are left out.`);
  if (omitted.excluded) warnings.push(`${omitted.excluded} excluded cell${omitted.excluded === 1 ? ' is' : 's are'} left out (reasons in the Cell table).`);
  if (omitted.provisional) warnings.push(`${omitted.provisional} cell values come from provisional measurements (a recipe not yet approved).`);
  if (calibrationsUsed.size > 1)
    warnings.push(
      `The measurements mix channel calibrations (${calibrationsUsed.size} different${calibrationsUsed.has(0) ? ', counting uncorrected cells as one' : ''}): shift and bleed-through corrections differ between cells, so differences may come from the calibration.`,
    );
  if (omitted.saturated) warnings.push(`${omitted.saturated} cells contain saturated pixels, which bias co-localization coefficients.`);
  if (withData.length === 2) {
    // smallest two-sided exact Mann–Whitney p with these coverslip counts: 2 / C(n1 + n2, n1)
    const [n1, n2] = [withData[0].ms.length, withData[1].ms.length];
    let comb = 1;
    for (let i = 1; i <= n1; i++) comb = (comb * (n2 + i)) / i;
    const pmin = Math.min(1, 2 / comb);
    if (pmin > 0.05) warnings.push(`With ${n1} and ${n2} coverslips the Mann–Whitney test cannot give p below ${pmin.toFixed(3)}, whatever the data; more coverslips are needed for a rank test to be informative.`);
  }
  if (resamples < opts.resamples) warnings.push(`With ${nUsed} cells the bootstrap used ${resamples} resamples instead of ${opts.resamples} to keep the page responsive.`);
  if (boot.normalCoverslips)
    warnings.push(
      `In ${plural(boot.normalCoverslips, 'coverslip')} with more than ${NORMAL_ABOVE.toLocaleString('en')} cells the bootstrap drew each resampled coverslip mean from its normal limit (skewness-corrected) instead of cell by cell; with that many cells the two differ by far less than the bootstrap's own random error.`,
    );
  if (fisher) warnings.push("Correlation coefficients are averaged through Fisher's z (|r| clamped at 1 − 1e−7).");
  if (fisher) {
    const gap = meanMedianGaps(coverslips, conditions);
    if (gap) warnings.push(gap);
  }

  const label = entry.label;
  const summary = sentence(label, fisher, conditions, effects, tests, opts.confidence);

  const head = ComparisonHead.parse({
    studyId,
    coefficient,
    label,
    averaging: fisher ? 'fisher_z' : 'arithmetic',
    source: task.source,
    scale: fisher ? 'fisher_z' : 'identity',
    bootstrap: { resamples: boot.resamples, seed: boot.seed, confidence: boot.confidence, normalAbove: boot.normalAbove, normalCoverslips: boot.normalCoverslips },
    coverslips,
    conditions,
    effects,
    tests,
    histograms,
    pointsTotal: nUsed,
    pointsSample: null,
    omitted,
    warnings,
    summary,
    generatedAt: new Date().toISOString(),
  });
  return head;
}

/** The comparison's points (the rows `usedRowsOf` picks) straight from the grid's columns. */
export function pointsFromGrid(task: CompareTask): PointColumns {
  const g = task.grid;
  const { rows } = usedRowsOf(task);
  const m = rows.length;
  const p: PointColumns = { cellId: new Int32Array(m), fieldId: new Int32Array(m), coverslipId: new Int32Array(m), conditionId: new Int32Array(m), value: new Float64Array(m) };
  for (let k = 0; k < m; k++) {
    const r = rows[k];
    const f = g.field[r];
    p.cellId[k] = g.cellId[r];
    p.fieldId[k] = g.fieldId[f];
    p.coverslipId[k] = g.coverslipId[f];
    p.conditionId[k] = g.conditionId[f];
    p.value[k] = g.value[r];
  }
  return p;
}

/** Counts v in its condition's bin as `histogram` does: finite values within the edges only. */
function countBin(h: { nb: number; lo: number; hi: number; w: number; counts: Int32Array }, cond: number, v: number) {
  if (!Number.isFinite(v) || v < h.lo || v > h.hi) return;
  let b = Math.floor((v - h.lo) / h.w);
  if (b >= h.nb) b = h.nb - 1;
  h.counts[cond * h.nb + b]++;
}

/** id → position in `ids` (-1 when absent): a table when the ids are small, else a map. */
function denseIndex(ids: number[]): (id: number) => number {
  const max = ids.reduce((m, id) => Math.max(m, id), 0);
  if (max <= 4 * ids.length + 65536) {
    const t = new Int32Array(max + 1).fill(-1);
    ids.forEach((id, i) => (t[id] = i));
    return (id) => (id >= 0 && id <= max ? t[id] : -1);
  }
  const m = new Map(ids.map((id, i) => [id, i]));
  return (id) => m.get(id) ?? -1;
}

/**
 * At most `max` of the points (all when there are no more), stratified by coverslip: each coverslip gets its
 * share q of `max` by largest remainders, at least two (all of its cells when it has fewer); of its n cells
 * (in cell id order) it keeps the lowest and the highest value (the first cell on ties, so the plot's value
 * axis is the one all points give) and q − 2 more at positions ⌊(t + ½)·n/(q − 2)⌋, t = 0 … q − 3 (evenly
 * spaced; one fewer each time such a position is the lowest or highest cell). Deterministic (no seed); the
 * result is in cell id order like the input. Our method.
 */
export function samplePoints(p: PointColumns, max: number): { points: PointColumns; sampled: boolean } {
  const n = p.cellId.length;
  if (n <= max) return { points: p, sampled: false };
  // the rows of each coverslip, in cell id order
  const slipOf = new Map<number, number>();
  const slipRow = new Int32Array(n);
  const counts: number[] = [];
  for (let k = 0; k < n; k++) {
    let j = slipOf.get(p.coverslipId[k]);
    if (j === undefined) slipOf.set(p.coverslipId[k], (j = counts.push(0) - 1));
    slipRow[k] = j;
    counts[j]++;
  }
  const m = counts.length;
  const starts = new Int32Array(m + 1);
  for (let j = 0; j < m; j++) starts[j + 1] = starts[j] + counts[j];
  const rows = new Int32Array(n);
  const fill = starts.slice(0, m);
  for (let k = 0; k < n; k++) rows[fill[slipRow[k]]++] = k;
  // quotas: floors of the shares, the rest by largest remainder (first coverslip first on ties), then at least
  // min(2, cells) each, taken from the largest quotas
  const quota = counts.map((c) => Math.floor((max * c) / n));
  const order = counts.map((_, j) => j).sort((a, b) => (max * counts[b]) % n - (max * counts[a]) % n || a - b);
  for (let left = max - quota.reduce((s, q) => s + q, 0), i = 0; left > 0; left--, i++) quota[order[i % m]]++;
  for (let j = 0; j < m; j++) {
    const want = Math.min(2, counts[j]);
    while (quota[j] < want) {
      let big = 0;
      for (let i = 1; i < m; i++) if (quota[i] > quota[big]) big = i;
      if (quota[big] <= 2) break;
      quota[big]--;
      quota[j]++;
    }
  }
  const picked = new Uint8Array(n);
  for (let j = 0; j < m; j++) {
    const c = counts[j];
    const q = Math.min(quota[j], c);
    if (q <= 0) continue;
    const own = rows.subarray(starts[j], starts[j + 1]);
    if (q >= c || q === 1) {
      // all of them; or one, the middle cell (only when there are more coverslips than max / 2)
      if (q === 1 && c > 1) picked[own[c >> 1]] = 1;
      else for (let i = 0; i < c; i++) picked[own[i]] = 1;
      continue;
    }
    // the lowest and highest value (the first cell on ties), then the rest evenly spaced in cell id order
    let lo = 0, hi = 0;
    for (let i = 1; i < c; i++) {
      const v = p.value[own[i]];
      if (v < p.value[own[lo]]) lo = i;
      if (v > p.value[own[hi]]) hi = i;
    }
    picked[own[lo]] = 1;
    picked[own[hi]] = 1;
    const rest = q - (lo === hi ? 1 : 2);
    for (let t = 0; t < rest; t++) picked[own[Math.floor(((t + 0.5) * c) / rest)]] = 1;
  }
  let total = 0;
  for (let k = 0; k < n; k++) total += picked[k];
  const out: PointColumns = { cellId: new Int32Array(total), fieldId: new Int32Array(total), coverslipId: new Int32Array(total), conditionId: new Int32Array(total), value: new Float64Array(total) };
  for (let k = 0, i = 0; k < n; k++) {
    if (!picked[k]) continue;
    out.cellId[i] = p.cellId[k];
    out.fieldId[i] = p.fieldId[k];
    out.coverslipId[i] = p.coverslipId[k];
    out.conditionId[i] = p.conditionId[k];
    out.value[i] = p.value[k];
    i++;
  }
  return { points: out, sampled: true };
}

/** The points as `Comparison.points` lists them. */
export function pointList(p: PointColumns) {
  return Array.from(p.cellId, (cellId, k) => ({ cellId, fieldId: p.fieldId[k], coverslipId: p.coverslipId[k], conditionId: p.conditionId[k], value: p.value[k] }));
}

/**
 * The points as UTF-8 JSON (an array), written byte by byte from the columns (a million points are ~80 MB;
 * building them as strings first costs several times as much). Numbers are written as JSON.stringify writes
 * them (integers in decimal, other values by the shortest round-trip form).
 */
export function pointsJson(p: PointColumns): Uint8Array {
  const enc = new TextEncoder();
  const keys = ['{"cellId":', ',"fieldId":', ',"coverslipId":', ',"conditionId":', ',"value":'].map((k) => enc.encode(k));
  const n = p.cellId.length;
  // at most per point: the keys (60 bytes), 4 integers of ≤ 11 characters, a number of ≤ 24, "}" and ","
  const out = new Uint8Array(2 + n * 130);
  let at = 0;
  out[at++] = 91;
  const cols = [p.cellId, p.fieldId, p.coverslipId, p.conditionId];
  // the bytes from ',"fieldId":' to '"value":' are the same for the cells of one field (rows come field by
  // field): copied from the previous point's while the field stays the same
  let segAt = -1, segLen = 0;
  for (let k = 0; k < n; k++) {
    if (k) out[at++] = 44;
    for (let i = 0; i < keys[0].length; i++) out[at++] = keys[0][i];
    at = writeInt(out, at, p.cellId[k]);
    if (segAt >= 0 && p.fieldId[k] === p.fieldId[k - 1] && p.coverslipId[k] === p.coverslipId[k - 1] && p.conditionId[k] === p.conditionId[k - 1]) {
      for (let i = 0; i < segLen; i++) out[at + i] = out[segAt + i];
      segAt = at;
      at += segLen;
    } else {
      segAt = at;
      for (let c = 1; c < 5; c++) {
        const key = keys[c];
        for (let i = 0; i < key.length; i++) out[at++] = key[i];
        if (c < 4) at = writeInt(out, at, cols[c][k]);
      }
      segLen = at - segAt;
    }
    const v = p.value[k];
    const text = Number.isInteger(v) && Math.abs(v) < 1e15 ? null : JSON.stringify(v);
    if (text === null) at = writeInt(out, at, v === 0 ? 0 : v);
    else for (let i = 0; i < text.length; i++) out[at++] = text.charCodeAt(i);
    out[at++] = 125;
  }
  out[at++] = 93;
  return out.slice(0, at);
}

/** The comparison's JSON in three parts: `{"points":`, the points (pointsJson), and the head's fields. */
export function comparisonJsonParts(head: ComparisonHead, points: Uint8Array): Uint8Array[] {
  const enc = new TextEncoder();
  return [enc.encode('{"points":'), points, enc.encode(`,${JSON.stringify(head).slice(1)}`)];
}

/** Writes the integer |v| < 1e15 in decimal at `at`; returns the position after it. */
function writeInt(out: Uint8Array, at: number, v: number): number {
  if (v < 0) {
    out[at++] = 45;
    v = -v;
  }
  let len = 1;
  for (let p = 10; p <= v; p *= 10) len++;
  let pos = at + len;
  do {
    const q = v < 2147483648 ? (v / 10) | 0 : Math.floor(v / 10);
    out[--pos] = 48 + (v - q * 10);
    v = q;
  } while (v > 0);
  return at + len;
}

function medianOfMedians(slips: CoverslipStats[]): number | null {
  const ms = slips.map((s) => s.median).filter((v): v is number => v !== null);
  return ms.length ? nn(median(ms)) : null;
}

/**
 * The "Read with care" line when a Fisher-z mean and its median differ by MEAN_MEDIAN_GAP or more: coverslips
 * (mean of cells vs median of cells, 3 or more cells) and conditions (mean of coverslip means vs median of
 * coverslip medians, 2 or more coverslips). Null when none does.
 */
export function meanMedianGaps(coverslips: CoverslipStats[], conditions: ConditionStats[]): string | null {
  const far = (m: number | null, md: number | null) => m !== null && md !== null && Math.abs(m - md) >= MEAN_MEDIAN_GAP - 1e-12;
  const items = [
    ...conditions.filter((c) => c.nCoverslips >= 2 && far(c.mean, c.median)).map((c) => `${c.name}: mean ${formatMagnitude(c.mean)}, median ${formatMagnitude(c.median)}`),
    ...coverslips.filter((s) => s.nCells >= 3 && far(s.mean, s.median)).map((s) => `${s.name}: mean ${formatMagnitude(s.mean)}, median ${formatMagnitude(s.median)}`),
  ];
  if (!items.length) return null;
  const shown = items.slice(0, 4).join('; ') + (items.length > 4 ? `; and ${items.length - 4} more` : '');
  return `The mean through Fisher's z and the median differ by ${MEAN_MEDIAN_GAP} or more (${shown}): values near 1 weigh most on the z scale, so a few cells can pull the mean above most of the others. Read the medians beside the means.`;
}

/** Upper-case the first letter when a name opens a sentence ("treated" → "Treated"); the rest is kept as written. */
export function capitalize(text: string): string {
  return text.charAt(0).toLocaleUpperCase('en') + text.slice(1);
}

function sentence(label: string, fisher: boolean, conditions: ConditionStats[], effects: Comparison['effects'], tests: TestRow[], conf: number): string {
  const pct = `${Math.round(conf * 100)}%`;
  const withData = conditions.filter((c) => c.nCoverslips > 0);
  if (withData.length === 0) return `No measured cells to compare for ${label}.`;
  const means = withData.map((c) => `${formatMagnitude(c.mean)} in ${c.name} (${plural(c.nCoverslips, 'coverslip')}, ${plural(c.nCells, 'cell')})`).join(', ');
  const head = `Mean of coverslip means of ${label}${fisher ? " (averaged through Fisher's z)" : ''}: ${means}.`;
  if (withData.length === 1) return `${head} Only one condition has data, so nothing is compared.`;
  const tstr = tests.map((t) => `${t.label}${t.statistic === null ? '' : ` ${t.test === 'mann_whitney_u' ? 'U' : t.test === 'welch_t' ? 't' : t.test === 'one_way_anova' ? 'F' : 'H'} = ${formatMagnitude(t.statistic)}`}, ${formatP(t.p)}`).join('; ');
  if (withData.length === 2) {
    const e = effects.find((x) => withData.some((c) => c.id === x.a) && withData.some((c) => c.id === x.b));
    if (e && e.estimate !== null) {
      const dir = e.estimate > 0 ? 'higher' : e.estimate < 0 ? 'lower' : 'the same';
      const ci = e.ci.lower !== null && e.ci.upper !== null ? ` (${pct} hierarchical bootstrap interval ${formatMagnitude(e.ci.lower)} to ${formatMagnitude(e.ci.upper)})` : '';
      const zero = e.ci.lower !== null && e.ci.upper !== null ? (e.ci.lower > 0 || e.ci.upper < 0 ? ' The interval excludes zero.' : ' The interval includes zero, so the data are also compatible with no difference.') : '';
      return `${head} ${capitalize(e.bName)} is ${dir} than ${e.aName} by ${formatMagnitude(Math.abs(e.estimate))}${ci}.${zero} Tests on coverslip means: ${tstr}.`;
    }
  }
  return `${head} Tests on coverslip means across ${withData.length} conditions: ${tstr}.`;
}
