/**
 * Reports: a frozen snapshot of a study's comparison. Shared by server/routes/reports.ts and src/features/reports.
 *
 * Routes (under /api, session cookie required):
 *   GET  /studies/:studyId/reports          → ReportListResponse (newest first; 'read')
 *   POST /studies/:studyId/reports          CreateReportRequest → ReportDetail (201; 'report')
 *   GET  /reports/:id                        → ReportDetail ('read' on its study)
 *   GET  /reports/:id/csv/:table             → text/csv (table: cells | coverslips | conditions | statistics | exclusions)
 * The shared (token) variants live in shared/schemas/shares.ts.
 *
 * The snapshot is written once at creation and never updated: later runs, exclusions or recipe versions do not
 * change it (a newer report can be made). JSON carries null for undefined values, never NaN.
 */
import { z } from 'zod';
import { Id, IsoDate } from './common.js';
import { COMPARE_COEFFICIENTS, Comparison } from './compare.js';
import { CellOrigin } from './cells.js';

/** Per-cell values a report can carry: the same set Compare offers (registry `compare`, shared/coefficients.ts). */
export const REPORT_COEFFICIENTS = COMPARE_COEFFICIENTS;
export const ReportCoefficient = z.enum(REPORT_COEFFICIENTS, { message: `coefficient must be one of ${REPORT_COEFFICIENTS.join(', ')}` });
export type ReportCoefficient = z.infer<typeof ReportCoefficient>;

export const CreateReportRequest = z.object({
  title: z.string({ message: 'enter a title' }).trim().min(1, 'enter a title').max(200, 'a title has at most 200 characters'),
  notes: z.string().max(10000, 'notes have at most 10000 characters').default(''),
  coefficients: z.array(ReportCoefficient).min(1, 'choose at least one coefficient').max(REPORT_COEFFICIENTS.length),
  /**
   * which measurements: one run, or each cell's latest measurement with this recipe version; default the recipe
   * of the study's latest run with measurements (the same rule as the Compare screen)
   */
  runId: Id.optional(),
  recipeId: Id.optional(),
  /** restrict to these conditions (default: all, in study order) */
  conditionIds: z.array(Id).min(1).optional(),
  /** the cell whose pixel scatter the report shows (default: the first cell of the first representative field) */
  scatterCellId: Id.optional(),
});
export type CreateReportRequest = z.input<typeof CreateReportRequest>;

const Num = z.number().nullable();

export const SnapshotRecipe = z.object({
  id: Id,
  familyId: z.number().int().nullable(),
  name: z.string(),
  version: z.number().int(),
  status: z.string(),
  settings: z.record(z.string(), z.unknown()),
  /** true when any run used for the report was provisional (recipe not approved at run time) */
  provisional: z.boolean(),
  runIds: z.array(Id),
});
export type SnapshotRecipe = z.infer<typeof SnapshotRecipe>;

export const SnapshotRun = z.object({
  id: Id,
  recipeId: Id,
  status: z.string(),
  provisional: z.boolean(),
  seed: z.number().int(),
  engineVersion: z.string().nullable(),
  finishedAt: z.string().nullable(),
  /** z handling from the measurements' provenance ('mip', a plane number, …), null when not recorded */
  zHandling: z.string().nullable(),
});

export const SnapshotCoverslip = z.object({
  id: Id,
  name: z.string(),
  replicate: z.number().int(),
  fields: z.number().int(),
  cellsIncluded: z.number().int(),
  cellsExcluded: z.number().int(),
});
export const SnapshotCondition = z.object({
  id: Id,
  name: z.string(),
  coverslips: z.array(SnapshotCoverslip),
  cellsIncluded: z.number().int(),
  cellsExcluded: z.number().int(),
  /** coverslips with at least one included measured cell (the replicates the tests use) */
  coverslipsUsed: z.number().int(),
});
export type SnapshotCondition = z.infer<typeof SnapshotCondition>;

export const SnapshotField = z.object({
  id: Id,
  name: z.string(),
  conditionId: Id,
  coverslipId: Id,
  width: z.number().int(),
  height: z.number().int(),
  sizeZ: z.number().int(),
  bitDepth: z.number().int(),
  pixelSizeUm: Num,
  /** µm between z slices (absent in snapshots made before it was stored) */
  zStepUm: Num.optional(),
  saturatedFraction1: Num,
  saturatedFraction2: Num,
  channelNames: z.tuple([z.string().nullable(), z.string().nullable()]),
});

