/**
 * The comparison as server/compare/comparison.ts computed it before 2026-12-03 (a frozen copy of that code,
 * only its point writers left out): per-row input columns (`CompareInput`, which `inputFromGrid` copies out of
 * the grid index), the z transform in the coverslip means and again inside the bootstrap, one pass per
 * histogram. The single-pass `comparisonFrom` of the server must give exactly the same statistics
 * (tests/compare/comparison-fast.test.ts), and the SQL definition of the cells is handed to this one by
 * tests/compare/compare-cache.test.ts.
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
  histogram,
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
const MEAN_MEDIAN_GAP = 0.1;

/** resamples × cells drawn per comparison, at most */
const BOOTSTRAP_BUDGET = 5e7;

const nn = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? null : v);


/**
 * Coverslips with more cells than this have their cell-level bootstrap resample drawn from the normal limit of
 * their mean (skewness-corrected) rather than cell by cell: there the two differ by far less than the
 * bootstrap's own Monte Carlo error (tests/stats/bootstrap.test.ts), and a resample no longer costs one draw per
 * cell (2,000 resamples of a million cells would be 2·10⁹ draws, about 8 s of CPU). Our cut-off.
 */
const NORMAL_ABOVE = 1000;

/** The measured cells of the chosen conditions (rows in cell id order) and what a comparison names. */
export interface CompareInput {
  studyId: number;
  opts: CompareQuery;
  source: ComparisonHead['source'];
  conds: { id: number; name: string }[];
  slips: { id: number; name: string; replicate: number; conditionId: number }[];
  cellId: Int32Array;
  fieldId: Int32Array;
  coverslipId: Int32Array;
  conditionId: Int32Array;
  /** the coefficient; NaN where undefined */
  value: Float64Array;
  mean1: Float64Array;
  mean2: Float64Array;
  excluded: Uint8Array;
  provisional: Uint8Array;
  saturated: Uint8Array;
  /** calibration id of the measurement, NaN when none */
  calibration: Float64Array;
}

