/**
 * The coefficient registry: one entry per number the engine reports per cell (`MEASURE_KEYS` of
 * shared/analysis/types.ts, in that order). Everything that lists coefficients derives from here: the
 * measurements table's column names (server/db/schema.ts, checked by tests/coefficients/registry.test.ts), the zod
 * schemas (Cell table columns, Compare and report choices), CSV headers, the `analyze` table, the Cell table,
 * Compare, the workspace tables, the report and its methods paragraph with its references.
 *
 * From the registry to the screen, e.g. Spearman's ρ: the engine computes `spearman` (shared/analysis/
 * spearman.ts, filled in by `measurePairs`); a run stores it in the column named by `column`
 * (server/runs/compute.ts → server/db/schema.ts); the Cell table API selects it by that column
 * (server/compare/source.ts `COLUMN_SQL`) under the key listed in `NUMERIC_COLUMNS` (shared/schemas/
 * measurements.ts, from `cellTable`); Compare offers it when `compare` is true (shared/schemas/compare.ts
 * `COMPARE_COEFFICIENTS`), averages it through Fisher's z when `fisherZ` is true (server/compare/compute.ts)
 * and draws it on `axis`; screens write its `label` and format it with `format` (shared/format.ts).
 *
 * This module may import types from the engine; the engine imports nothing from here.
 */
import { MEASURE_KEYS, OBJECT_MEASURE_KEYS, type MeasureKey, type ObjectMeasureKey, type RegionResult } from './analysis/types';
import { formatNumber, type NumberKind } from './format/number';

export type CoefficientKey = MeasureKey;

/** A paper: `key` is how the text cites it ("Pearson 1896"), `text` the full reference with DOI. */
export interface Citation {
  key: string;
  text: string;
}

/** The papers of the per-cell measures (authors, year, journal, DOI). */
export const COEFFICIENT_CITATIONS = {
  pearson: { key: 'Pearson 1896', text: 'Pearson K (1896) Mathematical contributions to the theory of evolution. III. Regression, heredity, and panmixia. Phil. Trans. R. Soc. Lond. A 187:253–318. doi:10.1098/rsta.1896.0007' },
  spearman: { key: 'Spearman 1904', text: 'Spearman C (1904) The proof and measurement of association between two things. Am. J. Psychol. 15:72–101. doi:10.2307/1412159' },
  kendall: { key: 'Kendall 1945', text: 'Kendall MG (1945) The treatment of ties in ranking problems. Biometrika 33:239–251. doi:10.1093/biomet/33.3.239' },
  knight: { key: 'Knight 1966', text: "Knight WR (1966) A computer method for calculating Kendall's tau with ungrouped data. J. Am. Stat. Assoc. 61:436–439. doi:10.1080/01621459.1966.10480879" },
  dcor: { key: 'Székely, Rizzo & Bakirov 2007', text: 'Székely GJ, Rizzo ML, Bakirov NK (2007) Measuring and testing dependence by correlation of distances. Ann. Statist. 35:2769–2794. doi:10.1214/009053607000000505' },
  dcorT: { key: 'Székely & Rizzo 2013', text: 'Székely GJ, Rizzo ML (2013) The distance correlation t-test of independence in high dimension. J. Multivariate Anal. 117:193–213. doi:10.1016/j.jmva.2013.02.012' },
  dcorFast: { key: 'Huo & Székely 2016', text: 'Huo X, Székely GJ (2016) Fast computing for distance covariance. Technometrics 58:435–447. doi:10.1080/00401706.2015.1054435' },
  manders: { key: 'Manders et al. 1993', text: 'Manders EMM, Verbeek FJ, Aten JA (1993) Measurement of co-localization of objects in dual-colour confocal images. J. Microsc. 169:375–382. doi:10.1111/j.1365-2818.1993.tb03313.x' },
  costes: { key: 'Costes et al. 2004', text: 'Costes SV, Daelemans D, Cho EH, Dobbin Z, Pavlakis G, Lockett S (2004) Automatic and quantitative measurement of protein-protein colocalization in live cells. Biophys. J. 86:3993–4003. doi:10.1529/biophysj.103.038422' },
  mic: { key: 'Reshef et al. 2011', text: 'Reshef DN, Reshef YA, Finucane HK, Grossman SR, McVean G, Turnbaugh PJ, Lander ES, Mitzenmacher M, Sabeti PC (2011) Detecting novel associations in large data sets. Science 334:1518–1524. doi:10.1126/science.1205438' },
  micE: { key: 'Reshef et al. 2016', text: 'Reshef YA, Reshef DN, Finucane HK, Sabeti PC, Mitzenmacher M (2016) Measuring dependence powerfully and equitably. J. Mach. Learn. Res. 17(212):1–63' },
  li: { key: 'Li et al. 2004', text: 'Li Q, Lau A, Morris TJ, Guo L, Fordyce CB, Stanley EF (2004) A syntaxin 1, Gαo, and N-type calcium channel complex at a presynaptic nerve terminal: analysis by quantitative immunocolocalization. J. Neurosci. 24:4070–4081. doi:10.1523/JNEUROSCI.0346-04.2004' },
  lindeberg: { key: 'Lindeberg 1998', text: 'Lindeberg T (1998) Feature detection with automatic scale selection. Int. J. Comput. Vis. 30:79–116. doi:10.1023/A:1008045108935' },
  lachmanovich: { key: 'Lachmanovich et al. 2003', text: 'Lachmanovich E, Shvartsman DE, Malka Y, Botvin C, Henis YI, Weiss AM (2003) Co-localization analysis of complex formation among membrane proteins by computerized fluorescence microscopy: application to immunofluorescence co-patching studies. J. Microsc. 212:122–131. doi:10.1046/j.1365-2818.2003.01239.x' },
  besagDiggle: { key: 'Besag & Diggle 1977', text: 'Besag J, Diggle PJ (1977) Simple Monte Carlo tests for spatial pattern. Appl. Stat. 26:327–333. doi:10.2307/2346974' },
} as const satisfies Record<string, Citation>;
export type CoefficientCitationKey = keyof typeof COEFFICIENT_CITATIONS;

