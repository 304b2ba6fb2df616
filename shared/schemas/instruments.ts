/**
 * Instruments and their calibrations (issue 15): requests and responses of server/routes/instruments.ts.
 * A calibration's shift follows the `analyze` convention (channel 2 displaced by (dx, dy) px:
 * ch2(x + dx, y + dy) ≈ ch1(x, y)); a21 / a12 are the bleed-through fractions of unmix.ts. Each value is
 * null until measured. The life cycle is the recipes' (draft → submitted → approved | returned; retired).
 */
import { z } from 'zod';
import { Id, IsoDate, Name } from './common.js';
import { RecipeHistoryEvent, RecipeStatus, RecipeTransitionRequest, UserRef } from './recipes.js';

const Shift = (axis: string) =>
  z
    .number({ message: `${axis} must be a number of pixels` })
    .finite(`${axis} must be a finite number of pixels`)
    .min(-100, `${axis} must be within ±100 px`)
    .max(100, `${axis} must be within ±100 px`)
    .nullable();
const Fraction = (name: string) =>
  z
    .number({ message: `${name} must be a number` })
    .min(0, `${name} must be a fraction in [0, 1)`)
    .lt(1, `${name} must be a fraction in [0, 1)`)
    .nullable();

export const CalibrationValues = z.object({ dx: Shift('dx'), dy: Shift('dy'), a21: Fraction('a21'), a12: Fraction('a12') });
export type CalibrationValues = z.infer<typeof CalibrationValues>;

export const CreateInstrumentRequest = z.object({
  name: Name('instrument name'),
  objective: z.string().trim().max(200).default(''),
  channel1: Name('channel 1 name', 80),
  channel2: Name('channel 2 name', 80),
});

export const CreateCalibrationRequest = CalibrationValues.partial().extend({ note: z.string().trim().max(4000).default('') });
export const UpdateCalibrationRequest = CalibrationValues.partial().extend({ note: z.string().trim().max(4000).optional() });
export const CalibrationTransitionRequest = RecipeTransitionRequest;

// ---------------------------------------------------------------- measuring a calibration from stored fields

/**
 * Van Steensel's curves: Pearson's r as channel 2 is moved by each whole-pixel shift along x (the y shift held
 * at `through.dy`) and along y (x held at `through.dx`); `through` is the measured shift rounded.
 */
export const CrossCorrelationCurves = z.object({
  through: z.object({ dx: z.number().int(), dy: z.number().int() }),
  shifts: z.array(z.number().int()),
  x: z.array(z.number().nullable()),
  y: z.array(z.number().nullable()),
});
export type CrossCorrelationCurves = z.infer<typeof CrossCorrelationCurves>;

/** Widest curve asked for (± px); the curves always reach 2 px past the measured shift, up to this. */
export const MAX_CURVE_SHIFT = 24;
const CurveShift = z
  .number({ error: (iss) => `the curve half-width must be a whole number of pixels, got ${JSON.stringify(iss.input) ?? String(iss.input)}` })
  .int({ error: (iss) => `the curve half-width must be a whole number of pixels, got ${String(iss.input)}` })
  .min(1, { error: (iss) => `the curve half-width must be 1 to ${MAX_CURVE_SHIFT} px, got ${String(iss.input)}` })
  .max(MAX_CURVE_SHIFT, { error: (iss) => `the curve half-width must be 1 to ${MAX_CURVE_SHIFT} px, got ${String(iss.input)}` });

/** A field's shift as measured (phase correlation, sub-pixel) with its diagnostic curves; not stored anywhere by itself. */
export const FieldShift = z.object({
  fieldId: Id,
  fieldName: z.string(),
  width: z.number().int(),
  height: z.number().int(),
  dx: z.number(),
  dy: z.number(),
  /** height of the normalised phase-correlation peak (1 for identical channels) */
  peak: z.number().nullable(),
  /** what of a z stack was measured, in words ("single plane", "sum of 5 slices") */
  z: z.string(),
  curves: CrossCorrelationCurves,
});
export type FieldShift = z.infer<typeof FieldShift>;

