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
import { CompareQuery, type Comparison } from '../../shared/schemas/compare.js';
import { computeComparison } from '../compare/compute.js';
import { csvLine, fileSafe } from '../compare/csv.js';

export default function compareRoutes(ctx: AppContext) {
  const r = Router();

  const compareFor = async (req: Request) => {
    const studyId = idParam(req, 'studyId');
    const study: Study = requireStudy(ctx.db, req.user, studyId, 'read');
    const q = parse(CompareQuery, req.query);
    return { study, comparison: await computeComparison(ctx, studyId, q) };
  };

  r.get('/studies/:studyId/compare', requireUser, async (req, res) => {
    res.json((await compareFor(req)).comparison);
  });

  /** Every export row names where its numbers come from and on which scale they were averaged and tested. */
  const sourceColumns = ['sourceKind', 'runId', 'recipeId', 'recipeName', 'recipeVersion', 'scale'];
  const sourceValues = (c: Comparison) => [c.source.kind, c.source.runId, c.source.recipeId, c.source.recipeName, c.source.recipeVersion, c.scale];
  const sourceFile = (c: Comparison) => (c.source.runId !== null ? `run-${c.source.runId}` : c.source.recipeId !== null ? `${fileSafe(c.source.recipeName ?? 'recipe')}-v${c.source.recipeVersion}` : 'unmeasured');

  r.get('/studies/:studyId/compare/coverslips.csv', requireUser, async (req, res) => {
    const { study, comparison: c } = await compareFor(req);
    const condName = new Map(c.conditions.map((x) => [x.id, x.name]));
    res.setHeader('content-type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('content-disposition', `attachment; filename="${fileSafe(study.name)}-${c.coefficient}-${sourceFile(c)}-coverslips.csv"`);
    res.end(
      csvLine(['condition', 'conditionId', 'coverslip', 'replicate', 'coverslipId', 'cells', `mean_${c.coefficient}`, `mean_z_${c.coefficient}`, `median_${c.coefficient}`, `sd_${c.coefficient}`, 'averaging', ...sourceColumns]) +
        c.coverslips.map((s) => csvLine([condName.get(s.conditionId), s.conditionId, s.name, s.replicate, s.id, s.nCells, s.mean, s.meanZ, s.median, s.sd, c.averaging, ...sourceValues(c)])).join(''),
    );
  });

  r.get('/studies/:studyId/compare/cells.csv', requireUser, async (req, res) => {
    const { study, comparison: c } = await compareFor(req);
    const condName = new Map(c.conditions.map((x) => [x.id, x.name]));
    const slip = new Map(c.coverslips.map((x) => [x.id, x]));
    res.setHeader('content-type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('content-disposition', `attachment; filename="${fileSafe(study.name)}-${c.coefficient}-${sourceFile(c)}-cells.csv"`);
    res.end(
      csvLine(['condition', 'conditionId', 'coverslip', 'coverslipId', 'replicate', 'fieldId', 'cellId', c.coefficient, ...sourceColumns]) +
        c.points.map((p) => csvLine([condName.get(p.conditionId), p.conditionId, slip.get(p.coverslipId)?.name, p.coverslipId, slip.get(p.coverslipId)?.replicate, p.fieldId, p.cellId, p.value, ...sourceValues(c)])).join(''),
    );
  });

  return r;
}
