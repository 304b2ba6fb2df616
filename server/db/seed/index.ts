/**
 * The INVENTED demo scenario (no real people, labs, instruments or data): one lab, four accounts (one per
 * role, password `syntopy-demo`), one study with two conditions × three coverslips × two synthetic fields
 * (server/db/seed/synth.ts) with their cells outlined, and one approved demo recipe.
 *
 * The known effect: in "treated" cells a larger share of puncta sits in both channels (expected 60 % vs
 * 20 % untreated, ± a few % per coverslip), so per-cell Pearson's r, Manders' M1/M2 and overlap are higher
 * in "treated".
 *
 * Idempotent: every piece is looked up by its natural key first, so running the seed twice (or after an
 * interrupted first run) adds nothing that is already there. A field and its cells count as there only once
 * both are stored; the audit event `demo.seeded` is written last (after the demo run is created), so a seed
 * killed part-way leaves a demo study without it. `seedDemoIfNeeded` seeds an empty database and resumes
 * such an unfinished seed on the next start.
 * Run by hand: `npm run seed` (uses DATA_DIR like the server).
 */
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { and, eq, sql } from 'drizzle-orm';
import type { AppContext } from '../../context.js';
import { auditEvents, cells, conditions, coverslips, fields, labMembers, labs, recipes, runs, studies, studyMembers, users, type Role } from '../schema.js';
import { hashPassword } from '../../auth/passwords.js';
import { rasterize, maskToIndices } from '../../../shared/analysis/rasterize.js';
import { synthField } from './synth.js';
import { writeTiff16 } from './tiff.js';
import { ingestField } from '../../images/intake.js';
import { DEFAULT_RECIPE_SETTINGS } from '../../../shared/schemas/recipes.js';

export const DEMO_PASSWORD = 'syntopy-demo';
export const DEMO_LAB = 'Demo lab (invented)';
export const DEMO_STUDY = 'Shared puncta after treatment (invented demo)';
export const DEMO_RECIPE = 'Demo recipe: Costes thresholds, all coefficients';

export const DEMO_ACCOUNTS: { key: 'manager' | 'microscopist' | 'biologist' | 'collaborator'; email: string; name: string; roles: Role[]; inLab: boolean }[] = [
  { key: 'manager', email: 'manager@demo.test', name: 'Demo Facility Manager', roles: ['facility_manager'], inLab: false },
  { key: 'microscopist', email: 'microscopist@demo.test', name: 'Demo Microscopist', roles: ['microscopist'], inLab: true },
  { key: 'biologist', email: 'biologist@demo.test', name: 'Demo Biologist', roles: ['biologist'], inLab: true },
  { key: 'collaborator', email: 'collaborator@demo.test', name: 'Demo Collaborator', roles: ['collaborator'], inLab: false },
];

/** Conditions of the demo study and their expected share of puncta present in both channels. */
export const DEMO_CONDITIONS = [
  { name: 'untreated', sharedFraction: 0.2 },
  { name: 'treated', sharedFraction: 0.6 },
] as const;
export const DEMO_COVERSLIPS = 3;
export const DEMO_FIELDS_PER_COVERSLIP = 2;
/** per-coverslip deviation of the shared share (biological replicate variation), fixed so the demo is stable */
const COVERSLIP_JITTER = [-0.04, 0.03, 0.01];

export interface SeedOptions {
  /** field size (default 512); tests use a smaller one to stay fast */
  size?: number;
  /** start a run of the demo recipe over the study after seeding, so Compare has numbers on first visit */
  startRun?: boolean;
  log?: (msg: string) => void;
  /** called after each demo field is stored with its cells (count so far); tests use it to interrupt a seed */
  onFieldDone?: (fieldsDone: number) => void;
}

/** The demo study, if a seed ever began (it is created in the seed's first transaction with the accounts). */
const demoStudy = (db: AppContext['db']) => db.select().from(studies).where(and(eq(studies.isDemo, true), eq(studies.name, DEMO_STUDY))).get();

/** Whether the seed that created this demo study ran to its end (its last step writes `demo.seeded`). */
const seedFinished = (db: AppContext['db'], studyId: number) =>
  !!db
    .select({ id: auditEvents.id })
    .from(auditEvents)
    .where(and(eq(auditEvents.action, 'demo.seeded'), eq(auditEvents.entity, 'study'), eq(auditEvents.entityId, studyId)))
    .get();

/**
 * Seeds the demo on a fresh install (no users at all), and finishes a seed that was interrupted (the demo
 * study exists but its seed never reached the end, e.g. the server was killed two fields in). A database with
 * users and no demo study, or a finished demo, is left alone. Returns whether it seeded.
 */
