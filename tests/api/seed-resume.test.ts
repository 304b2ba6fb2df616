/**
 * An interrupted first start: the server killed while seeding the demo (3 of 12 fields in) must not leave a
 * half demo for good. The next start finishes the seed: the same demo as an uninterrupted seed, exactly once,
 * and the demo run over all of it.
 */
import { afterAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq, sql } from 'drizzle-orm';
import { loadEnv } from '../../server/env.js';
import { closeContext, createContext, type AppContext } from '../../server/context.js';
import { seedDemoIfNeeded, DEMO_STUDY, DEMO_COVERSLIPS, DEMO_FIELDS_PER_COVERSLIP } from '../../server/db/seed/index.js';
import * as schema from '../../server/db/schema.js';

const SIZE = 96;
const dirs: string[] = [];
afterAll(() => dirs.forEach((d) => fs.rmSync(d, { recursive: true, force: true })));

function open(dir?: string) {
  const d = dir ?? fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-seed-resume-'));
  if (!dir) dirs.push(d);
  return { dir: d, ctx: createContext(loadEnv({ NODE_ENV: 'test', DATA_DIR: d, SEED_DEMO: 'auto', WORKERS: '1' } as NodeJS.ProcessEnv)) };
}
const count = (ctx: AppContext, table: Parameters<AppContext['db']['select']>[0] extends never ? never : any) => ctx.db.select({ n: sql<number>`count(*)` }).from(table).get()!.n as number;

/** Every demo cell as "condition / coverslip / field / cell: pixels", sorted: two equal demos give equal lists. */
function demoCells(ctx: AppContext) {
  return ctx.db
    .select({ cd: schema.conditions.name, cs: schema.coverslips.name, f: schema.fields.name, c: schema.cells.name, px: schema.cells.pixelCount })
    .from(schema.cells)
    .innerJoin(schema.fields, eq(schema.fields.id, schema.cells.fieldId))
    .innerJoin(schema.coverslips, eq(schema.coverslips.id, schema.fields.coverslipId))
    .innerJoin(schema.conditions, eq(schema.conditions.id, schema.coverslips.conditionId))
    .all()
    .map((r) => `${r.cd} / ${r.cs} / ${r.f} / ${r.c}: ${r.px}`)
    .sort();
}

async function waitForRuns(ctx: AppContext) {
  const deadline = Date.now() + 120_000;
  for (;;) {
    const open = ctx.db.select().from(schema.runs).all().filter((r) => r.status === 'queued' || r.status === 'running');
    if (!open.length) return;
    if (Date.now() > deadline) throw new Error('demo run did not finish');
    await new Promise((r) => setTimeout(r, 200));
  }
}

describe('interrupted demo seed', () => {
  it('the next start finishes it: 12 fields, every cell once, one demo run over all of them', async () => {
    // reference: an uninterrupted seed on its own database
    const ref = open();
    const refCtx = await ref.ctx;
    expect(await seedDemoIfNeeded(refCtx, { size: SIZE, log: () => {} })).toBe(true);
    const expectedCells = demoCells(refCtx);
    const expectedFiles = count(refCtx, schema.files);
    await closeContext(refCtx);
    expect(expectedCells.length).toBeGreaterThan(12 * 3);

    // first start, killed after 3 fields
    const first = open();
    const ctx1 = await first.ctx;
    await expect(
      seedDemoIfNeeded(ctx1, {
        size: SIZE,
        startRun: true,
        log: () => {},
        onFieldDone: (n) => {
          if (n === 3) throw new Error('killed while seeding');
        },
      }),
    ).rejects.toThrow('killed while seeding');
    expect(count(ctx1, schema.fields)).toBe(3);
    expect(count(ctx1, schema.users)).toBe(4); // the accounts exist: the old rule ("seed only without users") skipped from here on
    expect(count(ctx1, schema.runs)).toBe(0);
    await closeContext(ctx1);

    // next start on the same data folder
    const ctx2 = await open(first.dir).ctx;
    expect(await seedDemoIfNeeded(ctx2, { size: SIZE, startRun: true, log: () => {} })).toBe(true);
    expect(count(ctx2, schema.users)).toBe(4);
    expect(count(ctx2, schema.studies)).toBe(1);
    expect(count(ctx2, schema.conditions)).toBe(2);
    expect(count(ctx2, schema.coverslips)).toBe(2 * DEMO_COVERSLIPS);
    expect(count(ctx2, schema.fields)).toBe(2 * DEMO_COVERSLIPS * DEMO_FIELDS_PER_COVERSLIP);
    expect(count(ctx2, schema.recipes)).toBe(1);
    expect(count(ctx2, schema.files)).toBe(expectedFiles);
    expect(demoCells(ctx2)).toEqual(expectedCells);

    // the demo run covers the whole study and measures every cell once
    const study = ctx2.db.select().from(schema.studies).where(eq(schema.studies.name, DEMO_STUDY)).get()!;
    const runs = ctx2.db.select().from(schema.runs).where(eq(schema.runs.studyId, study.id)).all();
    expect(runs).toHaveLength(1);
    await waitForRuns(ctx2);
    expect(ctx2.db.select().from(schema.runs).where(eq(schema.runs.id, runs[0].id)).get()!.status).toBe('done');
    expect(count(ctx2, schema.measurements)).toBe(expectedCells.length);
    const marks = ctx2.db.select().from(schema.auditEvents).where(and(eq(schema.auditEvents.action, 'demo.seeded'), eq(schema.auditEvents.entityId, study.id))).all();
    expect(marks).toHaveLength(1);

    // a third start changes nothing
    expect(await seedDemoIfNeeded(ctx2, { size: SIZE, startRun: true, log: () => {} })).toBe(false);
    expect(count(ctx2, schema.fields)).toBe(12);
    expect(ctx2.db.select().from(schema.runs).all()).toHaveLength(1);
    expect(demoCells(ctx2)).toEqual(expectedCells);
    await closeContext(ctx2);
  }, 180_000);
});
