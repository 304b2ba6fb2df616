/**
 * E-mail notifications through the one mail path (ctx.mail: SMTP, or the outbox sink without a relay):
 *   recipe_submitted  a recipe is submitted for review → every enabled facility manager but the submitter
 *   recipe_reviewed   a recipe is approved or returned (with the reviewer's note) → its proposer, unless they reviewed it
 *   calibration_approved  an instrument calibration is approved → its proposer, unless they approved it
 *   run_finished      a run is done, failed or partly failed (naming the fields that failed) → who started it
 * Each user can turn each kind off (notification_opt_outs; shared/schemas/notifications.ts); disabled users get
 * nothing. A notice that cannot be sent never undoes the change it reports: the failure is logged as a warning
 * (the outbox and the mail relay's logs show what left).
 */
import { and, eq, inArray } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { calibrations, fields, instruments, notificationOptOuts, recipes, runFields, runs, users } from '../db/schema.js';
import { escapeHtml, publicOrigin } from '../auth/invitations.js';
import type { NotificationKind } from '../../shared/schemas/notifications.js';
import { plural } from '../../shared/format/plural.js';
import { formatDateTime } from '../../shared/format/datetime.js';

type Deps = Pick<AppContext, 'db' | 'mail' | 'env'>;
type Recipient = { id: number; email: string; name: string };

/** The users among `ids` who are enabled and have not turned `kind` off. */
function recipients(d: Deps, kind: NotificationKind, ids: number[]): Recipient[] {
  if (!ids.length) return [];
  const off = new Set(d.db.select({ u: notificationOptOuts.userId }).from(notificationOptOuts).where(and(eq(notificationOptOuts.kind, kind), inArray(notificationOptOuts.userId, ids))).all().map((r) => r.u));
  return d.db
    .select({ id: users.id, email: users.email, name: users.name, disabled: users.disabled })
    .from(users)
    .where(inArray(users.id, ids))
    .all()
    .filter((u) => !u.disabled && !off.has(u.id));
}

async function send(d: Deps, kind: NotificationKind, to: Recipient[], subject: string, lines: string[], link: { href: string; text: string }) {
  for (const r of to) {
    const text = `Hello ${r.name},\n\n${lines.join('\n')}\n\n${link.text}: ${link.href}\n\nYou can turn these messages off on your Account page in Syntopy.\n`;
    const html = `<p>Hello ${escapeHtml(r.name)},</p>${lines.map((l) => `<p>${escapeHtml(l)}</p>`).join('')}<p><a href="${escapeHtml(link.href)}">${escapeHtml(link.text)}</a></p><p>You can turn these messages off on your Account page in Syntopy.</p>`;
    try {
      await d.mail.send({ to: r.email, subject, text, html });
    } catch (e) {
      console.warn(`[notify] ${kind} to ${r.email} could not be sent: ${(e as Error).message}`);
    }
  }
}

type RecipeRow = typeof recipes.$inferSelect;

/** After a recipe transition (submit, approve, return); retiring notifies nobody. */
export async function notifyRecipe(d: Deps, transition: string, recipe: RecipeRow, actor: { id: number; name: string }) {
  const title = `${recipe.name} v${recipe.version}`;
  const link = { href: `${publicOrigin(d)}/recipes/${recipe.id}`, text: 'Open the recipe' };
  if (transition === 'submit') {
    const managers = d.db.select({ id: users.id, roles: users.roles }).from(users).all().filter((u) => u.roles.includes('facility_manager') && u.id !== actor.id).map((u) => u.id);
    await send(d, 'recipe_submitted', recipients(d, 'recipe_submitted', managers), `Recipe to review: ${title}`, [`${actor.name} submitted the recipe ${title} for review.`], link);
  } else if ((transition === 'approve' || transition === 'return') && recipe.proposerId !== null && recipe.proposerId !== actor.id) {
    const verdict = transition === 'approve' ? 'approved' : 'returned';
    const lines = [`${actor.name} ${verdict} your recipe ${title}.`];
    if (recipe.reviewNote) lines.push(`Their note: ${recipe.reviewNote}`);
    if (transition === 'approve') lines.push('Runs with it are no longer provisional.');
    await send(d, 'recipe_reviewed', recipients(d, 'recipe_reviewed', [recipe.proposerId]), `Recipe ${verdict}: ${title}`, lines, link);
  }
}

/** After a calibration was approved: its proposer hears it, with what runs applying it will now use. */
export async function notifyCalibrationApproved(d: Deps, cal: typeof calibrations.$inferSelect, actor: { id: number; name: string }) {
  if (cal.proposerId === null || cal.proposerId === actor.id) return;
  const inst = d.db.select({ name: instruments.name }).from(instruments).where(eq(instruments.id, cal.instrumentId)).get();
  const title = `calibration v${cal.version} of ${inst?.name ?? `instrument ${cal.instrumentId}`}`;
  const lines = [`${actor.name} approved your ${title}.`];
  if (cal.reviewNote) lines.push(`Their note: ${cal.reviewNote}`);
  lines.push('Runs with recipes that apply the approved calibration now use it for fields of this instrument.');
  await send(d, 'calibration_approved', recipients(d, 'calibration_approved', [cal.proposerId]), `Calibration approved: ${title}`, lines, { href: `${publicOrigin(d)}/instruments/${cal.instrumentId}`, text: 'Open the instrument' });
}

/** Most failed fields named in one message (the run page lists them all). */
const MAX_FAILED_LISTED = 20;

/** After the last field of a run was recorded. */
export async function notifyRunFinished(d: Deps, runId: number) {
  const run = d.db.select().from(runs).where(eq(runs.id, runId)).get();
  if (!run || run.startedBy === null) return;
  const recipe = d.db.select().from(recipes).where(eq(recipes.id, run.recipeId)).get();
  const failed = d.db
    .select({ name: fields.name, error: runFields.error })
    .from(runFields)
    .innerJoin(fields, eq(fields.id, runFields.fieldId))
    .where(and(eq(runFields.runId, runId), eq(runFields.status, 'failed')))
    .all();
  const title = `run ${run.id}${recipe ? ` (${recipe.name} v${recipe.version})` : ''}`;
  const verdict = run.status === 'done' ? 'finished' : run.status === 'failed' ? 'failed' : 'finished with failures';
  const lines = [`Your ${title} ${verdict} at ${formatDateTime(run.finishedAt ?? new Date().toISOString())}: ${plural(run.fieldsTotal - failed.length, 'field')} measured${failed.length ? `, ${failed.length} failed` : ''}.`];
  if (failed.length) {
    lines.push('Fields that failed:');
    for (const f of failed.slice(0, MAX_FAILED_LISTED)) lines.push(`• ${f.name}: ${f.error ?? 'no reason recorded'}`);
    if (failed.length > MAX_FAILED_LISTED) lines.push(`… and ${failed.length - MAX_FAILED_LISTED} more (see the run).`);
  }
  const subject = `${run.status === 'done' ? 'Run finished' : run.status === 'failed' ? 'Run failed' : 'Run finished with failures'}: ${title}`;
  await send(d, 'run_finished', recipients(d, 'run_finished', [run.startedBy]), subject, lines, { href: `${publicOrigin(d)}/runs?run=${run.id}`, text: 'Open the run' });
}
