/**
 * Freezing a report: everything the report page shows is computed now and stored in `reports.snapshot`, so
 * later runs, exclusions, recipe versions or deleted fields never change a report (a newer one can be made).
 *
 * Which measurement a cell contributes: its latest measurement (highest run id) among the study's runs, or
 * among runs of `recipeId` when one is given. Excluded cells are listed (with reasons) but left out of every
 * summary and test. Coverslips are the unit of replication (Lord et al. 2020, J. Cell Biol. 219:e202001064,
 * doi:10.1083/jcb.202001064): coverslip means first (Fisher's z for correlation coefficients), then tests on
 * coverslip means.
 */
import { and, eq, inArray, isNull } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { cells, conditions, coverslips, fields, measurements, recipes, runs, studies, users } from '../db/schema.js';
import { badRequest, notFound } from '../http/errors.js';
import type { CellScatter, Composite, ConditionSummary, CoverslipSummary, ReportCoefficient, ReportSnapshot, SnapshotCell, StatisticRow } from '../../shared/schemas/reports.js';
import type { Comparison } from '../../shared/schemas/compare.js';
import { cellIndices, originOfRow } from '../../shared/schemas/cells.js';
import { MeasurementProvenance } from '../../shared/schemas/runs.js';
import { extrudeIndices } from '../../shared/analysis/index.js';
import { CAUTIONS, methodsParagraph } from '../../shared/reports/methods.js';
import { median, sd } from '../../shared/stats/index.js';
import { computeComparison } from '../compare/compute.js';
import { loadFieldPixels, type FieldPixels } from '../images/intake.js';
import { renderPreview } from '../images/preview.js';

/** Long side of the composites frozen into a report, in pixels. */
export const COMPOSITE_MAX_PX = 512;

export interface SnapshotOptions {
  coefficients: ReportCoefficient[];
  runId?: number;
  recipeId?: number;
  conditionIds?: number[];
  scatterCellId?: number;
  /** the clock (tests) */
  now?: Date;
}

const finite = (v: number | null | undefined): v is number => typeof v === 'number' && Number.isFinite(v);
const nn = (v: number | null | undefined) => (finite(v) ? v : null);

