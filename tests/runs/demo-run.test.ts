/**
 * The demo starts with numbers: after seeding, the server runs the approved demo recipe over the study, and the
 * known effect of the invented scenario (more shared puncta in "treated") shows in the measurements.
 */
import { afterAll, beforeAll, expect, it } from 'vitest';
import { and, eq, isNull } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedDemo, startDemoRun, DEMO_STUDY } from '../../server/db/seed/index.js';
import { cells, conditions, coverslips, fields, measurements, runs, studies } from '../../server/db/schema.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
  await seedDemo(t.ctx, { size: 192 });
});
afterAll(() => t.close());

it('startDemoRun measures every demo cell once, and treated cells co-localize (pixels and spots) more than untreated', async () => {
  const run = await startDemoRun(t.ctx);
  expect(run).not.toBeNull();
  const deadline = Date.now() + 120_000;
  for (;;) {
    const r = t.ctx.db.select().from(runs).where(eq(runs.id, run!.id)).get()!;
    if (r.status !== 'queued' && r.status !== 'running') {
      expect(r.status).toBe('done');
      expect(r.provisional).toBe(false); // the demo recipe is approved
      break;
    }
    if (Date.now() > deadline) throw new Error(`demo run still ${r.status}`);
    await new Promise((res) => setTimeout(res, 200));
  }
  const study = t.ctx.db.select().from(studies).where(eq(studies.name, DEMO_STUDY)).get()!;
  const rows = t.ctx.db
    .select({ condition: conditions.name, pearson: measurements.pearson, m1: measurements.mandersM1, spots1: measurements.spotCount1, paired1: measurements.spotPaired1 })
    .from(measurements)
    .innerJoin(cells, eq(cells.id, measurements.cellId))
    .innerJoin(fields, eq(fields.id, cells.fieldId))
    .innerJoin(coverslips, eq(coverslips.id, fields.coverslipId))
    .innerJoin(conditions, eq(conditions.id, coverslips.conditionId))
    .where(and(eq(measurements.runId, run!.id), eq(conditions.studyId, study.id)))
    .all();
  const cellCount = t.ctx.db
    .select({ id: cells.id })
    .from(cells)
    .innerJoin(fields, eq(fields.id, cells.fieldId))
    .where(and(eq(cells.role, 'cell'), isNull(cells.deletedAt)))
    .all().length;
  expect(rows.length).toBe(cellCount);
  const mean = (c: string, k: 'pearson' | 'm1' | 'paired1') => {
    const v = rows.filter((r) => r.condition === c).map((r) => r[k]!).filter((x) => x !== null);
    return v.reduce((a, b) => a + b, 0) / v.length;
  };
  // the generator's shared share is 60 % treated vs 20 % untreated (server/db/seed/index.ts)
  expect(mean('treated', 'pearson')).toBeGreaterThan(mean('untreated', 'pearson') + 0.1);
  expect(mean('treated', 'm1')).toBeGreaterThan(mean('untreated', 'm1'));
  // the demo recipe has Spots on: cells have channel-1 spots, and treated cells pair more of them
  // (at this test's small field size a cell holds only a few spots, so the margin is small)
  expect(rows.reduce((a, r) => a + (r.spots1 ?? 0), 0)).toBeGreaterThan(rows.length);
  expect(mean('treated', 'paired1')).toBeGreaterThan(mean('untreated', 'paired1'));
});
