/**
 * Recipes: the one shape of quantification settings (`RecipeSettings`), read by the server runs, the
 * `analyze` command, the recipe editor (one explaining sentence per setting, `describeSetting`) and the
 * methods paragraph of reports.
 *
 * Method references (for the sentences and the methods paragraph):
 * - Otsu N. (1979) A threshold selection method from gray-level histograms. IEEE Trans. Syst. Man Cybern.
 *   9:62–66. doi:10.1109/TSMC.1979.4310076
 * - Costes S.V. et al. (2004) Automatic and quantitative measurement of protein-protein colocalization in
 *   live cells. Biophys. J. 86:3993–4003. doi:10.1529/biophysj.103.038422
 * - Manders E.M.M., Verbeek F.J., Aten J.A. (1993) Measurement of co-localization of objects in dual-colour
 *   confocal images. J. Microsc. 169:375–382. doi:10.1111/j.1365-2818.1993.tb03313.x
 * - Lindeberg T. (1998) Feature detection with automatic scale selection. Int. J. Comput. Vis. 30:79–116.
 *   doi:10.1023/A:1008045108935 (spots: Laplacian of Gaussian)
 * - Besag J., Diggle P.J. (1977) Simple Monte Carlo tests for spatial pattern. Appl. Stat. 26:327–333.
 *   doi:10.2307/2346974 (spots: the chance placement test)
 */
import { z } from 'zod';
import { DEFAULT_RECIPE_CHOICES, RECIPE_CHOICES, RECIPE_CHOICE_LABELS } from '../coefficients';

// ---------------------------------------------------------------- settings

export const BackgroundSetting = z.discriminatedUnion('method', [
  z.object({ method: z.literal('none') }),
  /** subtract a fixed value per channel (values below it become 0) */
  z.object({ method: z.literal('constant'), ch1: z.number().finite().min(0), ch2: z.number().finite().min(0) }),
  /** subtract the mean of the field's regions marked 'background' (cells with role 'background') */
  z.object({ method: z.literal('region') }),
]);
export type BackgroundSetting = z.infer<typeof BackgroundSetting>;

export const CostesStoppingRule = z.object({
  /** stop at the first (highest) threshold where Pearson's r of the below-threshold pixels is ≤ r */
  kind: z.literal('r_at_most'),
  r: z.number().min(-1).max(1).default(0),
});

export const ThresholdSetting = z.discriminatedUnion('method', [
  z.object({ method: z.literal('none') }),
  z.object({ method: z.literal('manual'), t1: z.number().finite(), t2: z.number().finite() }),
  z.object({ method: z.literal('otsu') }),
  z.object({
    method: z.literal('costes'),
    regression: z.enum(['orthogonal', 'ols']).default('orthogonal'),
    /** which pixels count as "below" while stepping: x ≤ T1 or y ≤ T2 ('either'), or both */
    belowSet: z.enum(['either', 'both']).default('either'),
    stoppingRule: CostesStoppingRule.default({ kind: 'r_at_most', r: 0 }),
  }),
]);
export type ThresholdSetting = z.infer<typeof ThresholdSetting>;

export const BlockSizeSetting = z.discriminatedUnion('kind', [
  /** `slices`: block extent in z for stacks measured in 3D (required there) */
  z.object({ kind: z.literal('pixels'), pixels: z.number().int().min(1).max(256), slices: z.number().int().min(1).max(256).optional() }),
  /**
   * block edge = round(psfWidthUm / pixel size); pixel size from the recipe, or the field's when null. For
   * stacks measured in 3D, block depth = round(psfDepthUm / z step) slices (the PSF's axial width; required
   * there), z step from the recipe or the field's.
   */
  z.object({
    kind: z.literal('psf'),
    psfWidthUm: z.number().positive().max(100),
    pixelSizeUm: z.number().positive().max(100).nullable().default(null),
    psfDepthUm: z.number().positive().max(1000).optional(),
    zStepUm: z.number().positive().max(1000).nullable().optional(),
  }),
]);
export type BlockSizeSetting = z.infer<typeof BlockSizeSetting>;

