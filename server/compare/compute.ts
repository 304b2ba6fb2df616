/**
 * computeComparison: one coefficient across the conditions of a study, with coverslips as replicates.
 *
 * - Points: every included cell (not excluded, value defined), with its coverslip and condition.
 * - Coverslip summary: number of cells, mean (Fisher's z average for correlation coefficients, Fisher 1915
 *   Biometrika 10:507), median, SD.
 * - Condition summary: number of coverslips, mean of coverslip means, and a hierarchical bootstrap interval
 *   (resample coverslips, then cells; Saravanan et al. 2020 Neurons Behav. Data Anal. Theory 3(5)).
 * - Effects: every pair of conditions, difference of means of coverslip means with its bootstrap interval.
 * - Tests on coverslip means (the replicate level; Lord et al. 2020 J. Cell Biol. 219:e202001064): Welch's t
 *   and Mann–Whitney U for two conditions, one-way ANOVA and Kruskal–Wallis for more (shared/stats).
 * - Histograms of the coefficient and of the per-cell mean intensity of each channel, per condition, with
 *   the chi-squared, Earth Mover's and quadratic-chi (QCS m = 0.5, QCN m = 0.9, A_ij = max(0, 1 − |i − j|/2);
 *   Pele & Werman 2010) distances between every pair of conditions.
 *
 * Used by GET /api/studies/:id/compare (server/routes/cell-table.ts) and by report snapshots .
 */
import type { AppContext } from '../context.js';
import { badRequest } from '../http/errors.js';
import { byKey } from '../../shared/coefficients.js';
import { formatMagnitude, formatP } from '../../shared/format/number.js';
import {
  Comparison,
  CompareQuery,
  type CompareOptions,
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
import { measurementJoin, resolveSource } from './source.js';
import { plural } from '../../shared/format/plural.js';

const TEST_LABELS: Record<TestRow['test'], string> = {
  welch_t: "Welch's t-test",
  mann_whitney_u: 'Mann–Whitney U test',
  one_way_anova: 'one-way ANOVA',
  kruskal_wallis: 'Kruskal–Wallis test',
};

/** resamples × cells drawn per comparison, at most */
export const BOOTSTRAP_BUDGET = 5e7;

const nn = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? null : v);

interface CellRow {
  cellId: number;
  fieldId: number;
  coverslipId: number;
  conditionId: number;
  value: number | null;
  mean1: number | null;
  mean2: number | null;
  excluded: number;
  provisional: number | null;
  saturated: number;
}

