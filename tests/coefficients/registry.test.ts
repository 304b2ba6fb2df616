/**
 * The coefficient registry (shared/coefficients.ts) is the one roster: it matches the engine's result keys both
 * ways, names a real measurements column for every entry, and every list shown on a screen or written to a file
 * is the registry's.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getTableColumns } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { measurements } from '../../server/db/schema.js';
import { measureObjects, measureRegion, objectMeasures, MEASURE_KEYS } from '../../shared/analysis/index.js';
import { CELL_TABLE_KEYS, COEFFICIENT_CITATIONS, COEFFICIENT_KEYS, COEFFICIENTS, COMPARE_KEYS, FISHER_Z_KEYS, PREVIEW_KEYS, RECIPE_CHOICES, REPORT_DEFAULT_KEYS, byKey } from '../../shared/coefficients.js';
import { COLUMN_LABELS, DEFAULT_VISIBLE_COLUMNS, EXPORT_COLUMNS, GridRow, NUMERIC_COLUMNS } from '../../shared/schemas/cell-table.js';
import { COMPARE_COEFFICIENTS, CompareQuery } from '../../shared/schemas/compare.js';
import { REPORT_COEFFICIENTS } from '../../shared/schemas/reports.js';
import { COEFFICIENTS as RECIPE_COEFFICIENTS } from '../../shared/schemas/recipes.js';
import { formatTable } from '../../server/cli/analyze.js';
import { PREVIEW_COEFFICIENTS } from '../../src/features/workspace/components/LivePreview';
import { syntheticPair } from '../runs/helpers.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t?.close());

describe('coefficient registry', () => {
  it('has exactly one entry per numeric per-cell result of the engine, in engine order (both ways)', () => {
    expect(COEFFICIENTS.map((c) => c.key)).toEqual([...MEASURE_KEYS]);
    expect(COEFFICIENT_KEYS).toEqual(MEASURE_KEYS);
    const [a, b] = syntheticPair(32, 32, 5);
    // the pixel engine's result and the object measures of the same region (objects.ts)
    const r = { ...measureRegion(a, b, null, { width: 32, height: 32, randomization: { count: 5 } }), ...objectMeasures(measureObjects(a, b, 32, 32, null, { placements: 5 })) };
    // every numeric key of a real result (the count of scrambles is provenance, not a per-cell measure)
    const numeric = Object.entries(r)
      .filter(([k, v]) => (typeof v === 'number' || v === null) && k !== 'randomizationCount')
      .map(([k]) => k)
      .sort();
    expect(numeric).toEqual([...COEFFICIENT_KEYS].sort());
    for (const k of COEFFICIENT_KEYS) expect(r[k] === null || Number.isFinite(r[k]), k).toBe(true);
  });

  it('every entry names its column of the measurements table, and the migrated database has it', () => {
    const cols = getTableColumns(measurements) as Record<string, { name: string }>;
    const inDb = new Set((t.ctx.db.$client.prepare('PRAGMA table_info(measurements)').all() as { name: string }[]).map((c) => c.name));
    for (const c of COEFFICIENTS) {
      expect(cols[c.key]?.name, c.key).toBe(c.column);
      expect(inDb.has(c.column), c.column).toBe(true);
    }
    expect(new Set(COEFFICIENTS.map((c) => c.column)).size).toBe(COEFFICIENTS.length);
  });

  it("averages exactly r, ρ and τ-b through Fisher's z", () => {
    expect([...FISHER_Z_KEYS]).toEqual(['pearson', 'spearman', 'kendallTauB']);
    for (const k of FISHER_Z_KEYS) expect(byKey(k).axis).toEqual([-1, 1]);
  });

  it('labels, short labels and terminal labels are unique; axes are ordered', () => {
    for (const field of ['label', 'shortLabel'] as const) expect(new Set(COEFFICIENTS.map((c) => c[field])).size, field).toBe(COEFFICIENTS.length);
    const cli = COEFFICIENTS.map((c) => c.cliLabel).filter((x) => x !== null);
    expect(new Set(cli).size).toBe(cli.length);
    for (const c of COEFFICIENTS) if (c.axis) expect(c.axis[0], c.key).toBeLessThan(c.axis[1]);
    expect(() => byKey('nonsense')).toThrow(/"nonsense"/);
  });

  it('cites a registered paper wherever a methods phrase cites one, and names a recipe choice that exists', () => {
    for (const c of COEFFICIENTS) {
      for (const k of c.citations) expect(COEFFICIENT_CITATIONS[k], `${c.key}: ${k}`).toBeDefined();
      for (const [, k] of (c.methods ?? '').matchAll(/\{(\w+)\}/g)) expect(c.citations as readonly string[], `${c.key}: {${k}}`).toContain(k);
      if (c.recipeChoice !== null) expect(RECIPE_CHOICES).toContain(c.recipeChoice);
    }
    // every recipe choice fills at least one measure
    for (const r of RECIPE_COEFFICIENTS) expect(COEFFICIENTS.some((c) => c.recipeChoice === r), r).toBe(true);
  });

  it('the Cell table columns, their labels, defaults, rows and CSV header are the registry lists', () => {
    const cellTable = COEFFICIENTS.filter((c) => c.cellTable !== 'none').map((c) => c.key);
    expect([...CELL_TABLE_KEYS]).toEqual(cellTable);
    expect(NUMERIC_COLUMNS.slice(0, cellTable.length)).toEqual(cellTable);
    for (const k of cellTable) expect(COLUMN_LABELS[k]).toBe(byKey(k).label);
    expect(DEFAULT_VISIBLE_COLUMNS.filter((k) => (COEFFICIENT_KEYS as readonly string[]).includes(k))).toEqual(COEFFICIENTS.filter((c) => c.cellTable === 'default').map((c) => c.key));
    for (const k of cellTable) expect(Object.keys(GridRow.shape)).toContain(k);
    // the CSV export's default columns carry the registry's Cell table measures in registry order
    const csv = EXPORT_COLUMNS.filter((k) => (COEFFICIENT_KEYS as readonly string[]).includes(k));
    expect(csv).toEqual(cellTable);
  });

  it('Compare and reports offer exactly the registry entries marked for comparison, and refuse others quoting the list', () => {
    const want = COEFFICIENTS.filter((c) => c.compare).map((c) => c.key);
    expect([...COMPARE_KEYS]).toEqual(want);
    expect([...COMPARE_COEFFICIENTS]).toEqual(want);
    expect([...REPORT_COEFFICIENTS]).toEqual(want);
    const bad = CompareQuery.safeParse({ coefficient: 'dcorTStat' });
    expect(bad.success).toBe(false);
    expect(bad.error!.issues[0].message).toContain(want.join(', '));
  });

  it('the live preview and the analyze table show the registry entries with their labels', () => {
    expect(PREVIEW_COEFFICIENTS.map((c) => c.key)).toEqual([...PREVIEW_KEYS]);
    expect(PREVIEW_COEFFICIENTS.map((c) => c.label)).toEqual(PREVIEW_KEYS.map((k) => byKey(k).label));
    const regionResult = Object.fromEntries(COEFFICIENT_KEYS.map((k) => [k, k === 'pixels' ? 10 : -0.00001]));
    const text = formatTable({ engineVersion: 'x', width: 4, height: 4, slices: 1, depth: 1, z: { from: 1, to: 1, projection: null }, thresholds: { method: 'none', ch1: 0, ch2: 0 }, regions: [{ label: 1, ...regionResult, randomizationCount: 0 } as never] });
    const header = text.split('\n')[1].trim().split(/\s{2,}/);
    expect(header).toEqual(['region', ...COEFFICIENTS.filter((c) => c.cliLabel !== null).map((c) => c.cliLabel)]);
    expect(text).not.toMatch(/-0\.0000/);
  });

  it('a new report preselects the Cell table default measures that Compare offers (r, ρ, M1, M2)', () => {
    expect([...REPORT_DEFAULT_KEYS]).toEqual(['pearson', 'spearman', 'mandersM1', 'mandersM2']);
    for (const k of REPORT_DEFAULT_KEYS) expect(COMPARE_KEYS).toContain(k);
  });
});
