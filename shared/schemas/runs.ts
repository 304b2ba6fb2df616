/** Runs: one recipe version applied to a scope (field, coverslip, condition, study); progress and provenance. */
import { z } from 'zod';
import { RecipeSettings, RecipeStatus } from './recipes.js';
import { MEASURE_KEYS, type MeasureKey } from '../analysis/types.js';

/** What a run stores per cell besides the registry's measures: the recipe's per-cell inputs and channel means. */
export const MEASUREMENT_INPUT_KEYS = ['threshold1', 'threshold2', 'background1', 'background2', 'saturatedFraction1', 'saturatedFraction2', 'mean1', 'mean2'] as const;

export const RunScopeKind = z.enum(['field', 'coverslip', 'condition', 'study']);
export type RunScopeKind = z.infer<typeof RunScopeKind>;

export const CreateRunRequest = z.object({
  recipeId: z.number().int().positive(),
  scope: z.object({ kind: RunScopeKind, id: z.number().int().positive() }),
  /** true: start on the fields that pass the pre-run check only (the blocked ones are left out of the run) */
  onlyReady: z.boolean().optional(),
});
export type CreateRunRequest = z.infer<typeof CreateRunRequest>;

/** `POST /api/runs/check` (same body as `POST /api/runs`): which fields of the scope the recipe can measure. */
export const RunCheckResponse = z.object({
  ready: z.array(z.number().int()),
  blocked: z.array(
    z.object({
      fieldId: z.number().int(),
      /** "condition / coverslip / field" */
      fieldName: z.string(),
      /** why the recipe cannot measure it, as the run would fail it */
      problem: z.string(),
      /** the portal page where it is fixed (the field workspace, the recipe or the instrument) */
      fixUrl: z.string(),
    }),
  ),
});
export type RunCheckResponse = z.infer<typeof RunCheckResponse>;

export const RunStatus = z.enum(['queued', 'running', 'done', 'failed', 'partial']);
export type RunStatus = z.infer<typeof RunStatus>;
export const RunFieldStatus = z.enum(['queued', 'running', 'done', 'failed']);

export const RunSummary = z.object({
  id: z.number().int(),
  studyId: z.number().int(),
  studyName: z.string(),
  recipe: z.object({ id: z.number().int(), name: z.string(), version: z.number().int(), status: RecipeStatus }),
  scope: z.object({ kind: RunScopeKind, id: z.number().int(), name: z.string() }),
  status: RunStatus,
  /** true when the recipe version was not approved when the run started: its measurements are provisional */
  provisional: z.boolean(),
  fieldsTotal: z.number().int(),
  fieldsDone: z.number().int(),
  fieldsFailed: z.number().int(),
  currentField: z.string().nullable(),
  error: z.string().nullable(),
  engineVersion: z.string().nullable(),
  seed: z.number().int(),
  startedBy: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
  createdAt: z.string(),
});
export type RunSummary = z.infer<typeof RunSummary>;

export const RunFieldRow = z.object({
  fieldId: z.number().int(),
  name: z.string(),
  status: RunFieldStatus,
  error: z.string().nullable(),
  attempts: z.number().int(),
  finishedAt: z.string().nullable(),
  measurements: z.number().int(),
});

export const RunDetail = RunSummary.extend({
  settings: RecipeSettings,
  fields: z.array(RunFieldRow),
  measurements: z.number().int(),
});
export type RunDetail = z.infer<typeof RunDetail>;

export const RunListQuery = z.object({
  studyId: z.coerce.number().int().positive().optional(),
  status: RunStatus.optional(),
});
export const RunListResponse = z.object({ runs: z.array(RunSummary) });

/** What every measurement row records about how it was made (measurements.provenance). */
/** The objects section as a run applied it: σ, minimum separation and pair distance d in pixels. */
export const AppliedObjectSettings = z.object({
  sigmaPx: z.number(),
  k: z.number(),
  minSeparationPx: z.number(),
  pairDistancePx: z.number(),
  placements: z.number().int(),
  seed: z.number().int(),
  /**
   * present when the spots were found in 3D (a stack measured in 3D, 2026-12-03): the voxel size used, the
   * slice spacing in pixel widths (zStepUm / pixelSizeUm, by which z differences are scaled for distances)
   * and the axial filter width σz in slices; absent in 2D and on older rows. `sigmaZFrom` (2026-12-03, absent on
   * older rows = 'lateral'): 'lateral' σ · pixel size / z step, 'slices' the recipe's σz, 'psf' the recipe's axial
   * point-spread FWHM `psfDepthUm` / 2.355 / z step
   */
  volume: z
    .object({
      pixelSizeUm: z.number().positive(),
      zStepUm: z.number().positive(),
      zScale: z.number().positive(),
      sigmaZ: z.number().positive(),
      sigmaZFrom: z.enum(['lateral', 'slices', 'psf']).optional(),
      psfDepthUm: z.number().positive().optional(),
    })
    .optional(),
});
export type AppliedObjectSettings = z.infer<typeof AppliedObjectSettings>;

