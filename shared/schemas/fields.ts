/** Fields (two-channel images) on coverslips: request and response shapes shared by server and client. */
import { z } from 'zod';

export const ChannelFacts = z.object({
  min: z.number(),
  max: z.number(),
  mean: z.number(),
  /** fraction of pixels at the largest value the pixel type can hold (0 for float data) */
  saturatedFraction: z.number(),
  /** fraction at the largest observed value when it forms a plateau (clipping below full scale), else null */
  plateauFraction: z.number().nullable(),
});
export type ChannelFacts = z.infer<typeof ChannelFacts>;

/** A field counts as saturated when more than this fraction of a channel sits at the ceiling or a plateau. */
export const SATURATION_FLAG_FRACTION = 0.001;

export const FieldSummary = z.object({
  id: z.number().int(),
  coverslipId: z.number().int(),
  name: z.string(),
  width: z.number().int(),
  height: z.number().int(),
  sizeZ: z.number().int(),
  bitDepth: z.number().int(),
  sampleFormat: z.enum(['uint', 'float']),
  channelNames: z.tuple([z.string().nullable(), z.string().nullable()]),
  pixelSizeUm: z.number().nullable(),
  /** the instrument the field was recorded on (its approved calibration is what recipes apply), or null */
  instrumentId: z.number().int().nullable(),
  /** distance between z slices in µm (from OME-XML), null when unknown or a single plane */
  zStepUm: z.number().nullable(),
  facts: z.object({ ch1: ChannelFacts, ch2: ChannelFacts }),
  /** true when either channel has more than SATURATION_FLAG_FRACTION saturated or plateau pixels */
  saturated: z.boolean(),
  status: z.enum(['ready', 'deleted']),
  fileSize: z.number().int(),
  createdAt: z.string(),
});
export type FieldSummary = z.infer<typeof FieldSummary>;

/**
 * µm per pixel given by hand, for fields whose files carry no pixel size: a finite number above 0 and at most
 * 100 (a pixel wider than 100 µm is no microscope image); errors quote the value received.
 */
export const PixelSizeUm = z
  .number({ error: (iss) => `the pixel size must be a number of µm per pixel, got ${JSON.stringify(iss.input) ?? String(iss.input)}` })
  .gt(0, { error: (iss) => `the pixel size must be above 0 µm per pixel, got ${String(iss.input)}` })
  .max(100, { error: (iss) => `the pixel size must be at most 100 µm per pixel, got ${String(iss.input)}` });

/** PUT /api/fields/:id/pixel-size: the field's µm per pixel (null: not known). */
export const SetFieldPixelSizeRequest = z.object({ pixelSizeUm: PixelSizeUm.nullable() });
export type SetFieldPixelSizeRequest = z.infer<typeof SetFieldPixelSizeRequest>;

/**
 * µm between z slices given by hand, for stacks whose files state none: a finite number above 0 and at most 1000
 * (the recipes' bound for a z step); errors quote the value received.
 */
export const ZStepUm = z
  .number({ error: (iss) => `the z step must be a number of µm between slices, got ${JSON.stringify(iss.input) ?? String(iss.input)}` })
  .gt(0, { error: (iss) => `the z step must be above 0 µm between slices, got ${String(iss.input)}` })
  .max(1000, { error: (iss) => `the z step must be at most 1000 µm between slices, got ${String(iss.input)}` });

/** PUT /api/fields/:id/z-step: the stack's µm between slices (null: not known). */
export const SetFieldZStepRequest = z.object({ zStepUm: ZStepUm.nullable() });
export type SetFieldZStepRequest = z.infer<typeof SetFieldZStepRequest>;

/** PUT /api/fields/:id/instrument: the instrument the field was recorded on, or null for none. */
export const SetFieldInstrumentRequest = z.object({ instrumentId: z.number().int().positive().nullable() });

export const FieldFile = z.object({
  sha256: z.string(),
  originalName: z.string(),
  size: z.number().int(),
  /** 1-based channel inside this file */
  channel: z.number().int(),
});

export const FieldDetail = FieldSummary.extend({
  studyId: z.number().int(),
  conditionId: z.number().int(),
  files: z.tuple([FieldFile, FieldFile]),
  uploadedBy: z.number().int().nullable(),
  /** the name of the instrument the field was recorded on (shown as text to those who may not change it), or null */
  instrumentName: z.string().nullable(),
  /** what the viewer may do */
  canEdit: z.boolean(),
});
export type FieldDetail = z.infer<typeof FieldDetail>;

export const StudyFieldSummary = FieldSummary.extend({ conditionId: z.number().int() });
export const StudyFieldsResponse = z.object({ fields: z.array(StudyFieldSummary) });
export const CoverslipFieldsResponse = z.object({ fields: z.array(FieldSummary) });

