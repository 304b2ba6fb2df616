/**
 * Facility usage (facility managers): per lab and UTC calendar month, studies created, fields uploaded and the
 * bytes they brought, runs started and their wall-clock time, and active people (audit events in the lab's
 * studies, run starters). GET /api/usage?from=YYYY-MM&to=YYYY-MM (default: the last 6 months) and
 * GET /api/usage.csv. Schemas: shared/schemas/usage.ts. Every month of every lab is a row, zeros included.
 */
import { Router, type Request } from 'express';
import type { AppContext } from '../context.js';
import { requireUser } from '../auth/session.js';
import { requireCan } from '../auth/policy.js';
import { parse } from '../http/errors.js';
import { csvLine } from '../compare/csv.js';
import { USAGE_CSV_COLUMNS, UsageQuery, monthsBetween, type UsageResponse, type UsageRow } from '../../shared/schemas/usage.js';

const month = (d: Date) => d.toISOString().slice(0, 7);

export default function usageRoutes(ctx: AppContext) {
  const r = Router();
  const sqlite = ctx.db.$client;

  function usage(req: Request): UsageResponse {
    requireCan(req.user, 'read_usage');
    const q = parse(UsageQuery, req.query);
    const now = new Date();
    const to = q.to ?? (q.from && q.from > month(now) ? q.from : month(now));
    const from = q.from ?? month(new Date(Date.UTC(Number(to.slice(0, 4)), Number(to.slice(5, 7)) - 6, 1)));
    const months = monthsBetween(from, to);
    const range = { from, to };
    const key = (labId: number, m: string) => `${labId} ${m}`;
    const labs = sqlite.prepare('SELECT id, name FROM labs ORDER BY name, id').all() as { id: number; name: string }[];
    const rows = new Map<string, UsageRow>();
    for (const l of labs) for (const m of months) rows.set(key(l.id, m), { labId: l.id, lab: l.name, month: m, studies: 0, fields: 0, storedBytes: 0, runs: 0, computeSeconds: 0, activeUsers: 0 });
    const add = (sql: string, apply: (row: UsageRow, x: Record<string, number>) => void) => {
      for (const x of sqlite.prepare(sql).all(range) as Record<string, number & string>[]) {
        const row = rows.get(key(x.labId, x.month as unknown as string));
        if (row) apply(row, x);
      }
    };
    const inRange = (col: string) => `substr(${col}, 1, 7) BETWEEN @from AND @to`;
    add(`SELECT lab_id AS labId, substr(created_at, 1, 7) AS month, count(*) AS n FROM studies WHERE ${inRange('created_at')} GROUP BY 1, 2`, (row, x) => (row.studies = x.n));
    add(
      `SELECT s.lab_id AS labId, substr(f.created_at, 1, 7) AS month, count(*) AS n, sum(f.file_size) AS bytes
       FROM fields f JOIN coverslips cs ON cs.id = f.coverslip_id JOIN conditions cd ON cd.id = cs.condition_id JOIN studies s ON s.id = cd.study_id
       WHERE f.status = 'ready' AND ${inRange('f.created_at')} GROUP BY 1, 2`,
      (row, x) => ((row.fields = x.n), (row.storedBytes = x.bytes)),
    );
    add(
      `SELECT s.lab_id AS labId, substr(r.created_at, 1, 7) AS month, count(*) AS n,
         coalesce(sum(CASE WHEN r.started_at IS NOT NULL AND r.finished_at IS NOT NULL THEN (julianday(r.finished_at) - julianday(r.started_at)) * 86400 END), 0) AS secs
       FROM runs r JOIN studies s ON s.id = r.study_id WHERE ${inRange('r.created_at')} GROUP BY 1, 2`,
      (row, x) => ((row.runs = x.n), (row.computeSeconds = Math.round(x.secs * 1000) / 1000)),
    );
    add(
      `SELECT labId, month, count(DISTINCT actor) AS n FROM (
         SELECT s.lab_id AS labId, substr(a.at, 1, 7) AS month, a.actor_id AS actor FROM audit_events a JOIN studies s ON s.id = a.study_id WHERE a.actor_id IS NOT NULL AND ${inRange('a.at')}
         UNION ALL
         SELECT s.lab_id, substr(r.created_at, 1, 7), r.started_by FROM runs r JOIN studies s ON s.id = r.study_id WHERE r.started_by IS NOT NULL AND ${inRange('r.created_at')}
       ) GROUP BY 1, 2`,
      (row, x) => (row.activeUsers = x.n),
    );
    return { from, to, rows: [...rows.values()] };
  }

  r.get('/usage', requireUser, (req, res) => {
    res.json(usage(req));
  });

  r.get('/usage.csv', requireUser, (req, res) => {
    const u = usage(req);
    res.setHeader('content-type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('content-disposition', `attachment; filename="syntopy-usage-${u.from}-to-${u.to}.csv"`);
    res.end(csvLine([...USAGE_CSV_COLUMNS]) + u.rows.map((row) => csvLine(USAGE_CSV_COLUMNS.map((c) => row[c]))).join(''));
  });
  return r;
}