/** GET /api/fields/:id/shift */
export const FieldShiftQuery = z.object({ maxShift: z.coerce.number().pipe(CurveShift).default(8) });

/** POST /api/calibrations/:id/measure-shift: a bead field whose two channels show the same beads. */
export const MeasureShiftRequest = z.object({
  fieldId: Id,
  maxShift: CurveShift.default(8),
});

/** POST /api/calibrations/:id/measure-bleed: control fields labelled in one channel only (pooled into one slope). */
export const MeasureBleedRequest = z.object({
  /** the channel whose label the controls carry: 1 → a21 (channel 1's signal seen in channel 2), 2 → a12 */
  label: z.union([z.literal(1), z.literal(2)], { error: (iss) => `label must be 1 or 2 (the channel the control is labelled in), got ${JSON.stringify(iss.input) ?? String(iss.input)}` }),
  fieldIds: z
    .array(Id)
    .min(1, 'choose at least one control field')
    .max(20, { error: (iss) => `at most 20 control fields at once, got ${(iss.input as unknown[] | undefined)?.length ?? '?'}` })
    .refine((a) => new Set(a).size === a.length, { message: 'a control field is listed twice' }),
});

const SourceField = z.object({ id: Id, name: z.string(), studyId: Id });

/** Where a calibration's shift came from when it was measured here (the value may have been edited since). */
export const ShiftSource = z.object({
  field: SourceField,
  dx: z.number(),
  dy: z.number(),
  peak: z.number().nullable(),
  z: z.string(),
  curves: CrossCorrelationCurves,
  measuredAt: IsoDate,
  measuredBy: UserRef,
});
export type ShiftSource = z.infer<typeof ShiftSource>;

/** Where a bleed-through coefficient came from: the pooled control fields, the raw slope and the value recorded. */
export const BleedSource = z.object({
  fields: z.array(SourceField),
  /** the least-squares slope as measured */
  slope: z.number(),
  /** the value written into the calibration: the slope, or 0 when the slope came out slightly negative */
  value: z.number(),
  /** channel 2 was aligned with this shift before the slope was taken (the version's shift at the time), or null */
  alignedWith: z.object({ dx: z.number(), dy: z.number() }).nullable(),
  /** pixels (voxels) that entered the slope */
  pixels: z.number().int(),
  measuredAt: IsoDate,
  measuredBy: UserRef,
});
export type BleedSource = z.infer<typeof BleedSource>;

export const CalibrationSources = z.object({ shift: ShiftSource.nullable(), a21: BleedSource.nullable(), a12: BleedSource.nullable() });
export type CalibrationSources = z.infer<typeof CalibrationSources>;

export const CalibrationSummary = CalibrationValues.extend({
  id: Id,
  instrumentId: Id,
  version: z.number().int(),
  status: RecipeStatus,
  note: z.string(),
  proposer: UserRef,
  reviewer: UserRef,
  reviewNote: z.string().nullable(),
  submittedAt: IsoDate.nullable(),
  reviewedAt: IsoDate.nullable(),
  createdAt: IsoDate,
});
export type CalibrationSummary = z.infer<typeof CalibrationSummary>;

export const CalibrationDetail = CalibrationSummary.extend({
  /** the fields each value was measured from in the app (null: typed in, or carried from an older version that was) */
  sources: CalibrationSources,
  history: z.array(RecipeHistoryEvent),
  allowed: z.array(z.enum(['edit', 'submit', 'approve', 'return', 'retire'])),
});
export type CalibrationDetail = z.infer<typeof CalibrationDetail>;

export const InstrumentSummary = z.object({
  id: Id,
  name: z.string(),
  objective: z.string(),
  channel1: z.string(),
  channel2: z.string(),
  createdAt: IsoDate,
  /** the approved calibration runs apply: the highest approved version, or null */
  approved: CalibrationSummary.nullable(),
});
export type InstrumentSummary = z.infer<typeof InstrumentSummary>;

export const InstrumentListResponse = z.object({ instruments: z.array(InstrumentSummary) });
export const InstrumentDetail = InstrumentSummary.extend({ calibrations: z.array(CalibrationSummary) });
export type InstrumentDetail = z.infer<typeof InstrumentDetail>;