/**
 * The recipe's choices of what to compute (shared/schemas/recipes.ts `coefficients`): one choice can fill
 * several measures (e.g. 'manders' → M1 and M2).
 */
export const RECIPE_CHOICES = ['pearson', 'spearman', 'kendallTauB', 'distanceCorrelation', 'manders', 'overlap', 'icq', 'mic'] as const;
export type RecipeChoice = (typeof RECIPE_CHOICES)[number];
/** Choices a new recipe leaves off (their cost is stated in the recipe's sentence): MICe/TICe. */
export const RECIPE_CHOICES_OFF_BY_DEFAULT: readonly RecipeChoice[] = ['mic'];
/** The choices a new recipe computes. */
export const DEFAULT_RECIPE_CHOICES = RECIPE_CHOICES.filter((c) => !RECIPE_CHOICES_OFF_BY_DEFAULT.includes(c));
export const RECIPE_CHOICE_LABELS: Record<RecipeChoice, string> = {
  pearson: "Pearson's r",
  spearman: "Spearman's ρ",
  kendallTauB: "Kendall's τ-b",
  distanceCorrelation: 'distance correlation (dCor, bias-corrected dCor² and its t-test)',
  manders: "Manders' M1 and M2",
  overlap: "Manders' overlap coefficient with k1 and k2",
  icq: "Li's intensity correlation quotient (ICQ)",
  mic: 'maximal and total information coefficients (MICe, TICe)',
};

export interface CoefficientSpec {
  /** full name, for tables, headings, the report and sentences */
  label: string;
  /** for narrow columns and axes */
  shortLabel: string;
  /** plain-ASCII header of the `analyze` terminal table, or null when the table leaves it out */
  cliLabel: string | null;
  /** one line on what it measures (tooltips) */
  description: string;
  /** SQL column of the measurements table */
  column: string;
  /** how it is written (shared/format.ts) */
  format: NumberKind;
  /** averaged through Fisher's z (Fisher 1915) at the coverslip and condition level */
  fisherZ: boolean;
  /** natural axis range; null = from the data */
  axis: readonly [number, number] | null;
  /** the recipe choice that computes it; null = always computed (pixels) or decided elsewhere (randomization test, the objects section) */
  recipeChoice: RecipeChoice | null;
  /** O(n log L) coefficient the browser preview skips (`skipSlow`) */
  slow: boolean;
  /** offered on Compare and in reports */
  compare: boolean;
  /** Cell table: shown by default, offered, or not a column */
  cellTable: 'default' | 'optional' | 'none';
  /** shown in the workspace's live preview (computed in the browser) */
  preview: boolean;
  /** shown in the workspace's per-cell results table (from the latest run) */
  results: boolean;
  /** papers, cited in the methods paragraph */
  citations: readonly CoefficientCitationKey[];
  /**
   * the methods paragraph's phrase, `{citation}` marking where a citation goes; measures with the same phrase are
   * described once. null = not described (counts, test outputs shown with their coefficient).
   */
  methods: string | null;
}

