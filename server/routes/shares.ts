/**
 * Share links (shared/schemas/shares.ts lists the routes). A biologist with 'report' on the study e-mails a
 * report to one or more addresses; each recipient gets a personal signed link (server/reports/tokens.ts).
 * Opening it needs no account and shows the read-only report; every opening is logged (share_openings:
 * when, ip, user agent; who = the link's recipient). Creating, revoking, resending and inviting are audited
 * in the same transaction as the change.
 */
import { Router, type Request } from 'express';
import { desc, eq, inArray, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { auditEvents, reports, shareLinks, shareOpenings, studies, studyMembers, users } from '../db/schema.js';
import { conflict, notFound, parse } from '../http/errors.js';
import { notFoundAsked, requireStudy } from '../auth/policy.js';
import { createInvitation, escapeHtml, publicOrigin, sendInvitationMail } from '../auth/invitations.js';
import { idParam } from '../http/params.js';
import { CsvTable } from '../../shared/schemas/reports.js';
import { CreateShareRequest, ShareLinkSummary, ShareListResponse, SharedReportResponse } from '../../shared/schemas/shares.js';
import { linkState, newTokenId, signShareToken, verifyShareToken } from '../reports/tokens.js';
import { loadReport, sendCsv, toDetail, type ReportRow } from '../reports/service.js';
import { formatDateTime } from '../../shared/format/datetime.js';

type LinkRow = typeof shareLinks.$inferSelect;

export default function sharesRoutes(ctx: AppContext) {
  const r = Router();

  const summaries = (rows: LinkRow[], studyId: number): ShareLinkSummary[] => {
    if (!rows.length) return [];
    const ids = rows.map((l) => l.id);
    const openings = ctx.db.select().from(shareOpenings).where(inArray(shareOpenings.shareLinkId, ids)).orderBy(desc(shareOpenings.id)).all();
    const creators = new Map(
      ctx.db
        .select({ id: users.id, name: users.name })
        .from(users)
        .where(inArray(users.id, [...new Set(rows.map((l) => l.createdBy ?? 0))]))
        .all()
        .map((u) => [u.id, u.name]),
    );
    const members = new Set(
      ctx.db
        .select({ email: users.email })
        .from(studyMembers)
        .innerJoin(users, eq(users.id, studyMembers.userId))
        .where(eq(studyMembers.studyId, studyId))
        .all()
        .map((m) => m.email),
    );
    return rows.map((l) => ({
      id: l.id,
      reportId: l.reportId,
      email: l.email,
      message: l.message,
      state: linkState(l),
      expiresAt: l.expiresAt,
      revokedAt: l.revokedAt,
      lastOpenedAt: l.lastOpenedAt,
      openCount: l.openCount,
      createdAt: l.createdAt,
      createdBy: l.createdBy ? (creators.get(l.createdBy) ?? null) : null,
      openings: openings.filter((o) => o.shareLinkId === l.id).slice(0, 20).map((o) => ({ at: o.at, ip: o.ip, userAgent: o.userAgent })),
      invited: members.has(l.email),
    }));
  };

  const mailLink = async (req: Request, report: ReportRow, link: LinkRow, senderName: string, resend = false) => {
    const token = await signShareToken(ctx, link);
    const url = `${publicOrigin(ctx, req)}/shared/${token}`;
    const until = formatDateTime(link.expiresAt);
    const study = ctx.db.select({ name: studies.name }).from(studies).where(eq(studies.id, report.studyId)).get();
    const msg = link.message.trim();
    await ctx.mail.send({
      to: link.email,
      subject: `${resend ? 'Reminder: ' : ''}${senderName} shared a Syntopy report: ${report.title}`,
      text:
        `${senderName} shared the report "${report.title}" (study "${study?.name ?? ''}") with you.\n\n` +
        (msg ? `${msg}\n\n` : '') +
        `Open the report (no account needed; the link is personal to you and works until ${until}):\n\n${url}\n\n` +
        `The report is read-only and frozen on the date it was made. Research use only; not for diagnosis.\n`,
      html:
        `<p>${escapeHtml(senderName)} shared the report <strong>${escapeHtml(report.title)}</strong> (study “${escapeHtml(study?.name ?? '')}”) with you.</p>` +
        (msg ? `<blockquote style="white-space:pre-wrap">${escapeHtml(msg)}</blockquote>` : '') +
        `<p><a href="${escapeHtml(url)}">Open the report</a>: no account needed; the link is personal to you and works until ${until}.</p>` +
        `<p style="color:#666">The report is read-only and frozen on the date it was made. Research use only; not for diagnosis.</p>`,
    });
    return url;
  };

  r.get('/reports/:id/shares', (req, res) => {
    const report = loadReport(ctx, idParam(req, 'id'));
    requireStudy(ctx.db, req.user, report.studyId, 'report', { what: 'report', id: report.id });
    const rows = ctx.db.select().from(shareLinks).where(eq(shareLinks.reportId, report.id)).orderBy(desc(shareLinks.id)).all();
    res.json(ShareListResponse.parse({ links: summaries(rows, report.studyId), notSent: [] }));
  });

  r.post('/reports/:id/shares', async (req, res) => {
    const report = loadReport(ctx, idParam(req, 'id'));
    requireStudy(ctx.db, req.user, report.studyId, 'report', { what: 'report', id: report.id });
    const body = CreateShareRequest.parse(req.body ?? {});
    const expiresAt = new Date(Date.now() + body.expiresInDays * 86400_000).toISOString();
    const invites: { email: string; name: string; token: string; expiresAt: string }[] = [];
    const created = ctx.db.transaction((tx) => {
      const out: LinkRow[] = [];
      for (const email of body.emails) {
        const link = tx
          .insert(shareLinks)
          .values({ reportId: report.id, email, tokenId: newTokenId(), message: body.message, expiresAt, createdBy: req.user!.id })
          .returning()
          .get();
        out.push(link);
        tx.insert(auditEvents)
          .values({ actorId: req.user!.id, action: 'share.create', entity: 'share_link', entityId: link.id, studyId: report.studyId, details: { reportId: report.id, email, expiresAt } })
          .run();
        if (body.inviteToStudy) {
          let u = tx.select().from(users).where(eq(users.email, email)).get();
          if (!u) {
            u = tx.insert(users).values({ email, name: email.split('@')[0], passwordHash: null, roles: ['collaborator'] }).returning().get();
            invites.push({ email, name: u.name, ...createInvitation(tx, u.id, req.user!.id) });
          }
          tx.insert(studyMembers).values({ studyId: report.studyId, userId: u.id, access: 'read' }).onConflictDoNothing().run();
          tx.insert(auditEvents)
            .values({ actorId: req.user!.id, action: 'study.member_add', entity: 'study', entityId: report.studyId, studyId: report.studyId, details: { userId: u.id, email, access: 'read', via: 'share' } })
            .run();
        }
      }
      return out;
    });
    // the links exist once the transaction commits; a mail server failure is reported per address, not as a 500
    const notSent: string[] = [];
    for (const link of created) await mailLink(req, report, link, req.user!.name).catch(() => notSent.push(link.email));
    for (const inv of invites)
      await sendInvitationMail(ctx, req, { email: inv.email, name: inv.name }, inv.token, inv.expiresAt, req.user!.name).catch(() => notSent.push(`${inv.email} (invitation)`));
    const rows = ctx.db.select().from(shareLinks).where(eq(shareLinks.reportId, report.id)).orderBy(desc(shareLinks.id)).all();
    res.status(201).json(ShareListResponse.parse({ links: summaries(rows, report.studyId), notSent }));
  });

  const loadLink = (req: Request) => {
    const id = idParam(req, 'id');
    const link = ctx.db.select().from(shareLinks).where(eq(shareLinks.id, id)).get();
    if (!link) throw notFoundAsked({ what: 'share link', id });
    const report = loadReport(ctx, link.reportId);
    requireStudy(ctx.db, req.user, report.studyId, 'report', { what: 'share link', id });
    return { link, report };
  };

  r.post('/shares/:id/revoke', (req, res) => {
    const { link, report } = loadLink(req);
    const row = ctx.db.transaction((tx) => {
      const row = link.revokedAt ? link : tx.update(shareLinks).set({ revokedAt: new Date().toISOString() }).where(eq(shareLinks.id, link.id)).returning().get();
      if (!link.revokedAt)
        tx.insert(auditEvents)
          .values({ actorId: req.user!.id, action: 'share.revoke', entity: 'share_link', entityId: link.id, studyId: report.studyId, details: { reportId: report.id, email: link.email } })
          .run();
      return row;
    });
    res.json(ShareLinkSummary.parse(summaries([row], report.studyId)[0]));
  });

  r.post('/shares/:id/resend', async (req, res) => {
    const { link, report } = loadLink(req);
    const state = linkState(link);
    if (state !== 'active') throw conflict(`this link is ${state}; share the report again to send a new link`);
    ctx.db
      .insert(auditEvents)
      .values({ actorId: req.user!.id, action: 'share.resend', entity: 'share_link', entityId: link.id, studyId: report.studyId, details: { reportId: report.id, email: link.email } })
      .run();
    await mailLink(req, report, link, req.user!.name, true);
    res.json(ShareLinkSummary.parse(summaries([link], report.studyId)[0]));
  });

  // ---- no account needed from here on: the token is the permission

  r.get('/shared/:token', async (req, res) => {
    const link = await verifyShareToken(ctx, req.params.token);
    const report = ctx.db.select().from(reports).where(eq(reports.id, link.reportId)).get();
    if (!report) throw notFound('this report is no longer available');
    const at = new Date().toISOString();
    ctx.db.transaction((tx) => {
      tx.insert(shareOpenings).values({ shareLinkId: link.id, at, ip: req.ip ?? null, userAgent: req.get('user-agent')?.slice(0, 500) ?? null }).run();
      tx.update(shareLinks).set({ lastOpenedAt: at, openCount: sql`${shareLinks.openCount} + 1` }).where(eq(shareLinks.id, link.id)).run();
    });
    res.setHeader('cache-control', 'no-store');
    res.setHeader('referrer-policy', 'no-referrer');
    res.json(SharedReportResponse.parse({ report: toDetail(ctx, report, false), recipient: link.email, expiresAt: link.expiresAt }));
  });

  r.get('/shared/:token/csv/:table', async (req, res) => {
    const link = await verifyShareToken(ctx, req.params.token);
    const table = parse(CsvTable, req.params.table);
    const report = ctx.db.select().from(reports).where(eq(reports.id, link.reportId)).get();
    if (!report) throw notFound('this report is no longer available');
    res.setHeader('referrer-policy', 'no-referrer');
    sendCsv(res, report, table);
  });

  return r;
}
