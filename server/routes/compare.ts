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
import { CompareQuery } from '../../shared/schemas/compare.js';
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

  r.get('/studies/:studyId/compare/coverslips.csv', requireUser, async (req, res) => {
    const { study, comparison: c } = await compareFor(req);
    const condName = new Map(c.conditions.map((x) => [x.id, x.name]));
    res.setHeader('content-type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('content-disposition', `attachment; filename="${fileSafe(study.name)}-${c.coefficient}-coverslips.csv"`);
    res.end(
      csvLine(['condition', 'coverslip', 'replicate', 'coverslipId', 'cells', `mean_${c.coefficient}`, `median_${c.coefficient}`, `sd_${c.coefficient}`, 'averaging']) +
        c.coverslips.map((s) => csvLine([condName.get(s.conditionId), s.name, s.replicate, s.id, s.nCells, s.mean, s.median, s.sd, c.averaging])).join(''),
    );
  });

  r.get('/studies/:studyId/compare/cells.csv', requireUser, async (req, res) => {
    const { study, comparison: c } = await compareFor(req);
    const condName = new Map(c.conditions.map((x) => [x.id, x.name]));
    const slip = new Map(c.coverslips.map((x) => [x.id, x]));
    res.setHeader('content-type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('content-disposition', `attachment; filename="${fileSafe(study.name)}-${c.coefficient}-cells.csv"`);
    res.end(
      csvLine(['condition', 'coverslip', 'replicate', 'fieldId', 'cellId', c.coefficient]) +
        c.points.map((p) => csvLine([condName.get(p.conditionId), slip.get(p.coverslipId)?.name, slip.get(p.coverslipId)?.replicate, p.fieldId, p.cellId, p.value])).join(''),
    );
  });

  return r;
}