export async function computeComparison(ctx: AppContext, studyId: number, options: CompareOptions): Promise<Comparison> {
  const opts = CompareQuery.parse({ ...options, conditionIds: options.conditionIds?.join(',') || undefined });
  const coefficient = opts.coefficient;
  const entry = byKey(coefficient);
  const fisher = entry.fisherZ;
  const db = ctx.db.$client;
  const study = db.prepare('SELECT id FROM studies WHERE id = ?').get(studyId);
  if (!study) throw badRequest(`no study with id ${studyId}`);
  const src = resolveSource(ctx.db, studyId, { runId: opts.runId, recipeId: opts.recipeId });

  let conds = db.prepare('SELECT id, name FROM conditions WHERE study_id = ? ORDER BY position, id').all(studyId) as { id: number; name: string }[];
  if (opts.conditionIds?.length) {
    const unknown = opts.conditionIds.filter((id) => !conds.some((c) => c.id === id));
    if (unknown.length) throw badRequest(`conditionIds: ${unknown.join(', ')} not in study ${studyId}`);
    conds = conds.filter((c) => opts.conditionIds!.includes(c.id));
  }
  const condIds = new Set(conds.map((c) => c.id));
  const slips = (
    db
      .prepare('SELECT cs.id, cs.name, cs.replicate, cs.condition_id AS conditionId FROM coverslips cs JOIN conditions cd ON cd.id = cs.condition_id WHERE cd.study_id = ? ORDER BY cd.position, cd.id, cs.position, cs.id')
      .all(studyId) as { id: number; name: string; replicate: number; conditionId: number }[]
  ).filter((s) => condIds.has(s.conditionId));

  const params: Record<string, unknown> = { studyId };
  const rows = db
    .prepare(
      `SELECT c.id AS cellId, f.id AS fieldId, cs.id AS coverslipId, cd.id AS conditionId, m.${entry.column} AS value,
        m.mean1 AS mean1, m.mean2 AS mean2, c.excluded AS excluded, m.provisional AS provisional,
        (coalesce(m.saturated_fraction1, 0) > 0 OR coalesce(m.saturated_fraction2, 0) > 0) AS saturated
      FROM cells c
      JOIN fields f ON f.id = c.field_id AND f.status = 'ready'
      JOIN coverslips cs ON cs.id = f.coverslip_id
      JOIN conditions cd ON cd.id = cs.condition_id AND cd.study_id = @studyId
      ${measurementJoin(src, params, 'JOIN')}
      WHERE c.deleted_at IS NULL AND c.role = 'cell'
      ORDER BY c.id`,
    )
    .all(params) as CellRow[];

  const omitted = { excluded: 0, undefinedValue: 0, provisional: 0, saturated: 0 };
  const used: CellRow[] = [];
  for (const r of rows) {
    if (!condIds.has(r.conditionId)) continue;
    if (r.excluded) {
      omitted.excluded++;
      continue;
    }
    if (r.value === null || !Number.isFinite(r.value) || (fisher && Math.abs(r.value) > 1)) {
      omitted.undefinedValue++;
      continue;
    }
    if (r.provisional) omitted.provisional++;
    if (r.saturated) omitted.saturated++;
    used.push(r);
  }

  // ---- coverslip level
  const bySlip = new Map<number, CellRow[]>();
  for (const r of used) (bySlip.get(r.coverslipId) ?? bySlip.set(r.coverslipId, []).get(r.coverslipId)!).push(r);
  /** analysis scale: z for correlation coefficients */
  const fwd = (v: number) => (fisher ? fisherZ(v) : v);
  const back = (v: number) => (fisher ? Math.tanh(v) : v);
  const slipMeanZ = new Map<number, number>();
  const coverslips: CoverslipStats[] = slips.map((s, i) => {
    const vals = (bySlip.get(s.id) ?? []).map((r) => r.value as number);
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
  const hierarchy = conds.map((c) => slips.filter((s) => s.conditionId === c.id).map((s) => (bySlip.get(s.id) ?? []).map((r) => r.value as number)));
  // work budget: resamples × cells ≤ 5e7 (about half a second on one core), but never fewer than 500 resamples
  const nUsed = used.length;
  const resamples = Math.max(Math.min(opts.resamples, 500), Math.min(opts.resamples, Math.floor(BOOTSTRAP_BUDGET / Math.max(1, nUsed))));
  const boot = hierarchicalBootstrap(hierarchy, { seed: opts.seed, resamples, confidence: opts.confidence, transform: fisher ? 'fisher_z' : 'identity' });

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
  const addHist = (key: HistogramSet['key'], label: string, get: (r: CellRow) => number | null, range: [number, number] | null) => {
    const all = used.map(get).filter((v): v is number => v !== null && Number.isFinite(v));
    if (!all.length) return;
    let [lo, hi] = range ?? [Infinity, -Infinity];
    if (!range) for (const v of all) (lo = v < lo ? v : lo), (hi = v > hi ? v : hi);
    const edges = equalEdges(lo, hi, opts.bins);
    const byCondition = conds.map((c) => ({
      conditionId: c.id,
      counts: histogram(used.filter((r) => r.conditionId === c.id).map(get).filter((v): v is number => v !== null), edges).counts,
    }));
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
  addHist('coefficient', entry.label, (r) => r.value, entry.axis ? [entry.axis[0], entry.axis[1]] : null);
  addHist('mean1', 'mean intensity, channel 1', (r) => r.mean1, null);
  addHist('mean2', 'mean intensity, channel 2', (r) => r.mean2, null);

  // ---- warnings and the plain sentence
  const warnings: string[] = [];
  if (src.recipeId === null) warnings.push('No measurements yet: run a recipe on this study\'s fields first.');
  for (const c of conditions) {
    if (c.nCoverslips < 3) warnings.push(`${capitalize(c.name)} has ${plural(c.nCoverslips, 'coverslip')} with measured cells; at least 3 are needed for a replicate-level comparison to mean much.`);
  }
  if (omitted.undefinedValue) warnings.push(`${omitted.undefinedValue} cell${omitted.undefinedValue === 1 ? ' has' : 's have'} no defined ${entry.label} (for example no pixels above threshold or a constant channel) and are left out.`);
  if (omitted.excluded) warnings.push(`${omitted.excluded} excluded cell${omitted.excluded === 1 ? ' is' : 's are'} left out (reasons in the Cell table).`);
  if (omitted.provisional) warnings.push(`${omitted.provisional} cell values come from provisional measurements (a recipe not yet approved).`);
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
  if (fisher) warnings.push("Correlation coefficients are averaged through Fisher's z (|r| clamped at 1 − 1e−7).");

  const label = entry.label;
  const summary = sentence(label, fisher, conditions, effects, tests, opts.confidence);

  return Comparison.parse({
    studyId,
    coefficient,
    label,
    averaging: fisher ? 'fisher_z' : 'arithmetic',
    source: {
      kind: src.runId !== null ? 'run' : src.recipeId !== null ? 'recipe' : 'none',
      pinned: opts.runId !== undefined || opts.recipeId !== undefined,
      runId: src.runId,
      recipeId: src.recipeId,
      recipeName: src.recipeName,
      recipeVersion: src.recipeVersion,
    },
    scale: fisher ? 'fisher_z' : 'identity',
    bootstrap: { resamples: boot.resamples, seed: boot.seed, confidence: boot.confidence },
    points: used.map((r) => ({ cellId: r.cellId, fieldId: r.fieldId, coverslipId: r.coverslipId, conditionId: r.conditionId, value: r.value as number })),
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