export async function buildSnapshot(ctx: AppContext, studyId: number, opts: SnapshotOptions): Promise<ReportSnapshot> {
  const db = ctx.db;
  const study = db.select().from(studies).where(eq(studies.id, studyId)).get();
  if (!study) throw notFound(`no study with id ${studyId}`);
  const coefs = [...new Set(opts.coefficients)];

  // ---- structure
  let conds = db.select().from(conditions).where(eq(conditions.studyId, studyId)).all().sort((a, b) => a.position - b.position || a.id - b.id);
  if (opts.conditionIds) {
    const unknown = opts.conditionIds.filter((id) => !conds.some((c) => c.id === id));
    if (unknown.length) throw badRequest(`conditionIds: ${unknown.join(', ')} ${unknown.length === 1 ? 'is not a condition' : 'are not conditions'} of this study`);
    conds = conds.filter((c) => opts.conditionIds!.includes(c.id));
  }
  const condIds = conds.map((c) => c.id);
  const slips = condIds.length ? db.select().from(coverslips).where(inArray(coverslips.conditionId, condIds)).all().sort((a, b) => a.position - b.position || a.replicate - b.replicate || a.id - b.id) : [];
  const slipById = new Map(slips.map((s) => [s.id, s]));
  const condById = new Map(conds.map((c) => [c.id, c]));
  const fieldRows = slips.length
    ? db.select().from(fields).where(and(inArray(fields.coverslipId, slips.map((s) => s.id)), eq(fields.status, 'ready'))).all().sort((a, b) => a.id - b.id)
    : [];
  const fieldById = new Map(fieldRows.map((f) => [f.id, f]));
  const cellRows = fieldRows.length
    ? db.select().from(cells).where(and(inArray(cells.fieldId, fieldRows.map((f) => f.id)), eq(cells.role, 'cell'), isNull(cells.deletedAt))).all().sort((a, b) => a.fieldId - b.fieldId || a.id - b.id)
    : [];
  if (opts.recipeId !== undefined && !db.select({ id: recipes.id }).from(recipes).where(eq(recipes.id, opts.recipeId)).get())
    throw badRequest(`recipeId: no recipe version with id ${opts.recipeId}`);

  // ---- which measurements: one run; or each cell's latest with one recipe version (default: the recipe of the
  // study's latest run that has measurements, the rule of the Compare screen, so both show the same numbers)
  const studyRuns = db.select().from(runs).where(eq(runs.studyId, studyId)).all();
  const runById = new Map(studyRuns.map((r) => [r.id, r]));
  if (opts.runId !== undefined && !runById.has(opts.runId)) throw badRequest(`runId: no run ${opts.runId} in this study`);
  let recipeId = opts.recipeId;
  if (opts.runId === undefined && recipeId === undefined) {
    const withRows = new Set(
      studyRuns.length ? db.selectDistinct({ runId: measurements.runId }).from(measurements).where(inArray(measurements.runId, studyRuns.map((r) => r.id))).all().map((x) => x.runId) : [],
    );
    recipeId = studyRuns.filter((r) => withRows.has(r.id)).sort((a, b) => b.id - a.id)[0]?.recipeId;
  }
  const eligibleRunIds = studyRuns.filter((r) => (opts.runId !== undefined ? r.id === opts.runId : r.recipeId === recipeId)).map((r) => r.id);
  const latest = new Map<number, typeof measurements.$inferSelect>();
  if (eligibleRunIds.length && cellRows.length) {
    const cellIdSet = new Set(cellRows.map((c) => c.id));
    const rows = db.select().from(measurements).where(inArray(measurements.runId, eligibleRunIds)).all();
    for (const m of rows) {
      if (!cellIdSet.has(m.cellId)) continue;
      const prev = latest.get(m.cellId);
      if (!prev || m.runId > prev.runId) latest.set(m.cellId, m);
    }
  }

  const snapCells: SnapshotCell[] = [];
  for (const c of cellRows) {
    const f = fieldById.get(c.fieldId)!;
    const slip = slipById.get(f.coverslipId)!;
    const m = latest.get(c.id);
    const values: Record<string, number | null> = {};
    for (const k of coefs) values[k] = m ? nn(m[k]) : null;
    snapCells.push({
      cellId: c.id,
      name: c.name,
      fieldId: f.id,
      coverslipId: slip.id,
      conditionId: slip.conditionId,
      excluded: c.excluded,
      exclusionReason: c.excluded ? (c.exclusionReason ?? '') : null,
      runId: m?.runId ?? null,
      pixels: m?.pixels ?? null,
      values,
      threshold1: nn(m?.threshold1),
      threshold2: nn(m?.threshold2),
      thresholdMethod: m?.thresholdMethod ?? null,
      background1: nn(m?.background1),
      background2: nn(m?.background2),
      saturatedFraction1: nn(m?.saturatedFraction1),
      saturatedFraction2: nn(m?.saturatedFraction2),
      randomizationP: nn(m?.randomizationP),
      origin: originOfRow(c.origin, c.source),
    });
  }
  const used = snapCells.filter((c) => !c.excluded && c.runId !== null);

  // ---- recipes and runs actually used
  const usedRunIds = [...new Set(used.map((c) => c.runId!))].sort((a, b) => a - b);
  const provisionalByRun = new Map<number, boolean>();
  const zByRun = new Map<number, string | null>();
  const engineByRun = new Map<number, string | null>();
  for (const m of latest.values()) {
    if (m.provisional) provisionalByRun.set(m.runId, true);
    if (!zByRun.has(m.runId)) {
      const p = m.provenance ?? {};
      const z = (p as Record<string, unknown>).z ?? (p as Record<string, unknown>).zHandling ?? null;
      zByRun.set(m.runId, z === null || z === undefined ? null : typeof z === 'object' ? JSON.stringify(z) : String(z));
      const e = (p as Record<string, unknown>).engineVersion;
      engineByRun.set(m.runId, typeof e === 'string' ? e : null);
    }
  }
  const snapRuns = usedRunIds.map((id) => {
    const r = runById.get(id)!;
    return {
      id,
      recipeId: r.recipeId,
      status: r.status,
      provisional: r.provisional || !!provisionalByRun.get(id),
      seed: r.seed,
      engineVersion: r.engineVersion ?? engineByRun.get(id) ?? null,
      finishedAt: r.finishedAt,
      zHandling: zByRun.get(id) ?? null,
    };
  });
  const recipeIds = [...new Set(snapRuns.map((r) => r.recipeId))];
  const recipeRows = recipeIds.length ? db.select().from(recipes).where(inArray(recipes.id, recipeIds)).all().sort((a, b) => a.id - b.id) : [];
  const snapRecipes = recipeRows.map((r) => {
    const rr = snapRuns.filter((x) => x.recipeId === r.id);
    return {
      id: r.id,
      familyId: r.familyId,
      name: r.name,
      version: r.version,
      status: r.status,
      settings: structuredClone(r.settings ?? {}),
      provisional: rr.some((x) => x.provisional),
      runIds: rr.map((x) => x.id),
    };
  });

  // ---- conditions, coverslips
  const snapConds = conds.map((c) => {
    const cs = slips.filter((s) => s.conditionId === c.id);
    const cc = snapCells.filter((x) => x.conditionId === c.id);
    return {
      id: c.id,
      name: c.name,
      coverslips: cs.map((s) => ({
        id: s.id,
        name: s.name,
        replicate: s.replicate,
        fields: fieldRows.filter((f) => f.coverslipId === s.id).length,
        cellsIncluded: cc.filter((x) => x.coverslipId === s.id && !x.excluded && x.runId !== null).length,
        cellsExcluded: cc.filter((x) => x.coverslipId === s.id && x.excluded).length,
      })),
      cellsIncluded: cc.filter((x) => !x.excluded && x.runId !== null).length,
      cellsExcluded: cc.filter((x) => x.excluded).length,
      coverslipsUsed: new Set(cc.filter((x) => !x.excluded && x.runId !== null).map((x) => x.coverslipId)).size,
    };
  });

  // ---- exclusions with reasons
  const excluders = new Map<number, string>();
  const exIds = [...new Set(cellRows.filter((c) => c.excluded && c.excludedBy).map((c) => c.excludedBy!))];
  if (exIds.length) for (const u of db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, exIds)).all()) excluders.set(u.id, u.name);
  const exclusions = cellRows
    .filter((c) => c.excluded)
    .map((c) => {
      const f = fieldById.get(c.fieldId)!;
      const s = slipById.get(f.coverslipId)!;
      return {
        cellId: c.id,
        cellName: c.name,
        fieldName: f.name,
        coverslipName: s.name,
        conditionName: condById.get(s.conditionId)!.name,
        reason: c.exclusionReason ?? '',
        excludedBy: c.excludedBy ? (excluders.get(c.excludedBy) ?? null) : null,
        excludedAt: c.excludedAt,
      };
    });

  // ---- the comparison of each coefficient (server/compare/compute.ts, the numbers of the Compare page): its
  // coverslip and condition summaries and tests are the report's; the full result is frozen beside them
  const comparisons: Record<string, Comparison> = {};
  const statistics: StatisticRow[] = [];
  const coverslipSummaries: CoverslipSummary[] = [];
  const conditionSummaries: ConditionSummary[] = [];
  for (const k of coefs) {
    const cmp = await computeComparison(ctx, studyId, {
      coefficient: k,
      ...(opts.runId !== undefined ? { runId: opts.runId } : recipeId !== undefined ? { recipeId } : {}),
      ...(opts.conditionIds ? { conditionIds: opts.conditionIds } : {}),
    });
    comparisons[k] = cmp;
    statistics.push(statisticRow(k, cmp));
    for (const c of cmp.conditions) {
      const slipsOf = cmp.coverslips.filter((x) => x.conditionId === c.id && x.nCells > 0);
      for (const x of slipsOf) coverslipSummaries.push({ coefficient: k, conditionId: c.id, coverslipId: x.id, coverslipName: x.name, n: x.nCells, mean: x.mean, median: x.median });
      const vals = cmp.points.filter((x) => x.conditionId === c.id).map((x) => x.value);
      const slipMeans = slipsOf.map((x) => x.mean).filter(finite);
      conditionSummaries.push({
        coefficient: k,
        conditionId: c.id,
        conditionName: c.name,
        cells: vals.length,
        coverslips: slipMeans.length,
        mean: c.mean,
        sd: slipMeans.length >= 2 ? nn(sd(slipMeans)) : null,
        median: vals.length ? nn(median(vals)) : null,
        min: vals.length ? Math.min(...vals) : null,
        max: vals.length ? Math.max(...vals) : null,
      });
    }
  }

  // ---- representative composites (one field per condition: the one with most included cells)
  const composites: Composite[] = [];
  for (const c of snapConds) {
    const counts = new Map<number, number>();
    for (const x of used) if (x.conditionId === c.id) counts.set(x.fieldId, (counts.get(x.fieldId) ?? 0) + 1);
    const best = [...counts.entries()].sort((a, b) => b[1] - a[1] || a[0] - b[0])[0];
    const fieldId = best?.[0] ?? fieldRows.find((f) => slipById.get(f.coverslipId)?.conditionId === c.id)?.id;
    if (fieldId === undefined) continue;
    const f = fieldById.get(fieldId)!;
    const rendered = await renderPreview(ctx, f, { view: 'composite', max: COMPOSITE_MAX_PX });
    composites.push({
      fieldId: f.id,
      fieldName: f.name,
      conditionId: c.id,
      coverslipName: slipById.get(f.coverslipId)!.name,
      width: f.width,
      height: f.height,
      png: `data:image/png;base64,${rendered.png.toString('base64')}`,
      ranges: { lo1: rendered.ranges[0].lo, hi1: rendered.ranges[0].hi, lo2: rendered.ranges[1].lo, hi2: rendered.ranges[1].hi },
      outlines: cellRows.filter((x) => x.fieldId === f.id).map((x) => ({ cellId: x.id, name: x.name, excluded: x.excluded, geometry: structuredClone(x.geometry) as Record<string, unknown> })),
    });
  }

  // ---- the scatter of one chosen cell
  let scatterCell = opts.scatterCellId !== undefined ? snapCells.find((x) => x.cellId === opts.scatterCellId) : undefined;
  if (opts.scatterCellId !== undefined && !scatterCell) throw badRequest(`scatterCellId: cell ${opts.scatterCellId} is not a measured cell of this report`);
  if (!scatterCell && used.length) {
    // default: a typical cell of the first representative field (value of the first coefficient nearest its condition's median)
    const k = coefs[0];
    const inField = used.filter((x) => x.fieldId === composites[0]?.fieldId && x.values[k] !== null);
    const condVals = used.filter((x) => x.conditionId === inField[0]?.conditionId).map((x) => x.values[k]).filter(finite);
    const mid = condVals.length ? median(condVals) : 0;
    scatterCell = inField.sort((a, b) => Math.abs((a.values[k] as number) - mid) - Math.abs((b.values[k] as number) - mid) || a.cellId - b.cellId)[0] ?? used[0];
  }
  // the scatter of every measured cell of the representative fields (at most MAX_SCATTERS), so a reader can pick one
  const zOpt = zForPixels(snapRecipes[0]?.settings);
  const pixelCache = new Map<number, Promise<FieldPixels>>();
  const pixelsOf = (fieldId: number) => {
    let p = pixelCache.get(fieldId);
    if (!p) pixelCache.set(fieldId, (p = loadFieldPixels(ctx, fieldId, zOpt)));
    return p;
  };
  const scatterTargets = [
    ...(scatterCell ? [scatterCell] : []),
    ...used.filter((x) => x !== scatterCell && composites.some((p) => p.fieldId === x.fieldId)),
  ].slice(0, MAX_SCATTERS);
  const scatters: CellScatter[] = [];
  for (const sc of scatterTargets) {
    const px = await pixelsOf(sc.fieldId);
    scatters.push(cellScatter(px, fieldById.get(sc.fieldId)!, cellRows.find((x) => x.id === sc.cellId)!, sc));
  }
  const scatter = scatterCell ? (scatters.find((x) => x.cellId === scatterCell!.cellId) ?? null) : null;

  // ---- saturation
  const sat1 = fieldRows.map((f) => f.facts?.ch1?.saturatedFraction).filter(finite);
  const sat2 = fieldRows.map((f) => f.facts?.ch2?.saturatedFraction).filter(finite);
  const saturation = {
    maxFraction1: sat1.length ? Math.max(...sat1) : null,
    maxFraction2: sat2.length ? Math.max(...sat2) : null,
    fieldsWithSaturation: fieldRows.filter((f) => (f.facts?.ch1?.saturatedFraction ?? 0) > 0 || (f.facts?.ch2?.saturatedFraction ?? 0) > 0).length,
  };

  // ---- NaN pixels left out of the measured cells (float data; recorded per measurement since engine 1.0.1)
  let nanPixelCount = 0;
  let nanCells = 0;
  for (const c of used) {
    const k = (latest.get(c.cellId)?.provenance as { nanPixels?: unknown } | undefined)?.nanPixels;
    if (typeof k === 'number' && k > 0) (nanPixelCount += k), nanCells++;
  }

  // ---- calibrations applied to the measured cells (provenance.calibration since issue 15)
  const applied = new Map<number, NonNullable<ReportSnapshot['calibrations']>['applied'][number]>();
  let uncalibratedCells = 0;
  for (const c of used) {
    const m = latest.get(c.cellId);
    if (!m) continue;
    const cal = MeasurementProvenance.shape.calibration.safeParse((m.provenance as { calibration?: unknown } | undefined)?.calibration);
    if (cal.success && cal.data) {
      const a = applied.get(cal.data.id) ?? { id: cal.data.id, instrument: cal.data.instrument, version: cal.data.version, dx: cal.data.dx, dy: cal.data.dy, a21: cal.data.a21, a12: cal.data.a12, cells: 0 };
      a.cells++;
      applied.set(cal.data.id, a);
    } else uncalibratedCells++;
  }

  // ---- how the spots were found (provenance.objects; its `volume` since 2026-12-03, else the field's voxel size for rows measured in 3D)
  const spotGroups = new Map<string, NonNullable<ReportSnapshot['spots3d']>['groups'][number]>();
  let planeCells = 0;
  for (const c of used) {
    const p = latest.get(c.cellId)?.provenance as { z?: unknown; objects?: unknown } | undefined;
    const o = MeasurementProvenance.shape.objects.safeParse(p?.objects);
    if (!o.success || !o.data) continue;
    const in3d = o.data.volume !== undefined || (typeof p?.z === 'string' && p.z.startsWith('3D'));
    if (!in3d) {
      planeCells++;
      continue;
    }
    const f = fieldById.get(c.fieldId)!;
    const v = o.data.volume ?? (f.pixelSizeUm && f.zStepUm ? { pixelSizeUm: f.pixelSizeUm, zStepUm: f.zStepUm, zScale: f.zStepUm / f.pixelSizeUm, sigmaZ: (o.data.sigmaPx * f.pixelSizeUm) / f.zStepUm } : null);
    const vz = o.data.volume;
    const g = { sigmaPx: o.data.sigmaPx, sigmaZ: v?.sigmaZ ?? null, sigmaZFrom: vz?.sigmaZFrom ?? ('lateral' as const), psfDepthUm: vz?.psfDepthUm ?? null, zScale: v?.zScale ?? null, pixelSizeUm: v?.pixelSizeUm ?? null, zStepUm: v?.zStepUm ?? null, pairDistancePx: o.data.pairDistancePx, cells: 0 };
    const key = JSON.stringify({ ...g, cells: 0 });
    const have = spotGroups.get(key) ?? spotGroups.set(key, g).get(key)!;
    have.cells++;
  }

  const engineVersions = [...new Set(snapRuns.map((r) => r.engineVersion).filter((e): e is string => !!e))];
  const snap: ReportSnapshot = {
    schemaVersion: 1,
    createdAt: (opts.now ?? new Date()).toISOString(),
    study: { id: study.id, name: study.name, description: study.description },
    coefficients: coefs,
    engineVersions,
    anyProvisional: snapRuns.some((r) => r.provisional),
    recipes: snapRecipes,
    runs: snapRuns,
    conditions: snapConds,
    fields: fieldRows.map((f) => ({
      id: f.id,
      name: f.name,
      conditionId: slipById.get(f.coverslipId)!.conditionId,
      coverslipId: f.coverslipId,
      width: f.width,
      height: f.height,
      sizeZ: f.sizeZ,
      bitDepth: f.bitDepth,
      pixelSizeUm: nn(f.pixelSizeUm),
      zStepUm: nn(f.zStepUm),
      saturatedFraction1: nn(f.facts?.ch1?.saturatedFraction),
      saturatedFraction2: nn(f.facts?.ch2?.saturatedFraction),
      channelNames: [f.channelNames?.[0] ?? null, f.channelNames?.[1] ?? null],
    })),
    cells: snapCells,
    exclusions,
    coverslipSummaries,
    conditionSummaries,
    statistics,
    comparisons,
    composites,
    scatter,
    scatters,
    saturation,
    nanPixels: { pixels: nanPixelCount, cells: nanCells },
    calibrations: { applied: [...applied.values()], uncalibratedCells },
    spots3d: { groups: [...spotGroups.values()], planeCells },
    methods: '',
    cautions: [...CAUTIONS],
  };
  snap.methods = methodsParagraph(snap);
  return snap;
}