export async function seedDemoIfNeeded(ctx: AppContext, opts: SeedOptions = {}) {
  const log = opts.log ?? ((m: string) => console.log(m));
  const study = demoStudy(ctx.db);
  if (study) {
    if (seedFinished(ctx.db, study.id)) return false;
    log('the demo seed was interrupted: finishing it…');
  } else {
    if (ctx.db.select({ id: users.id }).from(users).limit(1).all().length) return false;
    log('empty database: seeding the invented demo study (accounts *@demo.test, password syntopy-demo)…');
  }
  await seedDemo(ctx, { ...opts, log });
  return true;
}

/** Runs the approved demo recipe over the whole demo study as the demo microscopist (in the background). */
export async function startDemoRun(ctx: AppContext, log: (m: string) => void = () => {}) {
  const { createRun, resolveScope } = await import('../../runs/records.js');
  const study = ctx.db.select().from(studies).where(eq(studies.name, DEMO_STUDY)).get();
  const recipe = ctx.db.select().from(recipes).where(and(eq(recipes.name, DEMO_RECIPE), eq(recipes.status, 'approved'))).get();
  const user = ctx.db.select().from(users).where(eq(users.email, 'microscopist@demo.test')).get();
  if (!study || !recipe || !user) return null;
  const scope = resolveScope(ctx.db, 'study', study.id);
  const run = await createRun(ctx, { recipe, scope: { kind: 'study', id: study.id, ...scope }, userId: user.id });
  log(`demo run ${run.id} started over ${scope.fieldIds.length} field(s); Compare fills in when it finishes`);
  return run;
}

export async function seedDemo(ctx: AppContext, opts: SeedOptions = {}) {
  const log = opts.log ?? (() => {});
  const size = opts.size ?? 512;
  const t0 = Date.now();
  const db = ctx.db;
  const existing = db.select({ email: users.email }).from(users).all().map((u) => u.email);
  const hash = DEMO_ACCOUNTS.every((a) => existing.includes(a.email)) ? '' : await hashPassword(DEMO_PASSWORD);

  // ---- accounts, lab, study, conditions, coverslips, recipe: one transaction
  const ids = db.transaction((tx) => {
    const account = (a: (typeof DEMO_ACCOUNTS)[number]) =>
      tx.select().from(users).where(eq(users.email, a.email)).get() ??
      tx.insert(users).values({ email: a.email, name: a.name, roles: a.roles, passwordHash: hash }).returning().get();
    const u = Object.fromEntries(DEMO_ACCOUNTS.map((a) => [a.key, account(a)])) as Record<(typeof DEMO_ACCOUNTS)[number]['key'], typeof users.$inferSelect>;
    const lab = tx.select().from(labs).where(eq(labs.name, DEMO_LAB)).get() ?? tx.insert(labs).values({ name: DEMO_LAB }).returning().get();
    for (const a of DEMO_ACCOUNTS) if (a.inLab) tx.insert(labMembers).values({ labId: lab.id, userId: u[a.key].id }).onConflictDoNothing().run();
    const study =
      tx.select().from(studies).where(and(eq(studies.isDemo, true), eq(studies.name, DEMO_STUDY))).get() ??
      tx
        .insert(studies)
        .values({
          labId: lab.id,
          ownerId: u.biologist.id,
          name: DEMO_STUDY,
          isDemo: true,
          description:
            'Invented demonstration data made by a seeded generator: no real cells, people or instruments. ' +
            'Treated cells carry a larger share of puncta present in both channels (expected 60 % against 20 % untreated), ' +
            'so co-localization coefficients are higher in "treated". One speck of debris per field saturates a few pixels.',
        })
        .returning()
        .get();
    tx.insert(studyMembers).values({ studyId: study.id, userId: u.collaborator.id, access: 'read' }).onConflictDoNothing().run();
    const slips: { id: number; condition: number; replicate: number; sharedFraction: number }[] = [];
    DEMO_CONDITIONS.forEach((c, ci) => {
      const cd =
        tx.select().from(conditions).where(and(eq(conditions.studyId, study.id), eq(conditions.name, c.name))).get() ??
        tx.insert(conditions).values({ studyId: study.id, name: c.name, position: ci }).returning().get();
      for (let r = 1; r <= DEMO_COVERSLIPS; r++) {
        const name = `Coverslip ${r}`;
        const cs =
          tx.select().from(coverslips).where(and(eq(coverslips.conditionId, cd.id), eq(coverslips.name, name))).get() ??
          tx
            .insert(coverslips)
            .values({ conditionId: cd.id, name, replicate: r, position: r - 1, preparedOn: `2026-11-${String(2 + r * 7).padStart(2, '0')}`, notes: 'invented demo coverslip' })
            .returning()
            .get();
        slips.push({ id: cs.id, condition: ci, replicate: r, sharedFraction: c.sharedFraction + COVERSLIP_JITTER[r - 1] });
      }
    });
    seedRecipe(tx, u.microscopist.id, u.manager.id);
    return { microscopist: u.microscopist.id, study: study.id, slips };
  });

  // ---- fields through the intake path, then their cells
  const tmp = await fsp.mkdtemp(path.join(os.tmpdir(), 'syntopy-seed-'));
  let made = 0;
  let done = 0;
  try {
    for (const s of ids.slips) {
      for (let f = 1; f <= DEMO_FIELDS_PER_COVERSLIP; f++) {
        const name = `Field ${f}`;
        let field = db.select().from(fields).where(and(eq(fields.coverslipId, s.id), eq(fields.name, name), eq(fields.status, 'ready'))).get();
        const hasCells = field ? !!db.select({ id: cells.id }).from(cells).where(eq(cells.fieldId, field.id)).limit(1).get() : false;
        if (field && hasCells) {
          done++;
          continue;
        }
        const synth = synthField({ width: size, height: size, sharedFraction: s.sharedFraction, seed: 1000 * (s.condition + 1) + 10 * s.replicate + f });
        if (!field) {
          const p1 = path.join(tmp, `${s.id}-${f}-ch1.tif`);
          const p2 = path.join(tmp, `${s.id}-${f}-ch2.tif`);
          const desc = 'Syntopy invented demo field (synthetic)';
          fs.writeFileSync(p1, writeTiff16(synth.width, synth.height, synth.ch1, desc));
          fs.writeFileSync(p2, writeTiff16(synth.width, synth.height, synth.ch2, desc));
          const stem = `demo-${DEMO_CONDITIONS[s.condition].name}-cs${s.replicate}-f${f}`;
          field = await ingestField(ctx, {
            coverslipId: s.id,
            userId: ids.microscopist,
            name,
            sources: [
              { path: p1, originalName: `${stem}-ch1.tif`, channel: 1 },
              { path: p2, originalName: `${stem}-ch2.tif`, channel: 1 },
            ],
          });
          made++;
        }
        const fieldId = field.id;
        db.transaction((tx) => {
          for (const c of synth.cells) {
            const pixelCount = maskToIndices(rasterize({ kind: 'polygon', points: c.points }, synth.width, synth.height)).length;
            tx.insert(cells).values({ fieldId, name: c.name, geometry: { kind: 'polygon', points: c.points }, source: 'seed', origin: { how: 'demo' }, pixelCount, createdBy: ids.microscopist }).run();
          }
        });
        opts.onFieldDone?.(++done);
      }
    }
  } finally {
    await fsp.rm(tmp, { recursive: true, force: true });
  }
  // the demo run (once per demo study), then the mark that the seed is complete
  if (opts.startRun && !db.select({ id: runs.id }).from(runs).where(eq(runs.studyId, ids.study)).limit(1).get()) await startDemoRun(ctx, log);
  if (made || !seedFinished(db, ids.study)) {
    db.insert(auditEvents).values({ actorId: null, action: 'demo.seeded', entity: 'study', entityId: ids.study, studyId: ids.study, details: { fields: made } }).run();
  }
  log(`demo seed: ${made} field(s) added in ${Date.now() - t0} ms`);
  return { studyId: ids.study, fieldsAdded: made };
}

