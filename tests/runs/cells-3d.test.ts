/**
 * Cells in 3D end to end: a 3-D label stack imported as cells (one label value across slices) and outlines with
 * a z range, measured by a run over an OME z-stack. Each cell's numbers equal
 *  - SciPy pearsonr / spearmanr / kendalltau, R energy and NumPy definitions on the same voxels
 *    (tests/fixtures/volumes/generate.py, to 1e-9 relative),
 *  - the engine's `measureRegion` on the cell's voxels (identity: same engine, same voxels), and
 *  - `analyze --mask` with the same label stack, and `analyze --rois` with the same z ranges (identity).
 * Refusals: a label stack with another slice count, floating-point labels, another size, and z ranges beyond
 * the field or running backwards, each with a 4xx message quoting the value.
 */
import { readFileSync, writeFileSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { UploadResponse } from '../../shared/schemas/fields.js';
import { CellList, CellResponse, ImportLabelsResponse, cellVoxels, type Cell } from '../../shared/schemas/cells.js';
import { measurements } from '../../server/db/schema.js';
import { GridResponse } from '../../shared/schemas/cell-table.js';
import { decodeChannel } from '../../server/images/decode.js';
import { concatSlices } from '../../server/images/projection.js';
import { measureRegion, REGION_RESULT_KEYS } from '../../shared/analysis/index.js';
import { main } from '../../server/cli/analyze.js';
import { waitForRun } from './helpers.js';

const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));
const expected = JSON.parse(readFileSync(dir + 'expected.json', 'utf8'));
const u16 = expected.cases.find((c: { name: string }) => c.name === 'u16');
const rois = JSON.parse(readFileSync(dir + 'rois.json', 'utf8')) as { name: string; points: [number, number][]; z?: [number, number] }[];
const W = expected.width as number, H = expected.height as number, NZ = expected.slices as number;
type Ref = Record<string, number | string | null> & { label: number | string };
type Row = Record<string, unknown>;

function near(a: number | null, b: number | null, what: string) {
  if (a === null || b === null) return expect(a, what).toBe(b);
  const tol = what.endsWith('dcorPValue') ? Math.max(1e-12, 1e-9 * Math.abs(b)) : 1e-9 * Math.max(1e-300, Math.abs(b));
  expect(Math.abs(a - b), `${what}: ${a} vs ${b}`).toBeLessThanOrEqual(tol);
}

let t: TestApp;
let mic: Awaited<ReturnType<TestApp['login']>>;
let fieldId: number;
beforeAll(async () => {
  t = await makeTestApp();
  mic = await t.login('microscopist');
  const plan = JSON.stringify([{ name: 'Stack', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }]);
  const res = await mic.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', plan).attach('files', dir + 'u16.xyzct.ome.tif');
  const r = UploadResponse.parse(res.body).results[0];
  if (!r.ok) throw new Error(r.error);
  expect(r.field.sizeZ).toBe(NZ);
  fieldId = r.field.id;
}, 60_000);
afterAll(() => t?.close());

/** `analyze` in this process, its JSON answer. */
async function analyze(...args: string[]) {
  let out = '';
  const w = vi.spyOn(process.stdout, 'write').mockImplementation((s: string | Uint8Array) => ((out += String(s)), true));
  const e = vi.spyOn(process.stderr, 'write').mockImplementation(() => true);
  try {
    expect(await main([...args, '--json'])).toBe(0);
  } finally {
    w.mockRestore();
    e.mockRestore();
  }
  return JSON.parse(out) as { regions: Ref[] };
}