/**
 * The statistics row of one coefficient, read from its comparison: the first test on coverslip means (Welch's t
 * for two conditions, one-way ANOVA for more), the others beside it, the effect b − a with its bootstrap
 * interval when exactly two conditions are compared, and the comparison's plain sentence.
 */
export function statisticRow(k: ReportCoefficient, c: Comparison): StatisticRow {
  const [first, ...others] = c.tests;
  const effect = c.conditions.filter((x) => x.nCoverslips > 0).length === 2 && c.effects.length === 1 ? c.effects[0] : null;
  return {
    coefficient: k,
    test: first ? first.label : 'none',
    statistic: first?.statistic ?? null,
    df: first?.df[0] ?? null,
    p: first?.p ?? null,
    effect: effect?.estimate ?? null,
    effectLabel: effect ? `difference of coverslip means (${effect.label})` : null,
    ciLow: effect?.ci.lower ?? null,
    ciHigh: effect?.ci.upper ?? null,
    alsoTests: others.map((t) => ({ test: t.label, statistic: t.statistic, df: t.df[0] ?? null, p: t.p })),
    sentence: c.summary,
  };
}

const SCATTER_BINS = 64;

export const MAX_SCATTERS = 24;

/** z for the scatter: the recipe's slice, the maximum-intensity projection for 'mip' and 'range', every slice for 'volume' */
function zForPixels(settings: Record<string, unknown> | undefined): { z?: number | 'mip' | 'all' } {
  const z = settings?.z as { mode?: string; slice?: number } | undefined;
  if (z?.mode === 'volume') return { z: 'all' };
  if (z?.mode === 'slice' && typeof z.slice === 'number') return { z: z.slice };
  if (z?.mode === 'mip' || z?.mode === 'range') return { z: 'mip' };
  return {};
}