/** One approved demo recipe (RecipeSettings defaults: Costes thresholds, every coefficient; Spots on). */
function seedRecipe(tx: Parameters<Parameters<AppContext['db']['transaction']>[0]>[0], proposerId: number, reviewerId: number) {
  if (tx.select({ id: recipes.id }).from(recipes).where(eq(recipes.name, DEMO_RECIPE)).get()) return;
  // the demo study is about shared puncta, so its recipe also finds spots and pairs them (defaults otherwise)
  const settings = JSON.parse(JSON.stringify({ ...DEFAULT_RECIPE_SETTINGS, objects: { ...DEFAULT_RECIPE_SETTINGS.objects, enabled: true } })) as Record<string, unknown>;
  const now = new Date().toISOString();
  const r = tx
    .insert(recipes)
    .values({
      name: DEMO_RECIPE,
      version: 1,
      status: 'approved',
      settings,
      description: 'Invented demo recipe: no background subtraction, saturated pixels kept (and flagged), Costes automatic thresholds, all coefficients, spots paired within the default distance.',
      proposerId,
      reviewerId,
      reviewNote: 'Approved for the demo study.',
      submittedAt: now,
      reviewedAt: now,
    })
    .returning()
    .get();
  tx.update(recipes).set({ familyId: r.id }).where(eq(recipes.id, r.id)).run();
  tx.insert(auditEvents).values({ actorId: reviewerId, action: 'recipe.approve', entity: 'recipe', entityId: r.id, details: { familyId: r.id, version: 1, name: DEMO_RECIPE, seeded: true } }).run();
}

// `npm run seed`: seed the configured database by hand
if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) {
  const { loadEnv } = await import('../../env.js');
  const { createContext, closeContext } = await import('../../context.js');
  const ctx = await createContext(loadEnv());
  try {
    const r = await seedDemo(ctx, { log: console.log });
    console.log(`demo study id ${r.studyId}; ${ctx.db.select({ n: sql<number>`count(*)` }).from(fields).get()!.n} field(s) in the database`);
  } finally {
    await closeContext(ctx);
  }
}
