/**
 * Report test data: two conditions × three coverslips in study A, one stored two-channel field per coverslip
 * (the runs work's TIFF helper, tests/runs/helpers.ts), four cells per field, a recipe version, and measurement
 * rows inserted directly as a run would write them (so the report tests do not depend on the run queue).
 */
import { eq } from 'drizzle-orm';
import type { AppContext } from '../../server/context.js';
import { cells, conditions, coverslips, measurements, recipes, runFields, runs } from '../../server/db/schema.js';
import { RecipeSettings, type RecipeSettingsInput } from '../../shared/schemas/recipes.js';
import type { MeasurementProvenance } from '../../shared/schemas/runs.js';
import type { World } from '../utils/app.js';
import { addField, gridCells, syntheticPair } from '../runs/helpers.js';

export interface ReportWorld {
  conditionIds: [number, number];
  coverslipIds: number[];
  fieldIds: number[];
  /** cell ids per coverslip (same order as coverslipIds) */
  cellIds: number[][];
  recipeId: number;
  settings: RecipeSettings;
}

export const RECIPE_SETTINGS: RecipeSettingsInput = {
  background: { method: 'constant', ch1: 97, ch2: 83 },
  saturation: 'exclude',
  threshold: { method: 'costes', regression: 'orthogonal', belowSet: 'both', stoppingRule: { kind: 'r_at_most', r: 0.05 } },
  randomization: { enabled: true, count: 321, blockSize: { kind: 'pixels', pixels: 5 } },
  z: { mode: 'range', from: 1, to: 3 },
  minCellPixels: 37,
  coefficients: ['pearson', 'spearman', 'manders', 'icq'],
  seed: 4242,
};

export async function buildReportWorld(ctx: AppContext, w: World, settings: RecipeSettingsInput = RECIPE_SETTINGS): Promise<ReportWorld> {
  const db = ctx.db;
  db.update(conditions).set({ name: 'control' }).where(eq(conditions.id, w.conditionA)).run();
  const treated = db.insert(conditions).values({ studyId: w.studyA, name: 'treated', position: 1 }).returning().get().id;
  const slipIds = [w.coverslipA];
  slipIds.push(db.insert(coverslips).values({ conditionId: w.conditionA, name: 'CS2', replicate: 2, position: 1 }).returning().get().id);
  slipIds.push(db.insert(coverslips).values({ conditionId: w.conditionA, name: 'CS3', replicate: 3, position: 2 }).returning().get().id);
  for (let i = 1; i <= 3; i++) slipIds.push(db.insert(coverslips).values({ conditionId: treated, name: `T${i}`, replicate: i, position: i - 1 }).returning().get().id);
  const fieldIds: number[] = [];
  const cellIds: number[][] = [];
  for (const [i, slip] of slipIds.entries()) {
    const [a, b] = syntheticPair(48, 48, 100 + i);
    const f = await addField(ctx, slip, { name: `field ${i + 1}`, width: 48, height: 48, ch1: a, ch2: b, cells: gridCells(48, 48, 4) });
    fieldIds.push(f.fieldId);
    cellIds.push(f.cellIds);
  }
  const parsed = RecipeSettings.parse(settings);
  const recipe = db.insert(recipes).values({ name: 'Facility standard', version: 2, status: 'approved', settings: parsed as unknown as Record<string, unknown> }).returning().get();
  db.update(recipes).set({ familyId: recipe.id }).where(eq(recipes.id, recipe.id)).run();
  return { conditionIds: [w.conditionA, treated], coverslipIds: slipIds, fieldIds, cellIds, recipeId: recipe.id, settings: parsed };
}

/**
 * A finished run with one measurement per cell of the world: value(coverslipIndex, cellIndex) gives Pearson's r;
 * the other coefficients are derived from it (they only need to be distinct and in range).
 */
export function insertRun(ctx: AppContext, studyId: number, rw: ReportWorld, value: (slip: number, cell: number) => number, opts: { provisional?: boolean; engine?: string } = {}) {
  const run = ctx.db
    .insert(runs)
    .values({ studyId, recipeId: rw.recipeId, scopeKind: 'study', scopeId: studyId, status: 'done', provisional: !!opts.provisional, seed: rw.settings.seed, engineVersion: opts.engine ?? 'syntopy-engine 1.0.0', fieldsTotal: rw.fieldIds.length, fieldsDone: rw.fieldIds.length, finishedAt: new Date().toISOString() })
    .returning()
    .get();
  // one finished row per field, as a real run leaves them (the run's per-field routes look fields up here)
  for (const fieldId of new Set(rw.fieldIds)) ctx.db.insert(runFields).values({ runId: run.id, fieldId, status: 'done', attempts: 1, finishedAt: new Date().toISOString() }).run();
  for (const [s, ids] of rw.cellIds.entries())
    for (const [c, cellId] of ids.entries()) {
      const r = value(s, c);
      ctx.db
        .insert(measurements)
        .values({
          runId: run.id,
          cellId,
          fieldId: rw.fieldIds[s],
          pixels: 100 + c,
          pearson: r,
          spearman: r * 0.9,
          kendallTauB: r * 0.7,
          distanceCorrelation: Math.abs(r),
          mandersM1: (r + 1) / 2,
          mandersM2: (r + 1) / 3,
          overlap: 0.5,
          k1: 1,
          k2: 1,
          icq: r / 2,
          threshold1: 200 + s,
          threshold2: 150 + c,
          thresholdMethod: 'costes',
          background1: 97,
          background2: 83,
          saturatedFraction1: 0,
          saturatedFraction2: 0,
          provisional: !!opts.provisional,
          provenance: {
            recipeId: rw.recipeId,
            recipeName: 'Facility standard',
            recipeVersion: 2,
            recipeStatus: opts.provisional ? 'draft' : 'approved',
            engineVersion: opts.engine ?? 'syntopy-engine 1.0.0',
            inputSha256: ['1'.repeat(64), '2'.repeat(64)],
            channels: [0, 1],
            thresholds: { method: 'costes', ch1: 200 + s, ch2: 150 + c },
            background: [97, 83],
            seed: rw.settings.seed,
            z: 'range 1-3',
            randomizationBlock: null,
            randomizationCount: 0,
            note: null,
            computedAt: '2026-12-01T10:00:00.000Z',
          } satisfies MeasurementProvenance,
        })
        .run();
    }
  return run.id;
}

export function excludeCell(ctx: AppContext, cellId: number, reason: string, by: number) {
  ctx.db.update(cells).set({ excluded: true, exclusionReason: reason, excludedBy: by, excludedAt: new Date().toISOString() }).where(eq(cells.id, cellId)).run();
}
