/**
 * Bulk intake by sample sheet: a CSV with one row per field, checked before any file is sent
 * (POST /api/studies/:id/sample-sheet/check stores nothing).
 *
 * Columns (header row, any order, case-insensitive): `file` (required), `file2` (the channel-2 file of a file
 * pair; empty: both channels from `file`), `condition` and `coverslip` (required), `ch1` and `ch2` (1-based
 * channel inside its file; default 1 and 2 for one file, 1 and 1 for a pair), `name` (the field's name;
 * default from the file name), `pixel_size_um` (µm per pixel, > 0; empty: from the file), `z_step_um` (µm between
 * the slices of a stack, > 0, at most 1000; used when the file states none; empty: from the file), `instrument`
 * (an instrument's name; empty: none).
 */
import { z } from 'zod';
import { UploadFieldPlan } from './fields.js';

export const SAMPLE_SHEET_COLUMNS = ['file', 'file2', 'condition', 'coverslip', 'ch1', 'ch2', 'name', 'pixel_size_um', 'z_step_um', 'instrument'] as const;
export const SAMPLE_SHEET_REQUIRED = ['file', 'condition', 'coverslip'] as const;

const Sha256 = z.string().regex(/^[0-9a-f]{64}$/, 'a SHA-256 is 64 lower-case hex digits');

export const SampleSheetCheckRequest = z.object({
  /** the sheet's CSV text */
  csv: z.string().min(1).max(2_000_000),
  /** the files the user picked, with the SHA-256 the browser computed: files already stored are reported */
  files: z.array(z.object({ name: z.string().min(1).max(500), sha256: Sha256 })).max(10_000).default([]),
});
export type SampleSheetCheckRequest = z.infer<typeof SampleSheetCheckRequest>;

export const SampleSheetRow = z.object({
  line: z.number().int(),
  file: z.string(),
  file2: z.string().nullable(),
  ch1: z.number().int(),
  ch2: z.number().int(),
  condition: z.string(),
  coverslip: z.string(),
  name: z.string().nullable(),
  pixelSizeUm: z.number().nullable(),
  zStepUm: z.number().nullable(),
  instrument: z.string().nullable(),
  instrumentId: z.number().int().nullable(),
  /** the existing condition / coverslip of this study with that name, or null (created on upload) */
  conditionId: z.number().int().nullable(),
  coverslipId: z.number().int().nullable(),
});
export type SampleSheetRow = z.infer<typeof SampleSheetRow>;

export const SampleSheetProblem = z.object({ line: z.number().int(), message: z.string() });
export type SampleSheetProblem = z.infer<typeof SampleSheetProblem>;

export const SampleSheetCheckResponse = z.object({
  /** true when no row has a problem */
  ok: z.boolean(),
  rows: z.array(SampleSheetRow),
  /** every bad row, by its line in the sheet (1 is the header) */
  problems: z.array(SampleSheetProblem),
  /** conditions and coverslips ("condition / coverslip") the sheet names that do not exist yet */
  creates: z.object({ conditions: z.array(z.string()), coverslips: z.array(z.string()) }),
  /** file names of the sheet whose content (by the SHA-256 sent) is already stored: they need not be sent again */
  alreadyStored: z.array(z.string()),
  /** lines whose field is already on its coverslip (same files by SHA-256, same channels): not uploaded again */
  uploaded: z.array(z.number().int()),
});
export type SampleSheetCheckResponse = z.infer<typeof SampleSheetCheckResponse>;

/** One upload the client sends to POST /api/coverslips/:id/fields: the files in form order and the plan. */
export const SampleSheetUpload = z.object({
  coverslipId: z.number().int(),
  /** the sheet's file names, in the order they go into the form part "files" */
  files: z.array(z.string()),
  /** the upload plan (shared/schemas/fields.ts UploadPlan), `file` indexing `files` */
  plan: z.array(UploadFieldPlan),
  /** the sheet line of each plan entry */
  lines: z.array(z.number().int()),
});
export type SampleSheetUpload = z.infer<typeof SampleSheetUpload>;

/** POST /api/studies/:id/sample-sheet/apply: what was created, and the uploads still to send. */
export const SampleSheetApplyResponse = z.object({
  created: z.object({ conditions: z.array(z.string()), coverslips: z.array(z.string()) }),
  uploads: z.array(SampleSheetUpload),
  /** lines already uploaded (left out of `uploads`) */
  uploaded: z.array(z.number().int()),
});
export type SampleSheetApplyResponse = z.infer<typeof SampleSheetApplyResponse>;