export const RandomizationSetting = z.object({
  enabled: z.boolean().default(false),
  count: z.number().int().min(1).max(10_000).default(200),
  blockSize: BlockSizeSetting.default({ kind: 'pixels', pixels: 3 }),
});
export type RandomizationSetting = z.infer<typeof RandomizationSetting>;

/** MICe/TICe parameters (Reshef et al. 2016): grid budget B(n) = n^alpha, at most c·B(n)/l clumps. */
export const MicSetting = z.object({
  alpha: z.number().gt(0, 'alpha must be above 0').max(1).default(0.6),
  c: z.number().gt(0, 'c must be above 0').max(100).default(15),
});
export type MicSetting = z.infer<typeof MicSetting>;

export const ZSetting = z.discriminatedUnion('mode', [
  /** every slice, voxel by voxel (3D): a cell's outline applies to every slice (the default; single-plane fields: their one slice) */
  z.object({ mode: z.literal('volume') }),
  /** one slice, 0-based */
  z.object({ mode: z.literal('slice'), slice: z.number().int().min(0).default(0) }),
  /** maximum-intensity projection of slices from..to (0-based, inclusive) */
  z.object({ mode: z.literal('range'), from: z.number().int().min(0), to: z.number().int().min(0) }),
  /** maximum-intensity projection of all slices */
  z.object({ mode: z.literal('mip') }),
]).refine((z) => z.mode !== 'range' || z.from <= z.to, { message: 'z range: "from" must not be after "to"' });
export type ZSetting = z.infer<typeof ZSetting>;

/**
 * Spot filter scale σ: in pixels, or from the point-spread function's full width at half maximum:
 * σ = FWHM / (2√(2 ln 2)) / pixel size (the Gaussian whose FWHM is the PSF's); pixel size from the recipe, or
 * the field's when null.
 */
export const SpotScaleSetting = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('pixels'), sigmaPx: z.number().positive().max(50) }),
  z.object({ kind: z.literal('psf'), psfWidthUm: z.number().positive().max(100), pixelSizeUm: z.number().positive().max(100).nullable().default(null) }),
]);
export type SpotScaleSetting = z.infer<typeof SpotScaleSetting>;

/** Pair distance d (a spot is paired when its nearest spot of the other channel is at most d away): pixels or µm. */
export const PairDistanceSetting = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('pixels'), pixels: z.number().min(0).max(1000) }),
  /** converted with the recipe's pixel size, or the field's when null */
  z.object({ kind: z.literal('um'), um: z.number().min(0).max(1000), pixelSizeUm: z.number().positive().max(100).nullable().default(null) }),
]);
export type PairDistanceSetting = z.infer<typeof PairDistanceSetting>;

/**
 * Axial spot filter width σz for stacks measured in 3D: in slices, or from the point-spread function's axial
 * full width at half maximum: σz = FWHMz / (2√(2 ln 2)) / z step; z step from the recipe, or the field's when
 * null. Absent (null) in a recipe: σz = σ × pixel size / z step, the lateral width in the specimen.
 */
export const SpotAxialSetting = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('slices'), sigmaZ: z.number().positive().max(50) }),
  z.object({ kind: z.literal('psf'), psfDepthUm: z.number().positive().max(1000), zStepUm: z.number().positive().max(1000).nullable().default(null) }),
]);
export type SpotAxialSetting = z.infer<typeof SpotAxialSetting>;

/** Object-based co-localization: spots per channel, pairs within d, the chance placement test (shared/analysis/objects.ts). */
export const ObjectsSetting = z.object({
  enabled: z.boolean().default(false),
  scale: SpotScaleSetting.default({ kind: 'pixels', sigmaPx: 1.5 }),
  /** axial filter width in stacks measured in 3D; null = σ × pixel size / z step (one physical width) */
  axial: SpotAxialSetting.nullable().default(null),
  /** a spot's filter response must exceed k × the robust noise estimate of the cell */
  k: z.number().positive().max(1000).default(5),
  /** smallest centre-to-centre distance of two spots of one channel, pixels; null = 2σ */
  minSeparationPx: z.number().min(0).max(1000).nullable().default(null),
  pairDistance: PairDistanceSetting.default({ kind: 'pixels', pixels: 2 }),
  /** random placements of the chance placement test */
  placements: z.number().int().min(1).max(100_000).default(999),
  /** seed of the chance placement test's generator */
  seed: z.number().int().min(0).max(2 ** 32 - 1).default(1),
});
export type ObjectsSetting = z.infer<typeof ObjectsSetting>;
export const DEFAULT_OBJECTS_SETTING: ObjectsSetting = ObjectsSetting.parse({});