/** 2-D histogram of the cell's raw (ch1, ch2) pairs on [0, max] × [0, max], SCATTER_BINS per axis. */
function cellScatter(px: FieldPixels, f: typeof fields.$inferSelect, cell: typeof cells.$inferSelect, sc: SnapshotCell): CellScatter {
  const inPlane = cellIndices(cell.geometry, px.width, px.height);
  // a volume (every slice): the outline's pixels on each slice, as the run measured them
  const idx = px.depth > 1 ? extrudeIndices(inPlane, px.width * px.height, 0, px.depth - 1) : inPlane;
  let max1 = 0;
  let max2 = 0;
  // a pixel with NaN in either channel carries no intensity: not counted, not plotted
  const kept = idx.filter((i) => px.ch1[i] === px.ch1[i] && px.ch2[i] === px.ch2[i]);
  const n = kept.length;
  for (const i of kept) {
    if (px.ch1[i] > max1) max1 = px.ch1[i];
    if (px.ch2[i] > max2) max2 = px.ch2[i];
  }
  const counts = new Array<number>(SCATTER_BINS * SCATTER_BINS).fill(0);
  const b1 = max1 > 0 ? SCATTER_BINS / (max1 * (1 + 1e-9)) : 0;
  const b2 = max2 > 0 ? SCATTER_BINS / (max2 * (1 + 1e-9)) : 0;
  for (const i of kept) {
    const c = Math.min(SCATTER_BINS - 1, Math.max(0, Math.floor(px.ch1[i] * b1)));
    const r = Math.min(SCATTER_BINS - 1, Math.max(0, Math.floor(px.ch2[i] * b2)));
    counts[r * SCATTER_BINS + c]++;
  }
  return { cellId: cell.id, cellName: cell.name, fieldName: f.name, bins: SCATTER_BINS, max1, max2, counts, threshold1: sc.threshold1, threshold2: sc.threshold2, pixels: n };
}
