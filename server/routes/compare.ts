/**
 * Comparisons of a study's conditions for one coefficient, and their CSV exports. Shapes:
 * shared/schemas/compare.ts; computed by server/compare/compute.ts.
 *
 *   GET    /api/studies/:studyId/compare                     Comparison
 *   GET    /api/studies/:studyId/compare/coverslips.csv      per-coverslip table of a comparison
 *   GET    /api/studies/:studyId/compare/cells.csv           per-cell values of a comparison
 */
import { Router, type Request } from 'express';
import type { AppContext } from '../context.js';
import { requireUser } from '../auth/session.js';
import { requireStudy, type Study } from '../auth/policy.js';
import { parse } from '../http/errors.js';
import { idParam } from '../http/params.js';
import { CompareQuery, type ComparisonHead } from '../../shared/schemas/compare.js';
import { cachedComparison } from '../compare/compute.js';
import { pointList } from '../compare/comparison.js';
import { csvLine, fileSafe } from '../compare/csv.js';

export default function compareRoutes(ctx: AppContext) {
  const r = Router();

  const compareFor = async (req: Request) => {
    const studyId = idParam(req, 'studyId');
    const study: Study = requireStudy(ctx.db, req.user, studyId, 'read');
    const q = parse(CompareQuery, req.query);
    return { study, comparison: await cachedComparison(ctx, studyId, q) };
  };

  // computed in a thread and cached per data version (server/compare/compute.ts); the JSON is written there too
  r.get('/studies/:studyId/compare', requireUser, async (req, res) => {
    const { json } = (await compareFor(req)).comparison;
    res.type('application/json').setHeader('content-length', json.reduce((n, part) => n + part.byteLength, 0));
    for (const part of json) res.write(Buffer.from(part.buffer, part.byteOffset, part.byteLength));
    res.end();
  });

  /** Every export row names where its numbers come from and on which scale they were averaged and tested. */
  const sourceColumns = ['sourceKind', 'runId', 'recipeId', 'recipeName', 'recipeVersion', 'scale'];
  const sourceValues = (c: ComparisonHead) => [c.source.kind, c.source.runId, c.source.recipeId, c.source.recipeName, c.source.recipeVersion, c.scale];
  const sourceFile = (c: ComparisonHead) => (c.source.runId !== null ? `run-${c.source.runId}` : c.source.recipeId !== null ? `${fileSafe(c.source.recipeName ?? 'recipe')}-v${c.source.recipeVersion}` : 'unmeasured');

  r.get('/studies/:studyId/compare/coverslips.csv', requireUser, async (req, res) => {
    const { study, comparison } = await compareFor(req);
    const c = comparison.head;
    const condName = new Map(c.conditions.map((x) => [x.id, x.name]));
    res.setHeader('content-type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('content-disposition', `attachment; filename="${fileSafe(study.name)}-${c.coefficient}-${sourceFile(c)}-coverslips.csv"`);
    res.end(
      csvLine(['condition', 'conditionId', 'coverslip', 'replicate', 'coverslipId', 'cells', `mean_${c.coefficient}`, `mean_z_${c.coefficient}`, `median_${c.coefficient}`, `sd_${c.coefficient}`, 'averaging', ...sourceColumns]) +
        c.coverslips.map((s) => csvLine([condName.get(s.conditionId), s.conditionId, s.name, s.replicate, s.id, s.nCells, s.mean, s.meanZ, s.median, s.sd, c.averaging, ...sourceValues(c)])).join(''),
    );
  });

  r.get('/studies/:studyId/compare/cells.csv', requireUser, async (req, res) => {
    const { study, comparison } = await compareFor(req);
    const c = comparison.head;
    const points = pointList(comparison.points);
    const condName = new Map(c.conditions.map((x) => [x.id, x.name]));
    const slip = new Map(c.coverslips.map((x) => [x.id, x]));
    res.setHeader('content-type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('content-disposition', `attachment; filename="${fileSafe(study.name)}-${c.coefficient}-${sourceFile(c)}-cells.csv"`);
    res.end(
      csvLine(['condition', 'conditionId', 'coverslip', 'coverslipId', 'replicate', 'fieldId', 'cellId', c.coefficient, ...sourceColumns]) +
        points.map((p) => csvLine([condName.get(p.conditionId), p.conditionId, slip.get(p.coverslipId)?.name, p.coverslipId, slip.get(p.coverslipId)?.replicate, p.fieldId, p.cellId, p.value, ...sourceValues(c)])).join(''),
    );
  });

  return r;
}