export const SnapshotCell = z.object({
  cellId: Id,
  name: z.string(),
  fieldId: Id,
  coverslipId: Id,
  conditionId: Id,
  excluded: z.boolean(),
  exclusionReason: z.string().nullable(),
  runId: z.number().int().nullable(),
  pixels: z.number().int().nullable(),
  values: z.record(z.string(), Num),
  threshold1: Num,
  threshold2: Num,
  thresholdMethod: z.string().nullable(),
  background1: Num,
  background2: Num,
  saturatedFraction1: Num,
  saturatedFraction2: Num,
  randomizationP: Num,
  /** how the cell was made (absent in reports made before it was recorded) */
  origin: CellOrigin.optional(),
});
export type SnapshotCell = z.infer<typeof SnapshotCell>;

export const SnapshotExclusion = z.object({
  cellId: Id,
  cellName: z.string(),
  fieldName: z.string(),
  coverslipName: z.string(),
  conditionName: z.string(),
  reason: z.string(),
  excludedBy: z.string().nullable(),
  excludedAt: z.string().nullable(),
});

export const CoverslipSummary = z.object({
  coefficient: ReportCoefficient,
  conditionId: Id,
  coverslipId: Id,
  coverslipName: z.string(),
  n: z.number().int(),
  /** mean of cells (through Fisher's z for correlation coefficients), null with no defined values */
  mean: Num,
  median: Num,
});
export type CoverslipSummary = z.infer<typeof CoverslipSummary>;

export const ConditionSummary = z.object({
  coefficient: ReportCoefficient,
  conditionId: Id,
  conditionName: z.string(),
  cells: z.number().int(),
  coverslips: z.number().int(),
  /** mean of coverslip means (Fisher's z averaged for correlation coefficients) */
  mean: Num,
  sd: Num,
  median: Num,
  min: Num,
  max: Num,
});
export type ConditionSummary = z.infer<typeof ConditionSummary>;

export const StatisticRow = z.object({
  coefficient: ReportCoefficient,
  test: z.string(),
  /** the test statistic; for two conditions its sign follows `effect` (Welch's t > 0 when the later condition b is higher) */
  statistic: Num,
  df: Num,
  p: Num,
  /** difference of coverslip means, later condition minus earlier (b − a), as `effectLabel` states */
  effect: Num,
  effectLabel: z.string().nullable(),
  ciLow: Num,
  ciHigh: Num,
  /** further tests on the same coverslip-level data (e.g. Mann–Whitney beside Welch's t) */
  alsoTests: z.array(z.object({ test: z.string(), statistic: Num, df: Num, p: Num })).default([]),
  /** plain-English result (the comparison's summary sentence) */
  sentence: z.string(),
});
export type StatisticRow = z.infer<typeof StatisticRow>;

export const Outline = z.object({
  cellId: Id,
  name: z.string(),
  excluded: z.boolean(),
  /** CellGeometry of server/db/schema.ts in full-resolution image pixels */
  geometry: z.record(z.string(), z.unknown()),
});
export const Composite = z.object({
  fieldId: Id,
  fieldName: z.string(),
  conditionId: Id,
  coverslipName: z.string(),
  width: z.number().int(),
  height: z.number().int(),
  /** small PNG (data URL) of the two-channel composite, or null when the pixels could not be read */
  png: z.string().nullable(),
  /** display ranges used for the PNG */
  ranges: z.object({ lo1: z.number(), hi1: z.number(), lo2: z.number(), hi2: z.number() }).nullable(),
  outlines: z.array(Outline),
});
export type Composite = z.infer<typeof Composite>;

/** A 2-D histogram of one cell's (ch1, ch2) pixel pairs: counts[row * bins + col], row 0 = lowest ch2. */
export const CellScatter = z.object({
  cellId: Id,
  cellName: z.string(),
  fieldName: z.string(),
  bins: z.number().int(),
  max1: z.number(),
  max2: z.number(),
  counts: z.array(z.number().int()),
  threshold1: Num,
  threshold2: Num,
  pixels: z.number().int(),
});
export type CellScatter = z.infer<typeof CellScatter>;