describe('3-D label stack import', () => {
  it('refuses a stack with another slice count, floating-point labels and another size (422, quoting them)', async () => {
    const four = await mic.post(`/api/fields/${fieldId}/cells/import`).attach('file', dir + 'labels3d_4slices.tif');
    expect(four.status).toBe(422);
    expect(four.body.error).toBe('the label image has 4 slices but the field has 5; give one 2-D label image or a label stack with one plane per slice of the field');
    const float = await mic.post(`/api/fields/${fieldId}/cells/import`).attach('file', dir + 'f32.ch1.tif');
    expect(float.status).toBe(422);
    expect(float.body.error).toMatch(/floating-point pixels/);
    const tall = await mic.post(`/api/fields/${fieldId}/cells/import`).attach('file', dir + 'labels3d.tall.tif');
    expect(tall.status).toBe(422);
    expect(tall.body.error).toBe(`the label image is ${W} × ${H * NZ} pixels but the field is ${W} × ${H}; they must match`);
    expect(CellList.parse((await mic.get(`/api/fields/${fieldId}/cells`)).body).cells).toHaveLength(0);
  });
  it('gives one cell per label value across slices, with its voxels and z range', async () => {
    const res = await mic.post(`/api/fields/${fieldId}/cells/import`).attach('file', dir + 'labels3d.tif');
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(201);
    const body = ImportLabelsResponse.parse(res.body);
    const refs = u16.labels3d.filter((r: Ref) => r.label !== 0) as Ref[];
    expect(body.cells.map((c) => (c.geometry as { label: number }).label)).toEqual(refs.map((r) => r.label));
    const labels = await decodeChannel(dir + 'labels3d.tif', 1, { pages: 'slices' });
    for (const c of body.cells) {
      if (c.geometry.kind !== 'label3d') throw new Error(`cell ${c.id} is ${c.geometry.kind}`);
      const label = c.geometry.label;
      expect(c.voxelCount, `label ${label}`).toBe(refs.find((r) => r.label === label)!.pixels);
      // the z range is the first and last slice holding the label (1-based)
      const on = labels.slices.map((s, z) => (s.some((v) => v === label) ? z + 1 : 0)).filter((z) => z > 0);
      expect(c.zRange).toEqual([on[0], on[on.length - 1]]);
      // the stored voxels are exactly the label's voxels
      const vox = cellVoxels(c.geometry, W, H, 0, NZ);
      const flat = concatSlices(labels.slices, 0, NZ - 1);
      expect(vox.length).toBe(c.voxelCount);
      for (const i of vox) expect(flat[i]).toBe(label);
    }
  });
});

describe('outlines with a z range', () => {
  it('refuses a z range beyond the field or running backwards (400, quoting it)', async () => {
    const beyond = await mic.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'polygon', points: rois[0].points, z: [2, 7] } });
    expect(beyond.status).toBe(400);
    expect(beyond.body.error).toMatch(/the z range \[2, 7\] goes beyond the field's 5 slices/);
    const back = await mic.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'polygon', points: rois[0].points, z: [4, 2] } });
    expect(back.status).toBe(400);
    expect(back.body.error).toMatch(/got \[4, 2\]/);
    const zero = await mic.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'rect', x: 1, y: 1, width: 3, height: 3, z: [0, 2] } });
    expect(zero.status).toBe(400);
  });
  it('stores the range; the voxel count is the outline on the slices of its range (default every slice)', async () => {
    for (const roi of rois) {
      const res = await mic.post(`/api/fields/${fieldId}/cells`).send({ name: roi.name, geometry: { kind: 'polygon', points: roi.points, ...(roi.z ? { z: roi.z } : {}) } });
      expect(res.status, JSON.stringify(res.body)).toBe(201);
      const c = CellResponse.parse(res.body).cell;
      const ref = u16.rois.find((r: Ref) => r.label === roi.name) as Ref;
      expect(c.zRange).toEqual(roi.z ?? [1, NZ]);
      expect(c.voxelCount).toBe(ref.pixels);
      expect(c.voxelCount).toBe(c.pixelCount * (c.zRange[1] - c.zRange[0] + 1));
    }
  });
});