/** The grid index's columns a comparison reads (rows of the grid; fieldId, coverslipId, conditionId per field). */
export interface CompareTask extends Pick<CompareInput, 'studyId' | 'opts' | 'source' | 'conds' | 'slips'> {
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

/** The measured cells of the task's conditions, in the grid's (cell id) order. */
export function inputFromGrid(task: CompareTask): CompareInput {
  const g = task.grid;
  const condIds = new Set(task.conds.map((c) => c.id));
  const inCond = Uint8Array.from(g.conditionId, (id) => (condIds.has(id) ? 1 : 0));
  const total = g.cellId.length;
  let n = 0;
  for (let r = 0; r < total; r++) if (g.measured[r] && inCond[g.field[r]]) n++;
  const input: CompareInput = {
    studyId: task.studyId,
    opts: task.opts,
    source: task.source,
    conds: task.conds,
    slips: task.slips,
    cellId: new Int32Array(n),
    fieldId: new Int32Array(n),
    coverslipId: new Int32Array(n),
    conditionId: new Int32Array(n),
    value: new Float64Array(n),
    mean1: new Float64Array(n),
    mean2: new Float64Array(n),
    excluded: new Uint8Array(n),
    provisional: new Uint8Array(n),
    saturated: new Uint8Array(n),
    calibration: new Float64Array(n),
  };
  for (let r = 0, k = 0; r < total; r++) {
    const f = g.field[r];
    if (!g.measured[r] || !inCond[f]) continue;
    input.cellId[k] = g.cellId[r];
    input.fieldId[k] = g.fieldId[f];
    input.coverslipId[k] = g.coverslipId[f];
    input.conditionId[k] = g.conditionId[f];
    input.value[k] = g.value[r];
    input.mean1[k] = g.mean1[r];
    input.mean2[k] = g.mean2[r];
    input.excluded[k] = g.excluded[r];
    input.provisional[k] = g.provisional[r] ? 1 : 0;
    input.saturated[k] = g.saturated[r];
    input.calibration[k] = g.calibration[r];
    k++;
  }
  return input;
}

/** The points of a comparison as columns (what `Comparison.points` lists, one entry per index). */
export interface PointColumns {
  cellId: Int32Array;
  fieldId: Int32Array;
  coverslipId: Int32Array;
  conditionId: Int32Array;
  value: Float64Array;
}

export function comparisonFrom(input: CompareInput): ComparisonHead {
  const { opts, conds, slips, studyId } = input;
  const coefficient = opts.coefficient;
  const entry = byKey(coefficient);
  const fisher = entry.fisherZ;

  const condPos = denseIndex(conds.map((c) => c.id));
  const { omitted, rowSlip, counts, usedRows } = selectRows(input);
  const nUsed = usedRows.length;

  // ---- coverslip level (values in cell id order)
  const slipValues = slips.map((_, i) => new Float64Array(counts[i]));
  counts.fill(0);
  for (let k = 0; k < nUsed; k++) {
    const r = usedRows[k];
    const i = rowSlip[r];
    slipValues[i][counts[i]++] = input.value[r];
  }
  /** analysis scale: z for correlation coefficients */
  const fwd = (v: number) => (fisher ? fisherZ(v) : v);
  const back = (v: number) => (fisher ? Math.tanh(v) : v);
  const slipMeanZ = new Map<number, number>();
  const coverslips: CoverslipStats[] = slips.map((s, i) => {
    const vals = slipValues[i];
    let m: number | null = null;
    if (vals.length) {
      const z = mean(vals.map(fwd));
      slipMeanZ.set(s.id, z);
      m = back(z);
    }
    const meanZ = fisher && slipMeanZ.has(s.id) ? nn(slipMeanZ.get(s.id)!) : null;
    return { id: s.id, name: s.name, replicate: s.replicate, conditionId: s.conditionId, colorIndex: i, nCells: vals.length, mean: nn(m), meanZ, median: vals.length ? nn(median(vals)) : null, sd: vals.length > 1 ? nn(sd(vals)) : null };
  });

  // ---- bootstrap (coverslips, then cells)
  const hierarchy = conds.map((c) => slips.flatMap((s, i) => (s.conditionId === c.id ? [slipValues[i]] : [])));
  // work budget: resamples × cells drawn one by one ≤ 5e7 (about half a second on one core), but never fewer
  // than 500 resamples; coverslips above NORMAL_ABOVE cost one draw a resample, not one per cell
  let nExact = 0;
  for (const v of slipValues) if (v.length <= NORMAL_ABOVE) nExact += v.length;
  const resamples = Math.max(Math.min(opts.resamples, 500), Math.min(opts.resamples, Math.floor(BOOTSTRAP_BUDGET / Math.max(1, nExact))));
  const boot = hierarchicalBootstrap(hierarchy, { seed: opts.seed, resamples, confidence: opts.confidence, transform: fisher ? 'fisher_z' : 'identity', normalAbove: NORMAL_ABOVE });

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

  // ---- histograms
  const histograms: HistogramSet[] = [];
  const usedCond = new Int32Array(nUsed);
  for (let k = 0; k < nUsed; k++) usedCond[k] = condPos(input.conditionId[usedRows[k]]);
  const addHist = (key: HistogramSet['key'], label: string, column: Float64Array, range: [number, number] | null) => {
    const col = new Float64Array(nUsed);
    for (let k = 0; k < nUsed; k++) col[k] = column[usedRows[k]];
    let any = false;
    let [lo, hi] = range ?? [Infinity, -Infinity];
    for (let k = 0; k < nUsed; k++) {
      const v = col[k];
      if (!Number.isFinite(v)) continue;
      any = true;
      if (!range) (lo = v < lo ? v : lo), (hi = v > hi ? v : hi);
    }
    if (!any) return;
    const edges = equalEdges(lo, hi, opts.bins);
    // each condition's values (NULL, i.e. NaN, left out as the SQL rows' nulls were), in cell id order
    const perCond = new Int32Array(conds.length);
    for (let k = 0; k < nUsed; k++) if (!Number.isNaN(col[k])) perCond[usedCond[k]]++;
    const vals = conds.map((_, i) => new Float64Array(perCond[i]));
    perCond.fill(0);
    for (let k = 0; k < nUsed; k++) {
      if (Number.isNaN(col[k])) continue;
      const c = usedCond[k];
      vals[c][perCond[c]++] = col[k];
    }
    const byCondition = conds.map((c, i) => ({ conditionId: c.id, counts: histogram(vals[i], edges).counts }));
    const width = edges[1] - edges[0];
    const similarity = triangleSimilarity(edges.length - 1, QUADRATIC_CHI.similarityBins);
    const distances: HistogramSet['distances'] = [];
    for (let a = 0; a < conds.length; a++)
      for (let b = a + 1; b < conds.length; b++) {
        const [ha, hb] = [byCondition[a].counts, byCondition[b].counts];
        distances.push({
          a: conds[a].id,
          b: conds[b].id,
          chiSquared: nn(chiSquaredDistance(ha, hb)),
          emd: nn(earthMoversDistance(ha, hb, width)),
          quadraticChiS: nn(quadraticChiDistance(ha, hb, similarity, QUADRATIC_CHI.mS)),
          quadraticChiN: nn(quadraticChiDistance(ha, hb, similarity, QUADRATIC_CHI.mN)),
        });
      }
    histograms.push({ key, label, edges, byCondition, distances });
  };
  addHist('coefficient', entry.label, input.value, entry.axis ? [entry.axis[0], entry.axis[1]] : null);
  addHist('mean1', 'mean intensity, channel 1', input.mean1, null);
  addHist('mean2', 'mean intensity, channel 2', input.mean2, null);

  // ---- warnings and the plain sentence
  const warnings: string[] = [];
  if (input.source.recipeId === null) warnings.push('No measurements yet: run a recipe on this study\'s fields first.');
  for (const c of conditions) {
    if (c.nCoverslips < 3) warnings.push(`${capitalize(c.name)} has ${plural(c.nCoverslips, 'coverslip')} with measured cells; at least 3 are needed for a replicate-level comparison to mean much.`);
  }
  if (omitted.undefinedValue) warnings.push(`${omitted.undefinedValue} cell${omitted.undefinedValue === 1 ? ' has' : 's have'} no defined ${entry.label} (for example no pixels above threshold or a constant channel) and are left out.`);
  if (omitted.excluded) warnings.push(`${omitted.excluded} excluded cell${omitted.excluded === 1 ? ' is' : 's are'} left out (reasons in the Cell table).`);
  if (omitted.provisional) warnings.push(`${omitted.provisional} cell values come from provisional measurements (a recipe not yet approved).`);
  const calibrationsUsed = new Set<number>();
  let lastCalibration = NaN;
  for (let k = 0; k < nUsed; k++) {
    const id = input.calibration[usedRows[k]];
    if (id === lastCalibration) continue;
    calibrationsUsed.add(Number.isNaN(id) ? 0 : id);
    lastCalibration = id;
  }
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
    source: input.source,
    scale: fisher ? 'fisher_z' : 'identity',
    bootstrap: { resamples: boot.resamples, seed: boot.seed, confidence: boot.confidence, normalAbove: boot.normalAbove, normalCoverslips: boot.normalCoverslips },
    coverslips,
    conditions,
    effects,
    tests,
    histograms,
    omitted,
    warnings,
    summary,
    generatedAt: new Date().toISOString(),
  });
  return head;
}