/**
 * Upload plan (multipart text part "plan", JSON): one entry per field; `file` indexes the uploaded
 * files in the order they were sent (form part "files"). One multi-channel file: the same `file` twice
 * with two channels. Two single-channel files: two `file` indexes, channel 1 each.
 * When "plan" is absent every uploaded file becomes one field from its channels 1 and 2.
 */
export const UploadChannelRef = z.object({
  file: z.number().int().min(0),
  channel: z.number().int().min(1).max(10000).default(1),
});
export const UploadFieldPlan = z.object({
  name: z.string().trim().max(200).optional(),
  ch1: UploadChannelRef,
  ch2: UploadChannelRef,
  /** the instrument that recorded the field (its approved calibration is what recipes apply); absent: the study's default instrument; null: none */
  instrumentId: z.number().int().positive().nullable().optional(),
  /** µm per pixel for a field whose files carry none (the files' own pixel size, when they have one, is kept; a sample sheet's pixel_size_um comes here) */
  pixelSizeUm: PixelSizeUm.optional(),
  /** µm between z slices for a stack whose files state none (kept from the files when they do; a single plane has none, so it is not used there) */
  zStepUm: ZStepUm.optional(),
});
export const UploadPlan = z.array(UploadFieldPlan).min(1).max(1000);
export type UploadFieldPlan = z.infer<typeof UploadFieldPlan>;

export const UploadResult = z.union([
  z.object({ index: z.number().int(), name: z.string(), ok: z.literal(true), field: FieldSummary }),
  z.object({ index: z.number().int(), name: z.string(), ok: z.literal(false), status: z.number().int(), error: z.string() }),
]);
export type UploadResult = z.infer<typeof UploadResult>;
export const UploadResponse = z.object({ results: z.array(UploadResult), error: z.string().optional() });
export type UploadResponse = z.infer<typeof UploadResponse>;

/** Channel list of a file, read before uploading (POST /api/images/inspect is not offered; the browser reads
 * the header itself) — kept here so the client and server agree on the names. */
export const PreviewView = z.enum(['composite', 'ch1', 'ch2']);
export const PreviewQuery = z.object({
  view: PreviewView.default('composite'),
  z: z.union([z.literal('mip'), z.coerce.number().int().min(0)]).optional(),
  lo1: z.coerce.number().finite().optional(),
  hi1: z.coerce.number().finite().optional(),
  lo2: z.coerce.number().finite().optional(),
  hi2: z.coerce.number().finite().optional(),
  /** lower / upper percentile for automatic display ranges (default 0.1 and 99.9) */
  plo: z.coerce.number().min(0).max(100).optional(),
  phi: z.coerce.number().min(0).max(100).optional(),
  /** largest side in pixels of the returned image (downscaled by powers of two, then to fit) */
  max: z.coerce.number().int().min(16).max(65536).optional(),
});
export type PreviewQuery = z.infer<typeof PreviewQuery>;

/**
 * GET /api/fields/:id/pixels: one slice (`z`, default the middle one), the projection (`z=mip`), or an
 * orthogonal section through the whole stack (`section=xz&at=<row y>`: width × slices; `section=yz&at=<column
 * x>`: height × slices; row k is slice k), which is what the workspace's XZ and YZ views fetch instead of the whole stack.
 */
export const PixelsQuery = z
  .object({
    z: z.union([z.literal('mip'), z.coerce.number().int().min(0)]).optional(),
    section: z.enum(['xz', 'yz'], { error: (iss) => `section must be "xz" or "yz", got ${JSON.stringify(iss.input)}` }).optional(),
    at: z.coerce
      .number({ error: (iss) => `at must be a whole pixel position, got ${JSON.stringify(iss.input)}` })
      .int({ error: (iss) => `at must be a whole pixel position, got ${JSON.stringify(iss.input)}` })
      .min(0, { error: (iss) => `at must be 0 or more, got ${JSON.stringify(iss.input)}` })
      .optional(),
  })
  .superRefine((q, ctx) => {
    if (q.section && q.at === undefined) ctx.addIssue({ code: 'custom', path: ['at'], message: `a ${q.section} section needs "at": the ${q.section === 'xz' ? 'row y' : 'column x'} it passes through` });
    if (q.section && q.z !== undefined) ctx.addIssue({ code: 'custom', path: ['z'], message: `a section runs through every slice; leave out z (got ${JSON.stringify(q.z)})` });
    if (!q.section && q.at !== undefined) ctx.addIssue({ code: 'custom', path: ['at'], message: `"at" (got ${q.at}) belongs to a section; add section=xz or section=yz` });
  });

export const DeleteFieldResponse = z.object({ ok: z.literal(true), soft: z.boolean() });