/** σ of the spot filter in pixels (the field's pixel size is used when the recipe gives none). Throws when neither gives one. */
export function spotSigmaPx(o: ObjectsSetting, fieldPixelSizeUm: number | null): number {
  if (o.scale.kind === 'pixels') return o.scale.sigmaPx;
  const px = o.scale.pixelSizeUm ?? fieldPixelSizeUm;
  if (!px) throw new RangeError('the spot scale comes from the point-spread width, but neither the recipe nor the field gives a pixel size');
  return o.scale.psfWidthUm / (2 * Math.sqrt(2 * Math.LN2)) / px;
}

/**
 * σz of the spot filter in slices for a stack measured in 3D, given σ in pixels and the slice spacing zScale in
 * pixel widths (z step / pixel size): the recipe's axial setting, else σ / zScale. Throws when the axial width
 * is given in µm and neither the recipe nor the field gives the z step.
 */
export function spotSigmaZSlices(o: ObjectsSetting, sigmaPx: number, zScale: number, fieldZStepUm: number | null): number {
  const a = o.axial;
  if (a === null) return sigmaPx / zScale;
  if (a.kind === 'slices') return a.sigmaZ;
  const step = a.zStepUm ?? fieldZStepUm;
  if (!step) throw new RangeError("the spots' axial width comes from the axial point-spread width, but neither the recipe nor the field gives the z step between slices");
  return a.psfDepthUm / (2 * Math.sqrt(2 * Math.LN2)) / step;
}

/** Pair distance d in pixels (the field's pixel size is used when the recipe gives none). Throws when neither gives one. */
export function pairDistancePx(o: ObjectsSetting, fieldPixelSizeUm: number | null): number {
  if (o.pairDistance.kind === 'pixels') return o.pairDistance.pixels;
  const px = o.pairDistance.pixelSizeUm ?? fieldPixelSizeUm;
  if (!px) throw new RangeError('the pair distance is given in µm, but neither the recipe nor the field gives a pixel size');
  return o.pairDistance.um / px;
}

/** What a recipe may compute: the registry's recipe choices (shared/coefficients.ts). */
export const COEFFICIENTS = RECIPE_CHOICES;
export const Coefficient = z.enum(COEFFICIENTS);
export type Coefficient = z.infer<typeof Coefficient>;
export const COEFFICIENT_LABELS: Record<Coefficient, string> = RECIPE_CHOICE_LABELS;

export const RecipeSettings = z.object({
  background: BackgroundSetting.default({ method: 'none' }),
  saturation: z.enum(['keep', 'exclude']).default('keep'),
  threshold: ThresholdSetting.default({ method: 'costes', regression: 'orthogonal', belowSet: 'either', stoppingRule: { kind: 'r_at_most', r: 0 } }),
  /** Otsu / Costes thresholds computed for each cell over its own pixels, or once per field over the union of its cells */
  thresholdScope: z.enum(['cell', 'field']).default('cell'),
  randomization: RandomizationSetting.default({ enabled: false, count: 200, blockSize: { kind: 'pixels', pixels: 3 } }),
  z: ZSetting.default({ mode: 'volume' }),
  /** cells with fewer measured pixels get a measurement row with every coefficient null */
  minCellPixels: z.number().int().min(0).max(100_000_000).default(20),
  coefficients: z.array(Coefficient).min(1, 'choose at least one coefficient').default([...DEFAULT_RECIPE_CHOICES])
    .transform((a) => COEFFICIENTS.filter((c) => a.includes(c))),
  /** seed of the randomization test's generator (a run with the same seed repeats exactly) */
  seed: z.number().int().min(0).max(2 ** 32 - 1).default(1),
  /** 'approved': align and unmix each field with its instrument's approved calibration before measuring */
  calibration: z.enum(['none', 'approved']).default('none'),
  /** parameters of MICe/TICe (used when `coefficients` has 'mic') */
  mic: MicSetting.default({ alpha: 0.6, c: 15 }),
  /** spots, pairs within d and the chance placement test (off by default) */
  objects: ObjectsSetting.default(DEFAULT_OBJECTS_SETTING),
});
export type RecipeSettings = z.infer<typeof RecipeSettings>;
export type RecipeSettingsInput = z.input<typeof RecipeSettings>;