const DCOR_METHODS = 'distance correlation dCor (V-statistic, not squared; {dcor}), computed exactly on every pixel in O(n log n) ({dcorFast})';
const MANDERS_METHODS = "Manders' split coefficients M1 and M2 over pixels above the thresholds ({manders})";
const K_METHODS = "Manders' k1 and k2 coefficients ({manders})";
const MIC_METHODS = 'the equicharacteristic-matrix estimators MICe and TICe ({micE}) of the maximal information coefficient ({mic}), with grids of at most B(n) = n^α cells and at most c·B(n)/l clumps on the free axis (α and c as stated in the recipe), TICe being the sum (not the mean) of the matrix';
const SPOT_METHODS = 'spot counts per channel, spots found as local maxima of a scale-normalised Laplacian-of-Gaussian filter ({lindeberg})';
const PAIR_METHODS = "the fraction of each channel's spots whose nearest spot of the other channel lies within the pair distance d, mutual nearest-neighbour pairs and median nearest-neighbour distances ({lachmanovich})";
const CHANCE_METHODS = 'a Monte Carlo test of the channel-1 paired fraction against uniform random placement of the channel-2 spots in the cell, conditioned on the counts ({besagDiggle}), with the mean paired fraction under chance';
/** the object measures (recipe objects section): shared fields */
const OBJ = { recipeChoice: null, slow: false, preview: false, results: false, fisherZ: false, cliLabel: null, cellTable: 'optional' } as const;

