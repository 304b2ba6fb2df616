/**
 * A comparison of conditions for one coefficient, with coverslips as the unit of replication
 * (Lord et al. 2020, J. Cell Biol. 219:e202001064). Produced by server/compare/compute.ts
 * (`computeComparison`), drawn by src/features/compare (SuperPlot), frozen into report snapshots.
 * Undefined numbers are `null`, never NaN.
 */
import { z } from 'zod';
import { COMPARE_KEYS } from '../coefficients';

/** The coefficients Compare offers (and reports carry): the registry entries with `compare` (shared/coefficients.ts). */
export const COMPARE_COEFFICIENTS = COMPARE_KEYS;
export const CompareCoefficient = z.enum(COMPARE_COEFFICIENTS, { message: `coefficient must be one of ${COMPARE_COEFFICIENTS.join(', ')}` });
export type CompareCoefficient = z.infer<typeof CompareCoefficient>;

const ids = z
  .union([z.string(), z.array(z.string())])
  .transform((v, ctx) => {
    const parts = (Array.isArray(v) ? v : [v]).flatMap((s) => s.split(',')).filter(Boolean);
    if (parts.some((p) => !/^[1-9][0-9]{0,14}$/.test(p))) {
      ctx.addIssue({ code: 'custom', message: `expected positive integer ids, received ${JSON.stringify(v)}` });
      return z.NEVER;
    }
    return parts.map(Number);
  });

export const CompareQuery = z.object({
  coefficient: CompareCoefficient.default('pearson'),
  runId: z.coerce.number().int().positive().optional(),
  recipeId: z.coerce.number().int().positive().optional(),
  conditionIds: ids.optional(),
  seed: z.coerce.number().int().min(0).max(2 ** 32 - 1).default(1),
  resamples: z.coerce.number().int().min(100).max(20000).default(2000),
  confidence: z.coerce.number().gt(0.5).lt(1).default(0.95),
  bins: z.coerce.number().int().min(5).max(100).default(20),
});
export type CompareQuery = z.infer<typeof CompareQuery>;
export type CompareOptions = Partial<Omit<CompareQuery, 'coefficient'>> & { coefficient: CompareCoefficient };

const Num = z.number().nullable();

/** Most points GET …/compare lists (a stratified sample beyond; `Comparison.pointsSample`). Our choice: as many
 * as the Compare page draws (MAX_DRAWN_POINTS). */
export const COMPARE_POINTS_MAX = 20000;

export const ComparePoint = z.object({
  cellId: z.number().int(),
  fieldId: z.number().int(),
  coverslipId: z.number().int(),
  conditionId: z.number().int(),
  value: z.number(),
});

export const CoverslipStats = z.object({
  id: z.number().int(),
  name: z.string(),
  replicate: z.number().int(),
  conditionId: z.number().int(),
  /** position in the colour palette, 0-based, stable within the comparison */
  colorIndex: z.number().int(),
  nCells: z.number().int(),
  /** mean of cells (through Fisher's z for correlation coefficients), on the coefficient's own (r) scale */
  mean: Num,
  /** the same mean on Fisher's z scale, the scale the tests and intervals use: mean of atanh(r) over the cells;
   * null for coefficients not averaged through z. Absent in reports made before it was recorded. */
  meanZ: Num.optional(),
  median: Num,
  sd: Num,
});
export type CoverslipStats = z.infer<typeof CoverslipStats>;

export const ConditionStats = z.object({
  id: z.number().int(),
  name: z.string(),
  nCoverslips: z.number().int(),
  nCells: z.number().int(),
  /** mean of coverslip means (Fisher's z averaged for correlation coefficients), on the r scale */
  mean: Num,
  /** mean of the coverslips' z means (null for coefficients not averaged through z; absent in older reports) */
  meanZ: Num.optional(),
  /** median of the coverslip medians, shown beside the mean (reports frozen before it existed read null) */
  median: Num.default(null),
  /** SD of coverslip means (on the z scale for correlation coefficients) */
  sdOfCoverslipMeans: Num,
  ci: z.object({ lower: Num, upper: Num }),
});
export type ConditionStats = z.infer<typeof ConditionStats>;

export const Effect = z.object({
  a: z.number().int(),
  b: z.number().int(),
  aName: z.string(),
  bName: z.string(),
  label: z.string(),
  /** mean of coverslip means of b minus that of a */
  estimate: Num,
  ci: z.object({ lower: Num, upper: Num }),
});
export type Effect = z.infer<typeof Effect>;