export const MeasurementProvenance = z.object({
  recipeId: z.number().int(),
  recipeName: z.string(),
  recipeVersion: z.number().int(),
  recipeStatus: RecipeStatus,
  engineVersion: z.string(),
  /** SHA-256 of the channel-1 and channel-2 source files (the same hash for one multi-channel file) */
  inputSha256: z.tuple([z.string(), z.string()]),
  channels: z.tuple([z.number().int(), z.number().int()]),
  thresholds: z.object({ method: z.string(), ch1: z.number().nullable(), ch2: z.number().nullable() }),
  background: z.tuple([z.number().nullable(), z.number().nullable()]),
  seed: z.number().int(),
  z: z.string(),
  /** block edge actually used by the randomization test (null when not run) */
  randomizationBlock: z.number().int().nullable(),
  randomizationCount: z.number().int(),
  /** why coefficients are null, when they are on purpose (e.g. below the smallest cell size) */
  note: z.string().nullable(),
  /** pixels of the cell left out because a channel holds NaN there (float data); absent on rows measured before it was recorded */
  nanPixels: z.number().int().nonnegative().optional(),
  /** the objects section as applied (σ and d in pixels), when it was on; absent otherwise */
  objects: AppliedObjectSettings.optional(),
  /** the calibration applied before measuring (recipe setting 'approved'); absent or null when none */
  calibration: z
    .object({ id: z.number().int(), instrumentId: z.number().int(), instrument: z.string(), version: z.number().int(), dx: z.number().nullable(), dy: z.number().nullable(), a21: z.number().nullable(), a12: z.number().nullable() })
    .nullable()
    .optional(),
  computedAt: z.string(),
});
export type MeasurementProvenance = z.infer<typeof MeasurementProvenance>;


/**
 * One detected spot: centre (x right, y down, pixels, origin the top-left corner of pixel (0, 0); for a
 * field measured in 3D also z, in slices of its stack, 0-based, a slice's centre at +0.5), peak and
 * integrated intensity.
 */
export const SpotRow = z.object({
  cellId: z.number().int(),
  channel: z.union([z.literal(1), z.literal(2)]),
  x: z.number(),
  y: z.number(),
  z: z.number().optional(),
  peak: z.number(),
  integrated: z.number(),
});
export type SpotRow = z.infer<typeof SpotRow>;

/**
 * `GET /api/runs/:id/fields/:fieldId/spots`: the spots a run found in one field's cells, by cell and channel.
 * `settings` is null when the run's recipe had the objects section off (then `spots` is empty).
 */
export const FieldSpotsResponse = z.object({
  runId: z.number().int(),
  fieldId: z.number().int(),
  settings: AppliedObjectSettings.nullable(),
  spots: z.array(SpotRow),
});
export type FieldSpotsResponse = z.infer<typeof FieldSpotsResponse>;

/**
 * GET /api/runs/:id/measurements: a run's measurements, one page at a time in measurement-id order. `cursor`
 * is the `nextCursor` of the previous page (absent for the first); the last page has `nextCursor: null`.
 * Cells deleted since the run are left out, as in the Cell table.
 */
export const MAX_MEASUREMENTS_PAGE = 5000;
export const RunMeasurementsQuery = z.object({
  cursor: z
    .string()
    .refine((v) => /^(0|[1-9][0-9]{0,15})$/.test(v) && Number.isSafeInteger(Number(v)), {
      error: (iss) => `expected the nextCursor of the previous page (a whole number), got ${JSON.stringify(iss.input)}`,
    })
    .transform(Number)
    .optional(),
  limit: z.coerce.number().int().min(1).max(MAX_MEASUREMENTS_PAGE).default(1000),
});
export type RunMeasurementsQuery = z.infer<typeof RunMeasurementsQuery>;

const Measure = z.number().nullable();
/** One measurement: where the cell is (ids and names), every registry measure, the per-cell inputs, provenance. */
export const RunMeasurement = z.object({
  measurementId: z.number().int(),
  runId: z.number().int(),
  cellId: z.number().int(),
  cell: z.string(),
  fieldId: z.number().int(),
  field: z.string(),
  coverslipId: z.number().int(),
  coverslip: z.string(),
  replicate: z.number().int(),
  conditionId: z.number().int(),
  condition: z.string(),
  ...(Object.fromEntries(MEASURE_KEYS.map((k) => [k, Measure])) as Record<MeasureKey, typeof Measure>),
  ...(Object.fromEntries(MEASUREMENT_INPUT_KEYS.map((k) => [k, Measure])) as Record<(typeof MEASUREMENT_INPUT_KEYS)[number], typeof Measure>),
  thresholdMethod: z.string().nullable(),
  provisional: z.boolean(),
  excluded: z.boolean(),
  provenance: MeasurementProvenance,
});
export type RunMeasurement = z.infer<typeof RunMeasurement>;

export const RunMeasurementsPage = z.object({
  run: z.object({
    id: z.number().int(),
    studyId: z.number().int(),
    status: RunStatus,
    provisional: z.boolean(),
    recipeId: z.number().int(),
    recipeName: z.string(),
    recipeVersion: z.number().int(),
  }),
  measurements: z.array(RunMeasurement),
  nextCursor: z.number().int().nullable(),
});
export type RunMeasurementsPage = z.infer<typeof RunMeasurementsPage>;

/** Columns of GET /api/runs/:id/measurements.csv, in order: the JSON keys with provenance flattened to its main parts. */
export const MEASUREMENT_CSV_COLUMNS = [
  ...(Object.keys(RunMeasurement.shape).filter((k) => k !== 'provenance') as Exclude<keyof RunMeasurement, 'provenance'>[]),
  'recipeId',
  'recipeVersion',
  'engineVersion',
  'seed',
  'z',
  'input1Sha256',
  'input2Sha256',
  'computedAt',
] as const;