/** The entries, keyed by the engine's result key. `satisfies Record<MeasureKey, …>`: a key missing or extra fails to compile. */
const SPECS = {
  pixels: {
    label: 'Pixels', shortLabel: 'px', cliLabel: 'pixels', description: 'pixels measured in the region', column: 'pixels', format: 'count',
    fisherZ: false, axis: null, recipeChoice: null, slow: false, compare: false, cellTable: 'default', preview: false, results: true, citations: [], methods: null,
  },
  pearson: {
    label: "Pearson's r", shortLabel: 'r', cliLabel: 'r', description: 'linear correlation', column: 'pearson', format: 'coefficient',
    fisherZ: true, axis: [-1, 1], recipeChoice: 'pearson', slow: false, compare: true, cellTable: 'default', preview: true, results: true, citations: ['pearson'],
    methods: "Pearson's correlation coefficient r ({pearson})",
  },
  spearman: {
    label: "Spearman's ρ", shortLabel: 'ρ', cliLabel: 'rho', description: 'rank correlation (average ranks for ties)', column: 'spearman', format: 'coefficient',
    fisherZ: true, axis: [-1, 1], recipeChoice: 'spearman', slow: false, compare: true, cellTable: 'default', preview: true, results: true, citations: ['spearman'],
    methods: "Spearman's rank correlation ρ, computed as Pearson's r of average ranks so that ties are handled ({spearman})",
  },
  kendallTauB: {
    label: "Kendall's τ-b", shortLabel: 'τ-b', cliLabel: 'tau-b', description: 'rank concordance with tie correction (Kendall 1945)', column: 'kendall_tau_b', format: 'coefficient',
    fisherZ: true, axis: [-1, 1], recipeChoice: 'kendallTauB', slow: true, compare: true, cellTable: 'optional', preview: true, results: true, citations: ['kendall', 'knight'],
    methods: "Kendall's τ-b with the tie correction of {kendall}, computed exactly in O(n log n) ({knight})",
  },
  distanceCorrelation: {
    label: 'Distance correlation (dCor)', shortLabel: 'dCor', cliLabel: 'dCor', description: 'dCor (Székely, Rizzo & Bakirov 2007), not squared', column: 'distance_correlation', format: 'coefficient',
    fisherZ: false, axis: [0, 1], recipeChoice: 'distanceCorrelation', slow: true, compare: true, cellTable: 'optional', preview: true, results: false, citations: ['dcor', 'dcorFast'],
    methods: DCOR_METHODS,
  },
  dcorBiasCorrectedSq: {
    label: 'Bias-corrected dCor²', shortLabel: 'dCor² bc', cliLabel: null, description: 'bias-corrected squared distance correlation R*ₙ (Székely & Rizzo 2013), in [−1, 1]', column: 'dcor_bias_corrected_sq', format: 'coefficient',
    fisherZ: false, axis: null, recipeChoice: 'distanceCorrelation', slow: true, compare: true, cellTable: 'optional', preview: false, results: false, citations: ['dcor', 'dcorT'],
    methods: 'the bias-corrected square of distance correlation ({dcor}) with its t-test of independence ({dcorT})',
  },
  dcorTStat: {
    label: 'dCor t statistic', shortLabel: 'dCor t', cliLabel: null, description: 'statistic of the distance correlation t-test', column: 'dcor_t_stat', format: 'statistic',
    fisherZ: false, axis: null, recipeChoice: 'distanceCorrelation', slow: true, compare: false, cellTable: 'none', preview: false, results: false, citations: ['dcorT'], methods: null,
  },
  dcorDf: {
    label: 'dCor t degrees of freedom', shortLabel: 'dCor df', cliLabel: null, description: 'degrees of freedom of the distance correlation t-test', column: 'dcor_df', format: 'statistic',
    fisherZ: false, axis: null, recipeChoice: 'distanceCorrelation', slow: true, compare: false, cellTable: 'none', preview: false, results: false, citations: ['dcorT'], methods: null,
  },
  dcorPValue: {
    label: 'dCor test p', shortLabel: 'dCor p', cliLabel: 'dCor p', description: 'one-sided p-value of the distance correlation t-test', column: 'dcor_p_value', format: 'pValue',
    fisherZ: false, axis: [0, 1], recipeChoice: 'distanceCorrelation', slow: true, compare: false, cellTable: 'optional', preview: false, results: false, citations: ['dcorT'], methods: null,
  },
  mandersM1: {
    label: "Manders' M1", shortLabel: 'M1', cliLabel: 'M1', description: 'share of channel 1 intensity where channel 2 is above its threshold', column: 'manders_m1', format: 'coefficient',
    fisherZ: false, axis: [0, 1], recipeChoice: 'manders', slow: false, compare: true, cellTable: 'default', preview: true, results: true, citations: ['manders'], methods: MANDERS_METHODS,
  },
  mandersM2: {
    label: "Manders' M2", shortLabel: 'M2', cliLabel: 'M2', description: 'share of channel 2 intensity where channel 1 is above its threshold', column: 'manders_m2', format: 'coefficient',
    fisherZ: false, axis: [0, 1], recipeChoice: 'manders', slow: false, compare: true, cellTable: 'default', preview: true, results: true, citations: ['manders'], methods: MANDERS_METHODS,
  },
  overlap: {
    label: 'Overlap coefficient', shortLabel: 'overlap', cliLabel: 'overlap', description: "Manders' overlap Σxy / √(Σx² Σy²)", column: 'overlap', format: 'coefficient',
    fisherZ: false, axis: [0, 1], recipeChoice: 'overlap', slow: false, compare: true, cellTable: 'optional', preview: true, results: false, citations: ['manders'],
    methods: "Manders' overlap coefficient ({manders})",
  },
  k1: {
    label: 'k1', shortLabel: 'k1', cliLabel: 'k1', description: 'Σxy / Σx²', column: 'k1', format: 'coefficient',
    fisherZ: false, axis: null, recipeChoice: 'overlap', slow: false, compare: true, cellTable: 'optional', preview: true, results: false, citations: ['manders'], methods: K_METHODS,
  },
  k2: {
    label: 'k2', shortLabel: 'k2', cliLabel: 'k2', description: 'Σxy / Σy²', column: 'k2', format: 'coefficient',
    fisherZ: false, axis: null, recipeChoice: 'overlap', slow: false, compare: true, cellTable: 'optional', preview: true, results: false, citations: ['manders'], methods: K_METHODS,
  },
  icq: {
    label: 'ICQ', shortLabel: 'ICQ', cliLabel: 'ICQ', description: "Li's intensity correlation quotient", column: 'icq', format: 'coefficient',
    fisherZ: false, axis: [-0.5, 0.5], recipeChoice: 'icq', slow: false, compare: true, cellTable: 'optional', preview: true, results: true, citations: ['li'],
    methods: "Li's intensity correlation quotient ICQ ({li})",
  },
  micE: {
    label: 'MICe', shortLabel: 'MICe', cliLabel: 'MICe', description: 'maximal information coefficient, equicharacteristic-matrix estimator (Reshef et al. 2016), in [0, 1]', column: 'mic_e', format: 'coefficient',
    fisherZ: false, axis: [0, 1], recipeChoice: 'mic', slow: false, compare: true, cellTable: 'optional', preview: false, results: false, citations: ['micE', 'mic'],
    methods: MIC_METHODS,
  },
  ticE: {
    label: 'TICe', shortLabel: 'TICe', cliLabel: 'TICe', description: 'total information coefficient: the sum of the equicharacteristic matrix (Reshef et al. 2016)', column: 'tic_e', format: 'statistic',
    fisherZ: false, axis: null, recipeChoice: 'mic', slow: false, compare: true, cellTable: 'optional', preview: false, results: false, citations: ['micE', 'mic'],
    methods: MIC_METHODS,
  },
  randomizationP: {
    label: 'Randomization p', shortLabel: 'rand. p', cliLabel: null, description: "p-value of the block-scrambling test of Pearson's r (Costes et al. 2004)", column: 'randomization_p', format: 'pValue',
    fisherZ: false, axis: [0, 1], recipeChoice: null, slow: false, compare: false, cellTable: 'optional', preview: false, results: false, citations: ['costes'], methods: null,
  },
  randomizationFractionBelow: {
    label: 'Randomization fraction below', shortLabel: 'rand. below', cliLabel: null, description: "share of scrambles whose r is below the observed r", column: 'randomization_fraction_below', format: 'fraction',
    fisherZ: false, axis: [0, 1], recipeChoice: null, slow: false, compare: false, cellTable: 'none', preview: false, results: false, citations: ['costes'], methods: null,
  },
  spotCount1: {
    ...OBJ, label: 'Spots in channel 1', shortLabel: 'spots 1', description: 'spots detected in channel 1 within the cell', column: 'spot_count1', format: 'count',
    axis: null, compare: true, citations: ['lindeberg'], methods: SPOT_METHODS,
  },
  spotCount2: {
    ...OBJ, label: 'Spots in channel 2', shortLabel: 'spots 2', description: 'spots detected in channel 2 within the cell', column: 'spot_count2', format: 'count',
    axis: null, compare: true, citations: ['lindeberg'], methods: SPOT_METHODS,
  },
  spotPaired1: {
    ...OBJ, label: 'Channel-1 spots paired within d', shortLabel: 'paired 1', description: 'share of channel-1 spots whose nearest channel-2 spot is within the pair distance d', column: 'spot_paired1', format: 'fraction',
    axis: [0, 1], compare: true, citations: ['lachmanovich'], methods: PAIR_METHODS,
  },
  spotPaired2: {
    ...OBJ, label: 'Channel-2 spots paired within d', shortLabel: 'paired 2', description: 'share of channel-2 spots whose nearest channel-1 spot is within the pair distance d', column: 'spot_paired2', format: 'fraction',
    axis: [0, 1], compare: true, citations: ['lachmanovich'], methods: PAIR_METHODS,
  },
  spotMutualPairs: {
    ...OBJ, label: 'Mutual spot pairs', shortLabel: 'mutual', description: 'pairs of spots that are each other’s nearest neighbour and within d', column: 'spot_mutual_pairs', format: 'count',
    axis: null, compare: true, citations: ['lachmanovich'], methods: PAIR_METHODS,
  },
  spotMedianNearest1: {
    ...OBJ, label: 'Median nearest distance 1→2 (px)', shortLabel: 'nn 1→2', description: 'median distance from a channel-1 spot to its nearest channel-2 spot, pixels', column: 'spot_median_nearest1', format: 'statistic',
    axis: null, compare: true, citations: ['lachmanovich'], methods: PAIR_METHODS,
  },
  spotMedianNearest2: {
    ...OBJ, label: 'Median nearest distance 2→1 (px)', shortLabel: 'nn 2→1', description: 'median distance from a channel-2 spot to its nearest channel-1 spot, pixels', column: 'spot_median_nearest2', format: 'statistic',
    axis: null, compare: true, citations: ['lachmanovich'], methods: PAIR_METHODS,
  },
  spotPValue: {
    ...OBJ, label: 'Chance placement p', shortLabel: 'chance p', description: 'p-value of the channel-1 paired fraction against random placement of the channel-2 spots in the cell', column: 'spot_p_value', format: 'pValue',
    axis: [0, 1], compare: false, citations: ['besagDiggle'], methods: CHANCE_METHODS,
  },
  spotChanceFraction1: {
    ...OBJ, label: 'Channel-1 spots paired by chance', shortLabel: 'chance 1', description: 'mean channel-1 paired fraction over the random placements', column: 'spot_chance_fraction1', format: 'fraction',
    axis: [0, 1], compare: true, citations: ['besagDiggle'], methods: CHANCE_METHODS,
  },
} as const satisfies Record<MeasureKey, CoefficientSpec>;

