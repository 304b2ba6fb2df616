/**
 * The Cell table (review grid) of a study: one row per cell with its latest measurement from the chosen
 * source (one run, or the latest measurement per cell among the runs of one recipe), filters, sorting,
 * paging, column choice, and exclusions with reasons.
 */
import { z } from 'zod';
import { CELL_TABLE_KEYS, COEFFICIENTS, byKey, formatCoefficient, isCoefficientKey } from '../coefficients';
import { formatNumber } from '../format/number';
import { MEASUREMENT_INPUT_KEYS } from './runs';

/**
 * Numeric measurement columns: sortable, filterable by range, exportable. Keys are the API names: the registry's
 * Cell table measures (shared/coefficients.ts `cellTable`), then the recipe's per-cell inputs.
 */
export const NUMERIC_COLUMNS = [...CELL_TABLE_KEYS, ...MEASUREMENT_INPUT_KEYS] as const;
export type NumericColumn = (typeof NUMERIC_COLUMNS)[number];

/** Cell table columns shown until the user picks others: the registry's `cellTable: 'default'` plus the flags. */
export const DEFAULT_VISIBLE_COLUMNS: readonly string[] = ['condition', 'coverslip', 'field', 'cell', 'slices', ...COEFFICIENTS.filter((c) => c.cellTable === 'default').map((c) => c.key), 'saturated', 'provisional', 'excluded'];

/** Human labels (our words; trade terms kept as the field uses them); measures take the registry's label. */
export const COLUMN_LABELS: Record<string, string> = {
  condition: 'Condition',
  coverslip: 'Coverslip',
  field: 'Field',
  cell: 'Cell',
  slices: 'Slices',
  ...Object.fromEntries(CELL_TABLE_KEYS.map((k) => [k, byKey(k).label])),
  threshold1: 'Threshold ch1',
  threshold2: 'Threshold ch2',
  thresholdMethod: 'Threshold method',
  background1: 'Background ch1',
  background2: 'Background ch2',
  saturatedFraction1: 'Saturated ch1',
  saturatedFraction2: 'Saturated ch2',
  mean1: 'Mean ch1',
  mean2: 'Mean ch2',
  saturated: 'Saturation flag',
  provisional: 'Provisional',
  excluded: 'Excluded',
  exclusionReason: 'Exclusion reason',
  runId: 'Run',
};

/** How a numeric column is written in the table (shared/format/number.ts): measures by their registry format. */
export function formatColumn(k: NumericColumn, v: number | null): string {
  if (isCoefficientKey(k)) return formatCoefficient(k, v);
  return formatNumber(v, k.startsWith('saturatedFraction') ? 'fraction' : 'intensity');
}

export const SORT_KEYS = ['condition', 'coverslip', 'field', 'cell', 'excluded', 'provisional', 'saturated', ...NUMERIC_COLUMNS] as const;
export type SortKey = (typeof SORT_KEYS)[number];

/** Columns a CSV export may carry, in this order by default. */
export const EXPORT_COLUMNS = [
  'cellId',
  'conditionId',
  'condition',
  'coverslipId',
  'coverslip',
  'replicate',
  'fieldId',
  'field',
  'cell',
  ...NUMERIC_COLUMNS,
  'thresholdMethod',
  'saturated',
  'provisional',
  'excluded',
  'exclusionReason',
  'runId',
  'measurementId',
] as const;
export type ExportColumn = (typeof EXPORT_COLUMNS)[number];

/**
 * Most filters one Cell table / CSV request may carry: each becomes SQL terms, and hundreds of them exceed
 * SQLite's expression-depth limit (1000) — far beyond any screen's use (one range per column is all that
 * matters; a study's fields fit in one id list).
 */
export const MAX_RANGE_FILTERS = 20;
export const MAX_IDS_PER_FILTER = 500;

const idList = z
  .union([z.string(), z.array(z.string())])
  .transform((v, ctx) => {
    const parts = (Array.isArray(v) ? v : [v]).flatMap((s) => s.split(',')).filter((s) => s !== '');
    if (parts.length > MAX_IDS_PER_FILTER) {
      ctx.addIssue({ code: 'custom', message: `at most ${MAX_IDS_PER_FILTER} ids per filter, received ${parts.length}` });
      return z.NEVER;
    }
    const out: number[] = [];
    for (const p of parts) {
      if (!/^[1-9][0-9]{0,14}$/.test(p)) {
        ctx.addIssue({ code: 'custom', message: `expected positive integer ids, received ${JSON.stringify(p)}` });
        return z.NEVER;
      }
      out.push(Number(p));
    }
    return out;
  });

const NUM = /^-?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$/;

/** A value range filter "column:min:max" (either bound may be empty). */
export const RangeFilter = z.string().transform((s, ctx) => {
  const m = /^([A-Za-z0-9]+):([^:]*):([^:]*)$/.exec(s);
  if (!m || !(NUMERIC_COLUMNS as readonly string[]).includes(m[1])) {
    ctx.addIssue({ code: 'custom', message: `a range is "column:min:max" with a known numeric column, received ${JSON.stringify(s)}` });
    return z.NEVER;
  }
  const bound = (b: string) => {
    if (b === '') return null;
    if (!NUM.test(b)) {
      ctx.addIssue({ code: 'custom', message: `range bound must be a number, received ${JSON.stringify(b)}` });
      return undefined;
    }
    return Number(b);
  };
  const min = bound(m[2]);
  const max = bound(m[3]);
  if (min === undefined || max === undefined) return z.NEVER;
  return { column: m[1] as NumericColumn, min, max };
});
export type RangeFilter = z.infer<typeof RangeFilter>;

