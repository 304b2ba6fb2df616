/**
 * The unit of work of a run: one field. A job carries everything a stateless worker needs (file store keys,
 * outlines, recipe settings); the result carries the measurements back. Only the web server writes SQLite.
 */
import type { CellGeometry } from '../db/schema.js';
import type { CoefficientValues } from '../../shared/coefficients.js';
import type { MeasurementProvenance } from '../../shared/schemas/runs.js';
import type { RecipeSettings, RecipeStatus } from '../../shared/schemas/recipes.js';

export interface FieldJob {
  runId: number;
  fieldId: number;
  fieldName: string;
  /** channel 1 and channel 2 sources: file store key, SHA-256 and the 1-based channel inside the file */
  sources: [{ key: string; sha256: string; channel: number }, { key: string; sha256: string; channel: number }];
  width: number;
  height: number;
  sizeZ: number;
  bitDepth: number;
  sampleFormat: 'uint' | 'float';
  pixelSizeUm: number | null;
  /** µm between slices (OME PhysicalSizeZ), null when unknown; absent in jobs made before it was stored */
  zStepUm?: number | null;
  /** role 'cell' regions are measured; role 'background' regions feed the 'region' background method */
  cells: { id: number; role: 'cell' | 'background'; geometry: CellGeometry }[];
  settings: RecipeSettings;
  recipe: { id: number; name: string; version: number; status: RecipeStatus };
  provisional: boolean;
  /** the calibration to apply (recipe setting 'approved'), resolved when the job is built; else null */
  calibration: NonNullable<MeasurementProvenance['calibration']> | null;
  /** when the recipe asks for a calibration and none can be applied: why (the field fails with it) */
  calibrationProblem: string | null;
  /** the field's instrument (null: none chosen); absent in jobs made before it was carried */
  instrumentId?: number | null;
}

/**
 * One measurement row's values (the columns of `measurements` besides ids): every registry measure
 * (shared/coefficients.ts, `pixels` a count, the rest `number | null`) plus the recipe's per-cell inputs.
 */
export type MeasurementValues = { cellId: number } & CoefficientValues & {
  threshold1: number | null;
  threshold2: number | null;
  thresholdMethod: string;
  background1: number | null;
  background2: number | null;
  saturatedFraction1: number | null;
  saturatedFraction2: number | null;
  mean1: number | null;
  mean2: number | null;
  provenance: MeasurementProvenance;
};

/** One detected spot of a cell (recipe objects section on), as stored in `spots`. */
export interface SpotValues {
  cellId: number;
  channel: 1 | 2;
  x: number;
  y: number;
  /** slices of the field's stack (0-based, centre +0.5) when found in 3D */
  z?: number | null;
  peak: number;
  integrated: number;
}

export type FieldJobResult =
  /** `ms`: reading, decoding and measuring the field where it ran; `loadMs`: the reading and decoding part of it */
  | { runId: number; fieldId: number; ok: true; measurements: MeasurementValues[]; spots: SpotValues[]; ms: number; loadMs?: number }
  | { runId: number; fieldId: number; ok: false; error: string; ms: number };
