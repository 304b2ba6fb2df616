/**
 * Bulk intake by sample sheet: checking a sheet against a study before any file is sent (stores nothing), then
 * applying it (creating its conditions and coverslips) to get the uploads, which go to POST /api/coverslips/:id/fields.
 */
import { Router } from 'express';
import type { AppContext } from '../context.js';
import { requireUser } from '../auth/session.js';
import { requireStudy, studyPermissions } from '../auth/policy.js';
import { parse } from '../http/errors.js';
import { idParam } from '../http/params.js';
import { SampleSheetApplyResponse, SampleSheetCheckRequest, SampleSheetCheckResponse } from '../../shared/schemas/sample-sheet.js';
import { applySampleSheet, checkSampleSheet } from '../images/sample-sheet.js';

export default function sampleSheetRoutes(ctx: AppContext) {
  const r = Router();
  r.post('/studies/:id/sample-sheet/check', requireUser, (req, res) => {
    const id = idParam(req, 'id');
    const study = requireStudy(ctx.db, req.user, id, 'edit_images');
    const body = parse(SampleSheetCheckRequest, req.body);
    const p = studyPermissions(ctx.db, req.user!, study);
    const out = checkSampleSheet(ctx.db, id, { createConditions: p.has('edit_structure'), createCoverslips: p.has('add_coverslips') }, body);
    res.json(SampleSheetCheckResponse.parse(out));
  });
  r.post('/studies/:id/sample-sheet/apply', requireUser, (req, res) => {
    const id = idParam(req, 'id');
    const study = requireStudy(ctx.db, req.user, id, 'edit_images');
    const body = parse(SampleSheetCheckRequest, req.body);
    const p = studyPermissions(ctx.db, req.user!, study);
    const out = applySampleSheet(ctx.db, id, req.user!.id, { createConditions: p.has('edit_structure'), createCoverslips: p.has('add_coverslips') }, body, ctx.env.MAX_FILES_PER_REQUEST);
    res.json(SampleSheetApplyResponse.parse(out));
  });
  return r;
}
