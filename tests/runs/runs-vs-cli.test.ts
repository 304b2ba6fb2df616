/**
 * A run over a demo coverslip gives the same numbers as `npm run -s analyze` (server/cli/analyze.ts) on the
 * same stored files and outlines. The CLI computes Otsu/Costes thresholds once over the union of its
 * regions, which is the recipe's thresholdScope 'field'; saturated pixels are kept and no background is
 * subtracted in both. (Identity check between two paths over the same engine.)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { and, eq, isNull } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { cells, conditions, coverslips, fields, files, measurements, studies } from '../../server/db/schema.js';
import { seedDemo, DEMO_PASSWORD } from '../../server/db/seed/index.js';
import { waitForRun } from './helpers.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
  await seedDemo(t.ctx, { size: 160 });
}, 180_000);
afterAll(() => t.close());

const KEYS = ['pixels', 'pearson', 'spearman', 'kendallTauB', 'distanceCorrelation', 'dcorBiasCorrectedSq', 'dcorTStat', 'dcorPValue', 'mandersM1', 'mandersM2', 'overlap', 'k1', 'k2', 'icq'] as const;

describe('run vs the analyze command', () => {
  it('equal numbers on every cell of a demo coverslip (Costes thresholds over the field)', async () => {
    const mic = await t.login('microscopist@demo.test', DEMO_PASSWORD);
    const mgr = await t.login('manager@demo.test', DEMO_PASSWORD);
    const r = (await mic.post('/api/recipes').send({ name: 'As the command', settings: { threshold: { method: 'costes' }, thresholdScope: 'field', minCellPixels: 0 } })).body;
    await mic.post(`/api/recipes/${r.id}/submit`);
    await mgr.post(`/api/recipes/${r.id}/approve`);
    const cs = t.ctx.db
      .select({ id: coverslips.id })
      .from(coverslips)
      .innerJoin(conditions, eq(coverslips.conditionId, conditions.id))
      .innerJoin(studies, eq(conditions.studyId, studies.id))
      .where(eq(studies.isDemo, true))
      .orderBy(coverslips.id)
      .get()!;
    const res = await mic.post('/api/runs').send({ recipeId: r.id, scope: { kind: 'coverslip', id: cs.id } });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const run = (await waitForRun(async () => (await mic.get(`/api/runs/${res.body.id}`)).body, 120_000)) as Record<string, any>;
    expect(run.status, JSON.stringify(run.fields)).toBe('done');
    const rows = t.ctx.db.select().from(measurements).where(eq(measurements.runId, run.id)).all();
    const fieldRows = t.ctx.db.select().from(fields).where(eq(fields.coverslipId, cs.id)).all();
    expect(fieldRows.length).toBeGreaterThan(0);
    let compared = 0;
    for (const f of fieldRows) {
      const cellRows = t.ctx.db.select().from(cells).where(and(eq(cells.fieldId, f.id), isNull(cells.deletedAt), eq(cells.role, 'cell'))).all();
      const rois = cellRows.map((c) => ({ name: String(c.id), points: (c.geometry as { points: [number, number][] }).points }));
      const roiPath = path.join(t.dataDir, `rois-${f.id}.json`);
      fs.writeFileSync(roiPath, JSON.stringify(rois));
      const fileOf = (sha: string) => path.join(t.dataDir, 'store', t.ctx.db.select().from(files).where(eq(files.sha256, sha)).get()!.storeKey);
      const args = ['run', '-s', 'analyze', '--', '--ch1', fileOf(f.file1Sha), '--ch2', fileOf(f.file2Sha), '--rois', roiPath, '--threshold', 'costes', '--json'];
      const out = spawnSync('npm', args, { encoding: 'utf8', timeout: 120_000 });
      expect(out.status, out.stderr).toBe(0);
      const cli = JSON.parse(out.stdout) as { thresholds: { ch1: number | null; ch2: number | null }; regions: Record<string, number | null | string>[]; engineVersion: string };
      for (const reg of cli.regions) {
        const m = rows.find((x) => x.cellId === Number(reg.label))!;
        expect(m, `cell ${reg.label}`).toBeDefined();
        for (const k of KEYS) expect(m[k], `field ${f.id} cell ${reg.label} ${k}`).toBe(reg[k]);
        expect(m.threshold1).toBe(cli.thresholds.ch1);
        expect(m.threshold2).toBe(cli.thresholds.ch2);
        expect((m.provenance as { engineVersion: string }).engineVersion).toBe(cli.engineVersion);
        compared++;
      }
      expect(cli.regions.length).toBe(cellRows.length);
    }
    expect(compared).toBe(rows.length);
    console.log(`[runs-vs-cli] ${compared} cells on ${fieldRows.length} fields equal`);
  }, 300_000);
});
