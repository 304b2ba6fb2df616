/**
 * Reports: frozen snapshots of a study's comparison (shared/schemas/reports.ts lists the routes).
 * Reading needs 'read' on the study; creating needs 'report'. Creation is audited in the same transaction.
 */
import { Router } from 'express';
import { desc, eq } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { auditEvents, reports } from '../db/schema.js';
import { parse } from '../http/errors.js';
import { requireStudy, studyPermissions } from '../auth/policy.js';
import { idParam } from '../http/params.js';
import { CreateReportRequest, CsvTable, ReportListResponse } from '../../shared/schemas/reports.js';
import { buildSnapshot } from '../reports/snapshot.js';
import { loadReport, sendCsv, toDetail, toSummaries } from '../reports/service.js';

export default function reportsRoutes(ctx: AppContext) {
  const r = Router();

  r.get('/studies/:studyId/reports', (req, res) => {
    const studyId = idParam(req, 'studyId');
    requireStudy(ctx.db, req.user, studyId, 'read');
    const rows = ctx.db.select().from(reports).where(eq(reports.studyId, studyId)).orderBy(desc(reports.id)).all();
    res.json(ReportListResponse.parse({ reports: toSummaries(ctx, rows) }));
  });

  r.post('/studies/:studyId/reports', async (req, res) => {
    const studyId = idParam(req, 'studyId');
    requireStudy(ctx.db, req.user, studyId, 'report');
    const body = CreateReportRequest.parse(req.body ?? {});
    const snapshot = await buildSnapshot(ctx, studyId, body);
    const row = ctx.db.transaction((tx) => {
      const row = tx
        .insert(reports)
        .values({ studyId, title: body.title, notes: body.notes, snapshot: snapshot as unknown as Record<string, unknown>, createdBy: req.user!.id, createdAt: snapshot.createdAt })
        .returning()
        .get();
      tx.insert(auditEvents)
        .values({
          actorId: req.user!.id,
          action: 'report.create',
          entity: 'report',
          entityId: row.id,
          studyId,
          details: { title: body.title, coefficients: body.coefficients, runIds: snapshot.runs.map((x) => x.id), cells: snapshot.cells.length },
        })
        .run();
      return row;
    });
    res.status(201).json(toDetail(ctx, row, true));
  });

  r.get('/reports/:id', (req, res) => {
    const row = loadReport(ctx, idParam(req, 'id'));
    const study = requireStudy(ctx.db, req.user, row.studyId, 'read', { what: 'report', id: row.id });
    res.json(toDetail(ctx, row, studyPermissions(ctx.db, req.user!, study).has('report')));
  });

  r.get('/reports/:id/csv/:table', (req, res) => {
    const row = loadReport(ctx, idParam(req, 'id'));
    requireStudy(ctx.db, req.user, row.studyId, 'read', { what: 'report', id: row.id });
    sendCsv(res, row, parse(CsvTable, req.params.table));
  });

  return r;
}
