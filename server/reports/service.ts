/** Report rows → API shapes, shared by the signed-in routes and the share-link routes. */
import type { Response } from 'express';
import { eq, inArray } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { reports, users } from '../db/schema.js';
import { notFoundAsked } from '../auth/policy.js';
import { ReportSnapshot, type CsvTable, type ReportDetail, type ReportSummary } from '../../shared/schemas/reports.js';
import { reportCsv } from './csv.js';

export type ReportRow = typeof reports.$inferSelect;

export function loadReport(ctx: AppContext, id: number): ReportRow {
  const r = Number.isInteger(id) ? ctx.db.select().from(reports).where(eq(reports.id, id)).get() : undefined;
  if (!r) throw notFoundAsked({ what: 'report', id });
  return r;
}

function names(ctx: AppContext, ids: (number | null)[]) {
  const want = [...new Set(ids.filter((x): x is number => x !== null))];
  const m = new Map<number, string>();
  if (want.length) for (const u of ctx.db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, want)).all()) m.set(u.id, u.name);
  return m;
}

export function toSummaries(ctx: AppContext, rows: ReportRow[]): ReportSummary[] {
  const n = names(ctx, rows.map((r) => r.createdBy));
  return rows.map((r) => {
    const s = r.snapshot as Partial<ReportSnapshot>;
    return {
      id: r.id,
      studyId: r.studyId,
      title: r.title,
      notes: r.notes,
      coefficients: (s.coefficients ?? []) as string[],
      createdAt: r.createdAt,
      createdBy: r.createdBy ? (n.get(r.createdBy) ?? null) : null,
      cells: (s.cells ?? []).filter((c) => !c.excluded && c.runId !== null).length,
      anyProvisional: !!s.anyProvisional,
    };
  });
}

export function toDetail(ctx: AppContext, row: ReportRow, canShare: boolean): ReportDetail {
  return { ...toSummaries(ctx, [row])[0], snapshot: ReportSnapshot.parse(row.snapshot), canShare };
}

export function sendCsv(res: Response, row: ReportRow, table: CsvTable) {
  const slug = row.title.replace(/[^a-z0-9]+/gi, '-').replace(/^-|-$/g, '').toLowerCase().slice(0, 60) || 'report';
  res.setHeader('content-type', 'text/csv; charset=utf-8');
  res.setHeader('content-disposition', `attachment; filename="report-${row.id}-${slug}-${table}.csv"`);
  res.send(reportCsv(ReportSnapshot.parse(row.snapshot), table));
}