export const ReportSnapshot = z.object({
  schemaVersion: z.literal(1),
  createdAt: IsoDate,
  study: z.object({ id: Id, name: z.string(), description: z.string() }),
  coefficients: z.array(ReportCoefficient),
  engineVersions: z.array(z.string()),
  anyProvisional: z.boolean(),
  recipes: z.array(SnapshotRecipe),
  runs: z.array(SnapshotRun),
  conditions: z.array(SnapshotCondition),
  fields: z.array(SnapshotField),
  cells: z.array(SnapshotCell),
  exclusions: z.array(SnapshotExclusion),
  coverslipSummaries: z.array(CoverslipSummary),
  conditionSummaries: z.array(ConditionSummary),
  statistics: z.array(StatisticRow),
  /** the full comparison per coefficient (server/compare/compute.ts), from which `statistics` are read */
  comparisons: z.record(z.string(), Comparison),
  composites: z.array(Composite),
  /** the chosen cell's scatter (shown first) */
  scatter: CellScatter.nullable(),
  /** scatters of the measured cells of the representative fields (at most 24), so a reader can pick one */
  scatters: z.array(CellScatter).default([]),
  saturation: z.object({ maxFraction1: Num, maxFraction2: Num, fieldsWithSaturation: z.number().int() }),
  /** pixels of the reported cells left out because a channel holds NaN there, and in how many cells (absent in older reports) */
  nanPixels: z.object({ pixels: z.number().int().nonnegative(), cells: z.number().int().nonnegative() }).optional(),
  /** the calibrations applied to the reported cells (provenance), with how many cells each; absent in older reports */
  calibrations: z
    .object({
      applied: z.array(z.object({ id: z.number().int(), instrument: z.string(), version: z.number().int(), dx: Num, dy: Num, a21: Num, a12: Num, cells: z.number().int().nonnegative() })),
      /** reported cells measured without a calibration */
      uncalibratedCells: z.number().int().nonnegative(),
    })
    .optional(),
  /**
   * how the reported cells' spots were found (provenance.objects, Spots on): one group per voxel size and filter
   * width for cells of stacks whose spots were found in 3D (σz in slices, the slice spacing zScale in pixel
   * widths; null when neither the row nor the field records the voxel size), and the count of cells whose
   * spots were found in one plane; absent in older reports
   */
  spots3d: z
    .object({
      groups: z.array(
        z.object({
          sigmaPx: z.number(),
          sigmaZ: Num,
          /** how σz was set (provenance volume.sigmaZFrom; absent in older reports = 'lateral'), with the axial PSF FWHM for 'psf' */
          sigmaZFrom: z.enum(['lateral', 'slices', 'psf']).optional(),
          psfDepthUm: Num.optional(),
          zScale: Num,
          pixelSizeUm: Num,
          zStepUm: Num,
          pairDistancePx: z.number(),
          cells: z.number().int().nonnegative(),
        }),
      ),
      planeCells: z.number().int().nonnegative(),
    })
    .optional(),
  methods: z.string(),
  cautions: z.array(z.string()),
});
export type ReportSnapshot = z.infer<typeof ReportSnapshot>;

export const ReportSummary = z.object({
  id: Id,
  studyId: Id,
  title: z.string(),
  notes: z.string(),
  coefficients: z.array(z.string()),
  createdAt: IsoDate,
  createdBy: z.string().nullable(),
  cells: z.number().int(),
  anyProvisional: z.boolean(),
});
export type ReportSummary = z.infer<typeof ReportSummary>;
export const ReportListResponse = z.object({ reports: z.array(ReportSummary) });
export type ReportListResponse = z.infer<typeof ReportListResponse>;

export const ReportDetail = ReportSummary.extend({
  snapshot: ReportSnapshot,
  /** whether the signed-in user may share this report (false on the shared page) */
  canShare: z.boolean(),
});
export type ReportDetail = z.infer<typeof ReportDetail>;

export const CSV_TABLES = ['cells', 'coverslips', 'conditions', 'statistics', 'exclusions'] as const;
export const CsvTable = z.enum(CSV_TABLES, { message: `table must be one of ${CSV_TABLES.join(', ')}` });
export type CsvTable = z.infer<typeof CsvTable>;