export const DEFAULT_RECIPE_SETTINGS: RecipeSettings = RecipeSettings.parse({});

export const SETTING_KEYS = ['calibration', 'background', 'saturation', 'threshold', 'randomization', 'z', 'minCellPixels', 'coefficients', 'mic', 'seed', 'objects'] as const;
export type SettingKey = (typeof SETTING_KEYS)[number];
export const SETTING_LABELS: Record<SettingKey, string> = {
  calibration: 'Channel calibration',
  background: 'Background',
  saturation: 'Saturated pixels',
  threshold: 'Threshold',
  randomization: 'Randomization test',
  z: 'Z slices',
  minCellPixels: 'Smallest cell',
  coefficients: 'Coefficients',
  mic: 'MICe and TICe',
  seed: 'Seed',
  objects: 'Spots',
};

/** Measured cost of MICe/TICe at α 0.6, c 15 (tests/bench/mic.bench.ts), stated in the recipe sentence. */
const MIC_COST = 'They cost up to about half a second of one processor core per 20,000-pixel cell of 16-bit data (about 35 ms for 8-bit data with many ties)';

/** The parts of the objects section, each with its own sentence (the editor shows them one by one). */
export const OBJECT_SETTING_KEYS = ['scale', 'axial', 'k', 'minSeparationPx', 'pairDistance', 'placements', 'seed'] as const;
export type ObjectSettingKey = (typeof OBJECT_SETTING_KEYS)[number];
export const OBJECT_SETTING_LABELS: Record<ObjectSettingKey, string> = {
  scale: 'Spot size',
  axial: 'Spot depth in 3D',
  k: 'Detection strictness',
  minSeparationPx: 'Closest spots',
  pairDistance: 'Pairs within d',
  placements: 'Chance placement test',
  seed: 'Placement seed',
};

const sigmaText = (o: ObjectsSetting) =>
  o.scale.kind === 'pixels'
    ? `σ = ${fmt(o.scale.sigmaPx)} px`
    : `σ = ${fmt(o.scale.psfWidthUm)} µm / 2.355 at ${o.scale.pixelSizeUm == null ? "the field's pixel size" : `${fmt(o.scale.pixelSizeUm)} µm per pixel`}`;