/**
 * The cells a comparison uses (in the chosen conditions, not excluded, value defined; for a coefficient
 * averaged through Fisher's z also |value| ≤ 1) and what was left out, with each used row's coverslip
 * position in `slips` (-1 for rows not used).
 */
export function selectRows(input: CompareInput) {
  const fisher = byKey(input.opts.coefficient).fisherZ;
  const condPos = denseIndex(input.conds.map((c) => c.id));
  const slipPos = denseIndex(input.slips.map((s) => s.id));
  const omitted = { excluded: 0, undefinedValue: 0, provisional: 0, saturated: 0 };
  const n = input.cellId.length;
  const rowSlip = new Int32Array(n).fill(-1);
  const counts = new Int32Array(input.slips.length);
  let nUsed = 0;
  for (let r = 0; r < n; r++) {
    if (condPos(input.conditionId[r]) < 0) continue;
    if (input.excluded[r]) {
      omitted.excluded++;
      continue;
    }
    const v = input.value[r];
    if (!Number.isFinite(v) || (fisher && Math.abs(v) > 1)) {
      omitted.undefinedValue++;
      continue;
    }
    if (input.provisional[r]) omitted.provisional++;
    if (input.saturated[r]) omitted.saturated++;
    const i = slipPos(input.coverslipId[r]);
    rowSlip[r] = i;
    counts[i]++;
    nUsed++;
  }
  const usedRows = new Int32Array(nUsed);
  for (let r = 0, k = 0; r < n; r++) if (rowSlip[r] >= 0) usedRows[k++] = r;
  return { omitted, rowSlip, counts, usedRows };
}

/** The comparison's points as columns (`Comparison.points`, in cell id order). */
export function pointsOf(input: CompareInput): PointColumns {
  const { usedRows } = selectRows(input);
  const pick = <T extends Int32Array | Float64Array>(col: T, out: T): T => {
    for (let k = 0; k < usedRows.length; k++) out[k] = col[usedRows[k]];
    return out;
  };
  const m = usedRows.length;
  return {
    cellId: pick(input.cellId, new Int32Array(m)),
    fieldId: pick(input.fieldId, new Int32Array(m)),
    coverslipId: pick(input.coverslipId, new Int32Array(m)),
    conditionId: pick(input.conditionId, new Int32Array(m)),
    value: pick(input.value, new Float64Array(m)),
  };
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

function medianOfMedians(slips: CoverslipStats[]): number | null {
  const ms = slips.map((s) => s.median).filter((v): v is number => v !== null);
  return ms.length ? nn(median(ms)) : null;
}

/**
 * The "Read with care" line when a Fisher-z mean and its median differ by MEAN_MEDIAN_GAP or more: coverslips
 * (mean of cells vs median of cells, 3 or more cells) and conditions (mean of coverslip means vs median of
 * coverslip medians, 2 or more coverslips). Null when none does.
 */
function meanMedianGaps(coverslips: CoverslipStats[], conditions: ConditionStats[]): string | null {
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
function capitalize(text: string): string {
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
