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