/** One plain sentence for one part of the objects section. */
export function describeObjectSetting(key: ObjectSettingKey, o: ObjectsSetting): string {
  switch (key) {
    case 'scale':
      return o.scale.kind === 'pixels'
        ? `Spots are found in each channel with a Laplacian-of-Gaussian filter (Lindeberg 1998) of width σ = ${fmt(o.scale.sigmaPx)} pixels, about the radius of one spot.`
        : `Spots are found in each channel with a Laplacian-of-Gaussian filter (Lindeberg 1998) as wide as the point-spread function: a full width at half maximum of ${fmt(o.scale.psfWidthUm)} µm gives ${sigmaText(o)} pixels.`;
    case 'axial': {
      const a = o.axial;
      const where = 'In stacks measured in 3D the filter';
      if (a === null) return `${where} is as wide along the optical axis as across the plane in the specimen: σz = σ × pixel size / z step slices.`;
      if (a.kind === 'slices') return `${where} has the axial width σz = ${fmt(a.sigmaZ)} slices, whatever the z step.`;
      return `${where} is as deep as the axial point-spread function: an axial full width at half maximum of ${fmt(a.psfDepthUm)} µm gives σz = ${fmt(a.psfDepthUm)} µm / 2.355 at ${a.zStepUm == null ? "the field's z step" : `${fmt(a.zStepUm)} µm between slices`}.`;
    }
    case 'k':
      return `A local maximum counts as a spot when its filter response is more than ${fmt(o.k)} times the cell's noise level (1.4826 × the median absolute deviation of the response); a higher value finds fewer, brighter spots.`;
    case 'minSeparationPx':
      return o.minSeparationPx === null
        ? 'Two spots of one channel closer than 2σ are taken as one (the brighter is kept).'
        : `Two spots of one channel closer than ${fmt(o.minSeparationPx)} pixels are taken as one (the brighter is kept).`;
    case 'pairDistance': {
      const p = o.pairDistance;
      const d =
        p.kind === 'pixels'
          ? `${fmt(p.pixels)} pixels (multiply by the pixel size for the distance in the specimen)`
          : `${fmt(p.um)} µm in the specimen (converted with ${p.pixelSizeUm == null ? "each field's pixel size" : `${fmt(p.pixelSizeUm)} µm per pixel`})`;
      return `A spot is paired when the nearest spot of the other channel has its centre at most d = ${d} away: d is how far apart two labels on the same structure may appear, so it should cover the chromatic shift between channels plus the localisation error, and stay below the typical spacing of unrelated spots.`;
    }
    case 'placements':
      return `The chance placement test (Besag & Diggle 1977) places the channel-2 spots uniformly at random in the cell ${o.placements} times and reports how often chance pairs at least as many channel-1 spots (p = (1 + count) / ${o.placements + 1}, so p cannot be below ${fmt(1 / (o.placements + 1))}); time grows in proportion to the placements.`;
    case 'seed':
      return `The chance placements start from seed ${o.seed}, so the same run gives the same p-values again.`;
  }
}

/** Every part's sentence, in editor order. */
export const describeObjectSettings = (o: ObjectsSetting) => OBJECT_SETTING_KEYS.map((k) => ({ key: k, label: OBJECT_SETTING_LABELS[k], sentence: describeObjectSetting(k, o) }));

const fmt = (n: number) => (Number.isInteger(n) ? String(n) : String(Number(n.toPrecision(6))));

/**
 * The caution shown wherever a recipe measures a maximum-intensity projection (z 'mip' or 'range'): the recipe
 * editor and page, and the methods paragraph of reports. One home for the wording (common practice: a
 * projection keeps each pixel's brightest slice, so structures at different depths land on one plane).
 */
export const PROJECTION_CAUTION =
  'A maximum-intensity projection merges structures that lie apart in z into one plane, so signals that never meet in the specimen can overlap in the projection and create false co-localization; measure one slice or every slice in 3D when that matters.';

/** PROJECTION_CAUTION when the z handling is a maximum-intensity projection, else null. */
export function projectionCaution(z: RecipeSettings['z']): string | null {
  return z.mode === 'mip' || z.mode === 'range' ? PROJECTION_CAUTION : null;
}