describe('a run over 3-D cells', () => {
  it('measures exactly each cell’s voxels: equal to SciPy / R energy, to measureRegion and to analyze', async () => {
    const recipe = await mic.post('/api/recipes').send({ name: '3D cells', settings: { threshold: { method: 'manual', t1: u16.t1, t2: u16.t2 }, minCellPixels: 0 } });
    expect(recipe.status, JSON.stringify(recipe.body)).toBe(201);
    const run = await mic.post('/api/runs').send({ recipeId: recipe.body.id, scope: { kind: 'field', id: fieldId } });
    expect(run.status, JSON.stringify(run.body)).toBe(201);
    const done = (await waitForRun(async () => (await mic.get(`/api/runs/${run.body.id}`)).body)) as { status: string };
    expect(done.status, JSON.stringify(done)).toBe('done');
    const rows = new Map<number, Row>(t.ctx.db.select().from(measurements).where(eq(measurements.runId, run.body.id)).all().map((m) => [m.cellId, m as unknown as Row]));
    const cellList = CellList.parse((await mic.get(`/api/fields/${fieldId}/cells`)).body).cells;
    expect(rows.size).toBe(cellList.length);

    const a = await decodeChannel(dir + 'u16.ch1.tif', 1, { pages: 'slices' });
    const b = await decodeChannel(dir + 'u16.ch2.tif', 1, { pages: 'slices' });
    const ch1 = concatSlices(a.slices, 0, NZ - 1), ch2 = concatSlices(b.slices, 0, NZ - 1);
    const manual = ['--threshold', 'manual', '--t1', String(u16.t1), '--t2', String(u16.t2)];
    const stacks = ['--ch1', dir + 'u16.ch1.tif', '--ch2', dir + 'u16.ch2.tif'];
    const byMask = await analyze(...stacks, '--mask', dir + 'labels3d.tif', ...manual);
    const roiPath = join(mkdtempSync(join(tmpdir(), 'syntopy-cells3d-')), 'rois.json');
    writeFileSync(roiPath, JSON.stringify(rois));
    const byRois = await analyze(...stacks, '--rois', roiPath, ...manual);

    const check = (c: Cell, ref: Ref, cli: Ref) => {
      const row = rows.get(c.id)!;
      const what = `${c.name}`;
      expect(row.pixels, what).toBe(c.voxelCount);
      expect(row.pixels, what).toBe(ref.pixels);
      const engine = measureRegion(ch1, ch2, cellVoxels(c.geometry, W, H, 0, NZ), { width: W, height: H, threshold: { method: 'manual', t1: u16.t1, t2: u16.t2 } }) as unknown as Row;
      for (const k of REGION_RESULT_KEYS) {
        if (!(k in row)) continue;
        // outside references (SciPy / R energy / NumPy)
        if (k in ref) near(row[k] as number | null, ref[k] as number | null, `${what} (reference).${k}`);
        // the same engine on the same voxels, and the command
        if (row[k] !== null) expect(row[k], `${what}.${k} vs measureRegion`).toBe(engine[k]);
        expect(row[k], `${what}.${k} vs analyze`).toBe(cli[k]);
      }
    };
    let n = 0;
    for (const c of cellList) {
      if (c.geometry.kind === 'label3d') {
        const label = c.geometry.label;
        check(c, u16.labels3d.find((r: Ref) => r.label === label), byMask.regions.find((r) => r.label === label)!);
      } else {
        check(c, u16.rois.find((r: Ref) => r.label === c.name), byRois.regions.find((r) => r.label === c.name)!);
      }
      n++;
    }
    expect(n).toBe(u16.labels3d.length - 1 + rois.length);
    // the Cell table shows each cell's slices and its measured voxels
    const grid = GridResponse.parse((await mic.get(`/api/studies/${t.world.studyA}/cell-table`).query({ runId: run.body.id, pageSize: 500 })).body);
    const fieldRows = grid.rows.filter((r) => r.fieldId === fieldId);
    expect(fieldRows).toHaveLength(cellList.length);
    for (const r of fieldRows) {
      const c = cellList.find((x) => x.id === r.cellId)!;
      expect(r.slices, c.name).toBe(`${c.zRange[0]}–${c.zRange[1]}`);
      expect(r.pixels, c.name).toBe(c.voxelCount);
    }
  }, 120_000);

  it('a run measuring one slice takes the cells’ planes on that slice; a projection is refused with the reason', async () => {
    const one = await mic.post('/api/recipes').send({ name: 'slice 3', settings: { z: { mode: 'slice', slice: 2 }, threshold: { method: 'manual', t1: u16.t1, t2: u16.t2 }, minCellPixels: 0 } });
    const run = await mic.post('/api/runs').send({ recipeId: one.body.id, scope: { kind: 'field', id: fieldId } });
    const done = (await waitForRun(async () => (await mic.get(`/api/runs/${run.body.id}`)).body)) as { status: string };
    expect(done.status, JSON.stringify(done)).toBe('done');
    const rows = new Map(t.ctx.db.select().from(measurements).where(eq(measurements.runId, run.body.id)).all().map((m) => [m.cellId, m]));
    for (const c of CellList.parse((await mic.get(`/api/fields/${fieldId}/cells`)).body).cells) {
      const want = cellVoxels(c.geometry, W, H, 2, 1).length;
      expect(rows.get(c.id)!.pixels, c.name).toBe(want);
      // slice 3 (1-based) is inside the cell's range exactly when it has pixels there
      if (c.geometry.kind !== 'label3d') expect(want > 0).toBe(c.zRange[0] <= 3 && 3 <= c.zRange[1]);
    }
    const mip = await mic.post('/api/recipes').send({ name: 'projection', settings: { z: { mode: 'mip' }, threshold: { method: 'manual', t1: u16.t1, t2: u16.t2 } } });
    const run2 = await mic.post('/api/runs').send({ recipeId: mip.body.id, scope: { kind: 'field', id: fieldId } });
    const failed = (await waitForRun(async () => (await mic.get(`/api/runs/${run2.body.id}`)).body)) as { status: string; fields?: { error?: string | null }[] };
    expect(JSON.stringify(failed)).toMatch(/cover only some slices \(a z range or a 3-D label\), but the recipe measures a projection/);
  }, 120_000);
});