const tri = z.enum(['any', 'yes', 'no']).default('any');

/** Where the measurements come from: one run, or the latest per cell among a recipe's runs. */
export const SourceQuery = z.object({
  runId: z.coerce.number().int().positive().optional(),
  recipeId: z.coerce.number().int().positive().optional(),
});

export const GridFilters = SourceQuery.extend({
  conditionId: idList.optional(),
  coverslipId: idList.optional(),
  fieldId: idList.optional(),
  excluded: tri,
  saturated: tri,
  provisional: tri,
  measured: tri,
  range: z
    .union([z.string(), z.array(z.string())])
    .optional()
    .transform((v) => (v === undefined ? [] : Array.isArray(v) ? v : [v]))
    .pipe(z.array(RangeFilter).max(MAX_RANGE_FILTERS, { error: (iss) => `at most ${MAX_RANGE_FILTERS} range filters, received ${(iss.input as unknown[]).length}` })),
  /** cell name contains (plain text, matched literally) */
  q: z.string().max(200).optional(),
});
export type GridFilters = z.infer<typeof GridFilters>;

export const GridQuery = GridFilters.extend({
  page: z.coerce.number().int().min(0).max(1_000_000).default(0),
  pageSize: z.coerce.number().int().min(1).max(500).default(50),
  sort: z.enum(SORT_KEYS).default('condition'),
  dir: z.enum(['asc', 'desc']).default('asc'),
  /** keyset paging: the `nextCursor` of the previous page (same sort and direction); `page` is then not used */
  cursor: z.string().min(1).max(400).optional(),
});
export type GridQuery = z.infer<typeof GridQuery>;

export const CsvQuery = GridFilters.extend({
  sort: z.enum(SORT_KEYS).default('condition'),
  dir: z.enum(['asc', 'desc']).default('asc'),
  columns: z
    .string()
    .optional()
    .transform((v, ctx) => {
      if (!v) return [...EXPORT_COLUMNS];
      const cols = v.split(',');
      for (const c of cols) {
        if (!(EXPORT_COLUMNS as readonly string[]).includes(c)) {
          ctx.addIssue({ code: 'custom', message: `unknown export column ${JSON.stringify(c)}` });
          return z.NEVER;
        }
      }
      return cols as ExportColumn[];
    }),
});

const n = z.number().nullable();

export const GridRow = z.object({
  cellId: z.number().int(),
  cell: z.string(),
  /** on a z-stack the slices the cell covers, "from–to" (1-based, inclusive); null on a single-plane field. Its
   * measured `pixels` are then voxels. */
  slices: z.string().nullable().default(null),
  fieldId: z.number().int(),
  field: z.string(),
  coverslipId: z.number().int(),
  coverslip: z.string(),
  replicate: z.number().int(),
  conditionId: z.number().int(),
  condition: z.string(),
  measurementId: z.number().int().nullable(),
  runId: z.number().int().nullable(),
  ...Object.fromEntries(NUMERIC_COLUMNS.map((c) => [c, n])) as Record<NumericColumn, typeof n>,
  thresholdMethod: z.string().nullable(),
  saturated: z.boolean(),
  provisional: z.boolean(),
  excluded: z.boolean(),
  exclusionReason: z.string().nullable(),
  excludedAt: z.string().nullable(),
  excludedBy: z.string().nullable(),
});
export type GridRow = z.infer<typeof GridRow>;

export const SourceInfo = z.object({
  runId: z.number().int().nullable(),
  recipeId: z.number().int().nullable(),
  recipeName: z.string().nullable(),
  recipeVersion: z.number().int().nullable(),
});
export type SourceInfo = z.infer<typeof SourceInfo>;

export const GridResponse = z.object({
  rows: z.array(GridRow),
  total: z.number().int(),
  /** the page number the first row falls on (with a cursor: its position divided by the page size) */
  page: z.number().int(),
  pageSize: z.number().int(),
  /** pass as `cursor` for the page after this one (keyset paging); null on the last page */
  nextCursor: z.string().nullable(),
  source: SourceInfo,
  /** whether the signed-in user may exclude / restore cells here */
  canExclude: z.boolean(),
});
export type GridResponse = z.infer<typeof GridResponse>;

export const MeasurementSources = z.object({
  recipes: z.array(
    z.object({
      recipeId: z.number().int(),
      name: z.string(),
      version: z.number().int(),
      runs: z.array(z.object({ id: z.number().int(), status: z.string(), createdAt: z.string(), provisional: z.boolean(), measurements: z.number().int() })),
    }),
  ),
  /** the recipe used when none is chosen: that of the most recent run with measurements */
  defaultRecipeId: z.number().int().nullable(),
});
export type MeasurementSources = z.infer<typeof MeasurementSources>;

export const ExcludeRequest = z.object({
  reason: z.string().trim().min(3, 'give a reason of at least 3 characters').max(500, 'keep the reason under 500 characters'),
});
export const RestoreRequest = z.object({ reason: z.string().trim().max(500).optional() });

export const ExclusionState = z.object({
  cellId: z.number().int(),
  excluded: z.boolean(),
  exclusionReason: z.string().nullable(),
  excludedAt: z.string().nullable(),
  excludedBy: z.string().nullable(),
});
export type ExclusionState = z.infer<typeof ExclusionState>;

export const ExclusionHistory = z.object({
  events: z.array(
    z.object({ id: z.number().int(), at: z.string(), action: z.string(), actor: z.string().nullable(), reason: z.string().nullable() }),
  ),
});
export type ExclusionHistory = z.infer<typeof ExclusionHistory>;
