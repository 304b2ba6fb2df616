/**
 * Shared set-up of the security tests: the route list of the real Express app (walked from its router
 * stack), and a lab-A world with one of everything (field with stored TIFF, cells, approved recipe, finished
 * run with measurements, report, share link, outbox message) so every route has a real id to aim at.
 * Reuses the report fixtures (tests/reports/fixtures.ts) for fields, cells and the run.
 */
import { eq } from 'drizzle-orm';
import type { TestApp } from '../utils/app.js';
import { calibrations, instruments, outgoingMail, shareLinks } from '../../server/db/schema.js';
import { buildReportWorld, insertRun } from '../reports/fixtures.js';

export interface ApiRoute {
  method: string;
  path: string;
  /** 'GET /api/studies/:studyId' */
  key: string;
}

interface Layer {
  route?: { path: string | string[]; methods: Record<string, boolean> };
  handle?: { stack?: Layer[] };
  rawPath?: string;
}

/** Every route of an Express 5 app (app.router.stack; nested routers via layer.handle.stack), prefixed with mount paths. */
export function listRoutes(app: unknown): ApiRoute[] {
  const out: ApiRoute[] = [];
  const walk = (stack: Layer[], prefix: string) => {
    for (const l of stack) {
      if (l.route) {
        for (const p of Array.isArray(l.route.path) ? l.route.path : [l.route.path]) {
          if (typeof p !== 'string') continue; // regular-expression routes (the client fallback) are not API routes
          for (const [m, on] of Object.entries(l.route.methods)) {
            if (!on || m === '_all') continue;
            const path = (prefix + p).replace(/\/+/g, '/');
            out.push({ method: m.toUpperCase(), path, key: `${m.toUpperCase()} ${path}` });
          }
        }
      } else if (l.handle?.stack) {
        const mount = typeof l.rawPath === 'string' && l.rawPath !== '/' ? l.rawPath : '';
        walk(l.handle.stack, prefix + mount);
      }
    }
  };
  walk((app as { router: { stack: Layer[] } }).router.stack, '');
  return out;
}

export const apiRoutes = (app: unknown) => listRoutes(app).filter((r) => r.path.startsWith('/api/'));

export interface LabAEntities {
  studyId: number;
  conditionId: number;
  coverslipId: number;
  fieldId: number;
  cellId: number;
  recipeId: number;
  instrumentId: number;
  calibrationId: number;
  runId: number;
  reportId: number;
  shareId: number;
  shareToken: string;
  mailId: number;
  labId: number;
  userId: number;
  /** a personal API token of the biologist (lab A) with read scope, its id and secret */
  apiTokenId: number;
  apiToken: string;
}

/** Fields, cells, a finished run, a report and a share link in study A (lab A). */
export async function buildLabA(t: TestApp): Promise<LabAEntities> {
  const rw = await buildReportWorld(t.ctx, t.world);
  const runId = insertRun(t.ctx, t.world.studyA, rw, (s, c) => 0.2 + 0.05 * s + 0.01 * c);
  const bio = await t.login('biologist');
  const rep = await bio.post(`/api/studies/${t.world.studyA}/reports`).send({ title: 'Security report', coefficients: ['pearson'] });
  if (rep.status !== 201) throw new Error(`report: ${rep.status} ${JSON.stringify(rep.body)}`);
  const sh = await bio.post(`/api/reports/${rep.body.id}/shares`).send({ emails: ['reader@example.org'], message: 'for the security tests' });
  if (sh.status !== 201) throw new Error(`share: ${sh.status} ${JSON.stringify(sh.body)}`);
  const link = t.ctx.db.select().from(shareLinks).where(eq(shareLinks.reportId, rep.body.id)).get()!;
  const mail = t.ctx.db.select().from(outgoingMail).where(eq(outgoingMail.to, 'reader@example.org')).get()!;
  const tok = await bio.post('/api/tokens').send({ name: 'security tests', scope: 'read', expiresInDays: 1 });
  if (tok.status !== 201) throw new Error(`token: ${tok.status} ${JSON.stringify(tok.body)}`);
  const instrument = t.ctx.db.insert(instruments).values({ name: 'Security scope', channel1: 'GFP', channel2: 'mCherry' }).returning().get();
  const token = /\/shared\/([A-Za-z0-9_-]+\.[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+)/.exec(mail.text)![1];
  return {
    studyId: t.world.studyA,
    conditionId: rw.conditionIds[0],
    coverslipId: rw.coverslipIds[0],
    fieldId: rw.fieldIds[0],
    cellId: rw.cellIds[0][0],
    recipeId: rw.recipeId,
    instrumentId: instrument.id,
    calibrationId: t.ctx.db.insert(calibrations).values({ instrumentId: instrument.id, version: 1, status: 'draft', dx: 0.5, dy: -0.25 }).returning().get().id,
    runId,
    reportId: rep.body.id,
    shareId: link.id,
    shareToken: token,
    mailId: mail.id,
    labId: t.world.labA,
    userId: t.world.users.collaborator.id,
    apiTokenId: tok.body.id,
    apiToken: tok.body.token,
  };
}

/** Fills a route path with lab-A ids (":id" is read from the segment before it). */
export function fillPath(path: string, e: LabAEntities, tokens: { share?: string; invite?: string } = {}): string {
  const segs = path.split('/');
  return segs
    .map((s, i) => {
      if (!s.startsWith(':')) return s;
      const name = s.slice(1);
      const before = segs[i - 1];
      switch (name) {
        case 'studyId':
          return String(e.studyId);
        case 'cellId':
          return String(e.cellId);
        case 'fieldId':
          return String(e.fieldId);
        case 'userId':
          return String(e.userId);
        case 'otherId':
          return String(e.recipeId);
        case 'table':
          return 'cells';
        case 'token':
          return before === 'shared' ? (tokens.share ?? e.shareToken) : (tokens.invite ?? 'not-a-real-invitation-token');
        case 'id': {
          const byResource: Record<string, number> = {
            studies: e.studyId,
            conditions: e.conditionId,
            coverslips: e.coverslipId,
            fields: e.fieldId,
            cells: e.cellId,
            recipes: e.recipeId,
            instruments: e.instrumentId,
            calibrations: e.calibrationId,
            runs: e.runId,
            reports: e.reportId,
            shares: e.shareId,
            users: e.userId,
            labs: e.labId,
            outbox: e.mailId,
            tokens: e.apiTokenId,
          };
          const v = byResource[before];
          if (v === undefined) throw new Error(`fillPath: no lab-A entity for ":id" after "${before}" in ${path}; add it to tests/security/world.ts`);
          return String(v);
        }
        default:
          throw new Error(`fillPath: unknown parameter ${s} in ${path}; add it to tests/security/world.ts`);
      }
    })
    .join('/');
}
