/**
 * Every permission decision lives here. Rules (PRODUCT.md "People and roles"):
 * - facility managers see every study (read) and manage accounts, labs and recipe reviews;
 * - lab members see their lab's studies; microscopists and biologists of the lab may change study content;
 *   biologists (and the owner) manage conditions, coverslips, exclusions, reports and share links;
 * - microscopists who may change a study's content (lab members, or study members with write access) add
 *   coverslips and upload fields: in a facility the person at the microscope creates the coverslips they image;
 * - collaborators see only studies they were added to (study_members), read-only;
 * - a user who may not see a study gets 404; one who may see but not change it gets 403.
 */
import { and, eq, sql } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { labMembers, studies, studyMembers, type Role } from '../db/schema.js';
import { forbidden, notFound, unauthorized } from '../http/errors.js';
import type { SessionUser } from './session.js';

export type StudyAction =
  | 'read' // see the study, its fields, cells, measurements, reports
  | 'edit_structure' // conditions, coverslips, study name
  | 'add_coverslips' // add coverslips to a condition (the person at the microscope creates what they image)
  | 'edit_images' // upload fields, outline cells
  | 'run' // start analysis runs
  | 'exclude' // exclude / restore cells
  | 'report' // create reports and share links
  | 'delete'; // delete the study

export const hasRole = (u: SessionUser | undefined, r: Role) => !!u && u.roles.includes(r);

export type Study = typeof studies.$inferSelect;

/** The permission queries, prepared once per database (every request of a study asks them). */
function makeQueries(db: Db) {
  return {
    study: db.select().from(studies).where(eq(studies.id, sql.placeholder('id'))).prepare(),
    labMember: db.select().from(labMembers).where(and(eq(labMembers.labId, sql.placeholder('lab')), eq(labMembers.userId, sql.placeholder('user')))).prepare(),
    studyMember: db.select().from(studyMembers).where(and(eq(studyMembers.studyId, sql.placeholder('study')), eq(studyMembers.userId, sql.placeholder('user')))).prepare(),
  };
}
const preparedQueries = new WeakMap<Db, ReturnType<typeof makeQueries>>();
function queries(db: Db) {
  let q = preparedQueries.get(db);
  if (!q) preparedQueries.set(db, (q = makeQueries(db)));
  return q;
}

/** What the user may do in this study (empty set: may not even see it). */
export function studyPermissions(db: Db, user: SessionUser, study: Study): Set<StudyAction> {
  const p = new Set<StudyAction>();
  const q = queries(db);
  const inLab = !!q.labMember.get({ lab: study.labId, user: user.id });
  const member = q.studyMember.get({ study: study.id, user: user.id });
  const isOwner = study.ownerId === user.id;
  if (inLab || member || isOwner || hasRole(user, 'facility_manager')) p.add('read');
  const canWrite = isOwner || (inLab && (hasRole(user, 'microscopist') || hasRole(user, 'biologist'))) || member?.access === 'write';
  if (canWrite && (hasRole(user, 'microscopist') || hasRole(user, 'biologist') || isOwner)) {
    p.add('edit_images');
    p.add('run');
    if (hasRole(user, 'microscopist')) p.add('add_coverslips');
  }
  if (isOwner || (inLab && hasRole(user, 'biologist'))) {
    p.add('edit_structure');
    p.add('add_coverslips');
    p.add('exclude');
    p.add('report');
  }
  if (isOwner) p.add('delete');
  return p;
}

/**
 * The object a request named in its path or body (a cell, a field, a report…). When the user may not see the
 * study it belongs to, the 404 names this object exactly as a missing one would, so a foreign id and an
 * unknown id get the same status and the same body (nothing tells whether it exists or which study owns it).
 */
export interface Asked {
  what: string;
  id: number;
}

/** The one 404 for an object that does not exist or that the user may not see. */
export const notFoundAsked = (a: Asked) => notFound(`no ${a.what} with id ${a.id}`);

/**
 * Loads the study and checks the action: 404 when the user may not see it, 403 when they may see but not act.
 * `asked` is the object the request named (default: the study itself); the 404 names it.
 */
export function requireStudy(db: Db, user: SessionUser | undefined, studyId: number, action: StudyAction, asked: Asked = { what: 'study', id: studyId }): Study {
  if (!user) throw unauthorized();
  const study = Number.isInteger(studyId) ? queries(db).study.get({ id: studyId }) : undefined;
  if (!study) throw notFoundAsked(asked);
  const perms = studyPermissions(db, user, study);
  if (!perms.has('read')) throw notFoundAsked(asked);
  if (!perms.has(action)) throw forbidden(`your roles (${user.roles.join(', ')}) do not allow ${ACTION_WORDS[action] ?? `"${action}"`} in this study`);
  return study;
}

/** Global (non-study) permissions. */
export type GlobalAction =
  | 'create_study' // biologists
  | 'manage_users' // facility managers
  | 'read_outbox' // facility managers
  | 'read_usage' // facility managers
  | 'propose_recipe' // anyone but collaborators
  | 'review_recipe' // facility managers
  | 'read_recipes' // anyone but collaborators
  | 'manage_instruments' // facility managers: record instruments
  | 'read_instruments' // anyone but collaborators
  | 'propose_calibration' // anyone but collaborators
  | 'review_calibration'; // facility managers

export function can(user: SessionUser | undefined, action: GlobalAction): boolean {
  if (!user) return false;
  switch (action) {
    case 'create_study':
      return hasRole(user, 'biologist');
    case 'manage_users':
    case 'read_outbox':
    case 'read_usage':
    case 'review_recipe':
    case 'manage_instruments':
    case 'review_calibration':
      return hasRole(user, 'facility_manager');
    case 'propose_recipe':
    case 'read_recipes':
    case 'read_instruments':
    case 'propose_calibration':
      return user.roles.some((r) => r !== 'collaborator');
  }
}

/** Plain words for each action, for the 403 message a person reads. */
const ACTION_WORDS: Record<StudyAction | GlobalAction, string> = {
  read: 'reading',
  edit_structure: 'changing conditions and coverslips',
  add_coverslips: 'adding coverslips',
  edit_images: 'uploading fields or outlining cells',
  run: 'starting runs',
  exclude: 'excluding or restoring cells',
  report: 'making reports or share links',
  delete: 'deleting the study',
  create_study: 'creating studies',
  manage_users: 'managing accounts and labs',
  read_outbox: 'reading the Outbox',
  read_usage: 'reading facility usage',
  propose_recipe: 'proposing recipes',
  review_recipe: 'reviewing recipes',
  read_recipes: 'reading recipes',
  manage_instruments: 'recording instruments',
  read_instruments: 'reading instruments and calibrations',
  propose_calibration: 'proposing calibrations',
  review_calibration: 'reviewing calibrations',
};

export function requireCan(user: SessionUser | undefined, action: GlobalAction) {
  if (!user) throw unauthorized();
  if (!can(user, action)) throw forbidden(`your roles (${user.roles.join(', ')}) do not allow ${ACTION_WORDS[action] ?? `"${action}"`}`);
}