/** One plain sentence explaining the current value of one setting (the editor shows it; reports reuse it). */
export function describeSetting(key: SettingKey, s: RecipeSettings): string {
  switch (key) {
    case 'calibration':
      return s.calibration === 'none'
        ? 'Channels are measured as recorded: no shift or bleed-through correction.'
        : "Each field is corrected with its instrument's approved calibration first: channel 2 is shifted into register by bilinear interpolation (pixels that fall outside are not measured), then bleed-through is removed by linear unmixing (negative results set to 0). Fields without an instrument or an approved calibration are not measured.";
    case 'background': {
      const b = s.background;
      if (b.method === 'none') return 'Raw intensities are used; no background is subtracted.';
      if (b.method === 'constant')
        return `A constant background of ${fmt(b.ch1)} (channel 1) and ${fmt(b.ch2)} (channel 2) intensity units is subtracted from every pixel; values below it become 0.`;
      return "The mean intensity of the field's marked background region is subtracted from every pixel, per channel; values below it become 0.";
    }
    case 'saturation':
      return s.saturation === 'keep'
        ? 'Saturated pixels (at the maximum value of the bit depth) are kept in the measurement and reported as a fraction.'
        : 'Pixels saturated in either channel (at the maximum value of the bit depth) are left out before anything is computed.';
    case 'threshold': {
      const t = s.threshold;
      if (t.method === 'none') return "No threshold: every pixel of the cell counts as foreground for Manders' M1 and M2.";
      if (t.method === 'manual')
        return `Fixed thresholds: channel 1 counts as foreground above ${fmt(t.t1)} and channel 2 above ${fmt(t.t2)} intensity units.`;
      const where = s.thresholdScope === 'cell' ? 'for each cell over its own pixels' : 'once per field over the pixels of all its cells';
      if (t.method === 'otsu') return `Each channel's threshold is chosen ${where} by Otsu's method (Otsu 1979) on the full intensity histogram; foreground is above it.`;
      return (
        `Thresholds are found ${where} by the Costes method (Costes et al. 2004): along the ${t.regression === 'orthogonal' ? 'orthogonal (total least squares)' : 'ordinary least squares'} regression line, ` +
        `stepping down until Pearson's r of the pixels below ${t.belowSet === 'either' ? 'either' : 'both'} threshold${t.belowSet === 'either' ? '' : 's'} is at most ${fmt(t.stoppingRule.r)}.`
      );
    }
    case 'randomization': {
      const r = s.randomization;
      if (!r.enabled) return 'No randomization test is run.';
      const block =
        r.blockSize.kind === 'pixels'
          ? `${r.blockSize.pixels} × ${r.blockSize.pixels}-pixel blocks${r.blockSize.slices ? ` (${r.blockSize.slices} slices deep in stacks measured in 3D)` : ''}`
          : `blocks as wide as the point-spread function (${fmt(r.blockSize.psfWidthUm)} µm at ${r.blockSize.pixelSizeUm == null ? "the field's pixel size" : `${fmt(r.blockSize.pixelSizeUm)} µm per pixel`}${r.blockSize.psfDepthUm ? `; in stacks measured in 3D as deep as its axial width, ${fmt(r.blockSize.psfDepthUm)} µm at ${r.blockSize.zStepUm == null ? "the field's z step" : `${fmt(r.blockSize.zStepUm)} µm between slices`}` : ''})`;
      return `Channel 1 is scrambled in ${block} ${r.count} times and the fraction of scrambles with Pearson's r at least the observed one is reported (Costes et al. 2004).`;
    }
    case 'z': {
      const z = s.z;
      if (z.mode === 'volume') return 'Every slice of each stack is measured voxel by voxel in 3D, each cell outline applying to every slice (the only slice for single-plane fields).';
      if (z.mode === 'slice') return `Slice ${z.slice + 1} of each stack is measured (the only slice for single-plane fields).`;
      if (z.mode === 'range') return `The maximum-intensity projection of slices ${z.from + 1} to ${z.to + 1} is measured.`;
      return 'The maximum-intensity projection of all slices is measured.';
    }
    case 'minCellPixels':
      return s.minCellPixels > 0
        ? `Cells with fewer than ${s.minCellPixels} measured pixels are listed without coefficients.`
        : 'Every cell is measured, however small.';
    case 'coefficients':
      return `Computed: ${s.coefficients.map((c) => COEFFICIENT_LABELS[c]).join(', ')}.`;
    case 'mic': {
      const on = s.coefficients.includes('mic');
      const params = `grids of at most n^${fmt(s.mic.alpha)} cells for n pixels and at most ${fmt(s.mic.c)} × n^${fmt(s.mic.alpha)} / rows clumps`;
      return on
        ? `MICe and TICe (Reshef et al. 2016) are computed with ${params}. ${MIC_COST}, more than all other coefficients together.`
        : `MICe and TICe are not computed. ${MIC_COST} when chosen (${params}).`;
    }
    case 'seed':
      return `The random generator starts from seed ${s.seed}, so the same run gives the same numbers again.`;
    case 'objects':
      return s.objects.enabled
        ? OBJECT_SETTING_KEYS.map((k) => describeObjectSetting(k, s.objects)).join(' ')
        : 'No spots are detected (object-based measures are off).';
  }
}