export interface CoefficientEntry extends CoefficientSpec {
  key: CoefficientKey;
}

/** Every entry, in the engine's key order. */
export const COEFFICIENTS: readonly CoefficientEntry[] = MEASURE_KEYS.map((key) => ({ key, ...(SPECS[key] as CoefficientSpec) }));

/** Every key, as a readonly tuple (usable with z.enum). */
export const COEFFICIENT_KEYS = MEASURE_KEYS;

const BY_KEY = new Map<string, CoefficientEntry>(COEFFICIENTS.map((c) => [c.key, c]));

/** The entry of a key; throws for an unknown key, quoting it. */
export function byKey(key: string): CoefficientEntry {
  const e = BY_KEY.get(key);
  if (!e) throw new RangeError(`unknown coefficient ${JSON.stringify(key)}`);
  return e;
}

export const isCoefficientKey = (key: string): key is CoefficientKey => BY_KEY.has(key);

type Specs = typeof SPECS;
/** Keys of the entries whose `field` equals `value`, as a typed tuple in registry order. */
type KeysWhere<F extends keyof CoefficientSpec, V> = { [K in MeasureKey]: Specs[K][F] extends V ? K : never }[MeasureKey];

function keysWhere<K extends CoefficientKey>(pred: (c: CoefficientEntry) => boolean): readonly [K, ...K[]] {
  return COEFFICIENTS.filter(pred).map((c) => c.key) as unknown as readonly [K, ...K[]];
}