export const TestRow = z.object({
  test: z.enum(['welch_t', 'mann_whitney_u', 'one_way_anova', 'kruskal_wallis']),
  label: z.string(),
  /**
   * The test statistic. For two conditions it follows the direction of `Effect.estimate` (b − a, b the later
   * condition): Welch's t = (mean_b − mean_a) / SE, positive when b is higher; Mann–Whitney U is the U of
   * group b (pairs with b > a, ties counting ½), above n_a·n_b / 2 when b tends to be higher. F and H have no sign.
   */
  statistic: Num,
  df: z.array(z.number()),
  p: Num,
  note: z.string(),
});
export type TestRow = z.infer<typeof TestRow>;

export const HistogramSet = z.object({
  key: z.enum(['coefficient', 'mean1', 'mean2']),
  label: z.string(),
  edges: z.array(z.number()),
  byCondition: z.array(z.object({ conditionId: z.number().int(), counts: z.array(z.number().int()) })),
  distances: z.array(
    z.object({
      a: z.number().int(),
      b: z.number().int(),
      chiSquared: Num,
      emd: Num,
      /** quadratic-chi, m = 0.5, A_ij = max(0, 1 − |i − j|/2) (Pele & Werman 2010); null in reports frozen before it */
      quadraticChiS: Num.default(null),
      /** quadratic-chi, m = 0.9, same A */
      quadraticChiN: Num.default(null),
    }),
  ),
});
export type HistogramSet = z.infer<typeof HistogramSet>;

export const CompareSourceKind = z.enum(['run', 'recipe', 'none']);
export const CompareScale = z.enum(['fisher_z', 'identity']);

export const Comparison = z.object({
  studyId: z.number().int(),
  coefficient: CompareCoefficient,
  label: z.string(),
  averaging: z.enum(['arithmetic', 'fisher_z']),
  source: z.object({
    /** run: one run's measurements; recipe: the latest measurement per cell among the study's runs of a recipe
     * version; none: nothing measured yet (absent in reports made before it was recorded) */
    kind: CompareSourceKind.optional(),
    /** whether the request named the source (runId or recipeId); unpinned requests take the recipe of the
     * study's most recent run with measurements (absent in older reports) */
    pinned: z.boolean().optional(),
    runId: z.number().int().nullable(),
    recipeId: z.number().int().nullable(),
    recipeName: z.string().nullable(),
    recipeVersion: z.number().int().nullable(),
  }),
  /** the scale coverslip means are averaged, tested and bootstrapped on: Fisher's z for correlation
   * coefficients, the coefficient's own values otherwise (absent in reports made before it was recorded) */
  scale: CompareScale.optional(),
  bootstrap: z.object({
    resamples: z.number().int(),
    seed: z.number().int(),
    confidence: z.number(),
    /** coverslips with more cells than this had their cell-level resample drawn from its normal limit
     * (shared/stats/bootstrap.ts); null: every coverslip resampled cell by cell (absent in older reports) */
    normalAbove: z.number().int().nullable().optional(),
    /** how many coverslips that was (absent in older reports) */
    normalCoverslips: z.number().int().optional(),
  }),
  /** the included cells (not excluded, value defined), in cell id order: every one, or when `pointsSample` is
   * set a sample of them (GET …/compare above COMPARE_POINTS_MAX cells; the cells CSV and reports list every one) */
  points: z.array(ComparePoint),
  /** how many cells the comparison includes, the number every statistic uses (absent in reports made before
   * it was recorded: then `points.length`) */
  pointsTotal: z.number().int().optional(),
  /** null when `points` lists every included cell; else how they were sampled (server/compare/comparison.ts
   * `samplePoints`): each coverslip gets its share of `max` points (at least two, all when it has fewer): its
   * lowest and highest value and the rest evenly spaced in cell id order. Absent in older reports. */
  pointsSample: z.object({ method: z.literal('coverslip_even'), max: z.number().int() }).nullable().optional(),
  coverslips: z.array(CoverslipStats),
  conditions: z.array(ConditionStats),
  effects: z.array(Effect),
  tests: z.array(TestRow),
  histograms: z.array(HistogramSet),
  /** cells left out: excluded by a person, or with no value for this coefficient */
  omitted: z.object({ excluded: z.number().int(), undefinedValue: z.number().int(), provisional: z.number().int(), saturated: z.number().int() }),
  warnings: z.array(z.string()),
  summary: z.string(),
  generatedAt: z.string(),
});
export type Comparison = z.infer<typeof Comparison>;

/** A comparison without its points (checked apart from them: a million points are built, not parsed). */
export const ComparisonHead = Comparison.omit({ points: true });
export type ComparisonHead = z.infer<typeof ComparisonHead>;
