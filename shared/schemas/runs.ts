/** Runs: one recipe version applied to a scope (field, coverslip, condition, study); progress and provenance. */
import { z } from 'zod';
import { RecipeSettings, RecipeStatus } from './recipes.js';

export const RunScopeKind = z.enum(['field', 'coverslip', 'condition', 'study']);
export type RunScopeKind = z.infer<typeof RunScopeKind>;

export const CreateRunRequest = z.object({
  recipeId: z.number().int().positive(),
  scope: z.object({ kind: RunScopeKind, id: z.number().int().positive() }),
});
export type CreateRunRequest = z.infer<typeof CreateRunRequest>;

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
  /** the calibration applied before measuring (recipe setting 'approved'); absent or null when none */
  calibration: z
    .object({ id: z.number().int(), instrumentId: z.number().int(), instrument: z.string(), version: z.number().int(), dx: z.number().nullable(), dy: z.number().nullable(), a21: z.number().nullable(), a12: z.number().nullable() })
    .nullable()
    .optional(),
  computedAt: z.string(),
});
export type MeasurementProvenance = z.infer<typeof MeasurementProvenance>;