/** Compare and report choices. */
export const COMPARE_KEYS = keysWhere<KeysWhere<'compare', true>>((c) => c.compare);
/** Preselected when freezing a report: the Compare choices the Cell table shows by default. */
export const REPORT_DEFAULT_KEYS: readonly CoefficientKey[] = COEFFICIENTS.filter((c) => c.compare && c.cellTable === 'default').map((c) => c.key);
/** Averaged through Fisher's z: exactly the correlation coefficients r, ρ and τ-b. */
export const FISHER_Z_KEYS = keysWhere<KeysWhere<'fisherZ', true>>((c) => c.fisherZ);
/** Columns of the Cell table (and its filters, sorting and CSV export). */
export const CELL_TABLE_KEYS = keysWhere<KeysWhere<'cellTable', 'default' | 'optional'>>((c) => c.cellTable !== 'none');
/** Shown in the workspace's live preview. */
export const PREVIEW_KEYS = keysWhere<KeysWhere<'preview', true>>((c) => c.preview);
/** Shown in the workspace's per-cell results table. */
export const RESULTS_KEYS = keysWhere<KeysWhere<'results', true>>((c) => c.results);

export const fisherZKeys = (): readonly CoefficientKey[] => FISHER_Z_KEYS;
export const usesFisherZ = (key: string) => BY_KEY.get(key)?.fisherZ === true;

/** Label of a key (the full name). */
export const labelOf = (key: string) => byKey(key).label;

/** A value of a measure as tables show it (shared/format.ts). */
export const formatCoefficient = (key: CoefficientKey, v: number | null | undefined) => formatNumber(v, byKey(key).format);

/** Registry keys whose engine result type is `number | null` (checked at compile time: the keys index RegionResult). */
export type CoefficientValues = { [K in CoefficientKey]: K extends keyof RegionResult ? RegionResult[K] : number | null };

/** The registry entries filled by the objects section of a recipe (objects.ts `objectMeasures`). */
export const OBJECT_KEYS: readonly ObjectMeasureKey[] = OBJECT_MEASURE_KEYS;
export const isObjectKey = (key: string): key is ObjectMeasureKey => (OBJECT_MEASURE_KEYS as readonly string[]).includes(key);
/** The measures of the pixel engine (`measureRegion`), i.e. every key but the object measures. */
export type PixelMeasureKey = Exclude<CoefficientKey, ObjectMeasureKey>;
export const isPixelEntry = (c: CoefficientEntry): c is CoefficientEntry & { key: PixelMeasureKey } => !isObjectKey(c.key);