/** Every setting's sentence, in editor order. */
export const describeSettings = (s: RecipeSettings) => SETTING_KEYS.map((k) => ({ key: k, label: SETTING_LABELS[k], sentence: describeSetting(k, s) }));

// ---------------------------------------------------------------- API shapes

export const RECIPE_STATUSES = ['draft', 'submitted', 'approved', 'returned', 'retired'] as const;
export const RecipeStatus = z.enum(RECIPE_STATUSES);
export type RecipeStatus = z.infer<typeof RecipeStatus>;

export const UserRef = z.object({ id: z.number().int(), name: z.string() }).nullable();

export const RecipeSummary = z.object({
  id: z.number().int(),
  familyId: z.number().int(),
  name: z.string(),
  version: z.number().int(),
  status: RecipeStatus,
  description: z.string(),
  proposer: UserRef,
  reviewer: UserRef,
  reviewNote: z.string().nullable(),
  submittedAt: z.string().nullable(),
  reviewedAt: z.string().nullable(),
  createdAt: z.string(),
});
export type RecipeSummary = z.infer<typeof RecipeSummary>;

export const RecipeHistoryEvent = z.object({
  at: z.string(),
  action: z.string(),
  actor: UserRef,
  note: z.string().nullable(),
});

export const RecipeDetail = RecipeSummary.extend({
  settings: RecipeSettings,
  /** other versions of the same family, newest first */
  versions: z.array(z.object({ id: z.number().int(), version: z.number().int(), status: RecipeStatus })),
  history: z.array(RecipeHistoryEvent),
  /** what the signed-in user may do now */
  allowed: z.array(z.enum(['edit', 'submit', 'approve', 'return', 'retire', 'new_version'])),
});
export type RecipeDetail = z.infer<typeof RecipeDetail>;

export const RecipeListQuery = z.object({
  status: z.union([RecipeStatus, z.array(RecipeStatus)]).optional().transform((s) => (s === undefined ? undefined : Array.isArray(s) ? s : [s])),
  familyId: z.coerce.number().int().positive().optional(),
});
export const RecipeListResponse = z.object({ recipes: z.array(RecipeSummary) });

export const CreateRecipeRequest = z.object({
  name: z.string().trim().min(1, 'give the recipe a name').max(120),
  description: z.string().max(4000).default(''),
  settings: RecipeSettings.default(DEFAULT_RECIPE_SETTINGS),
});
export type CreateRecipeRequest = z.input<typeof CreateRecipeRequest>;

/** Editing a draft/returned version in place (approved/submitted/retired: 409; use new-version). */
export const UpdateRecipeRequest = z.object({
  name: z.string().trim().min(1).max(120).optional(),
  description: z.string().max(4000).optional(),
  settings: RecipeSettings.optional(),
});
export type UpdateRecipeRequest = z.input<typeof UpdateRecipeRequest>;

/** submit / approve / return / retire; a note is required to return */
export const RecipeTransitionRequest = z.object({ note: z.string().trim().max(4000).optional() });

export const RecipeDiffEntry = z.object({
  key: z.string(),
  label: z.string(),
  a: z.string(),
  b: z.string(),
  changed: z.boolean(),
});
export const RecipeDiffResponse = z.object({
  a: RecipeSummary,
  b: RecipeSummary,
  entries: z.array(RecipeDiffEntry),
});
export type RecipeDiffResponse = z.infer<typeof RecipeDiffResponse>;

/** Setting-by-setting comparison of two settings objects (the editor's side-by-side view). */
export function diffSettings(a: RecipeSettings, b: RecipeSettings) {
  return SETTING_KEYS.map((key) => {
    const sa = describeSetting(key, a);
    const sb = describeSetting(key, b);
    return { key, label: SETTING_LABELS[key], a: sa, b: sb, changed: sa !== sb || JSON.stringify(a[key]) !== JSON.stringify(b[key]) };
  });
}
