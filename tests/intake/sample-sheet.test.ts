/**
 * POST /api/studies/:id/sample-sheet/check: every bad row is named with its line number, nothing is stored,
 * conditions and coverslips the sheet names are listed for creation only when the user may create them, and a
 * file whose SHA-256 is already stored is recognised. (common practice; no outside reference value)
 */
import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { writeTiffU16 } from '../images/tiffwrite.js';
import { SampleSheetApplyResponse, SampleSheetCheckResponse } from '../../shared/schemas/sample-sheet.js';
import { conditions, coverslips, fields, instruments } from '../../server/db/schema.js';
import { parseCsvRecords } from '../../shared/format/csv.js';
import { UploadResponse } from '../../shared/schemas/fields.js';
import { eq } from 'drizzle-orm';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
  t.ctx.db.insert(instruments).values({ name: 'Scope 1', channel1: 'GFP', channel2: 'mCherry' }).run();
});
afterAll(() => t?.close());

const counts = () => ({
  conditions: t.ctx.db.select().from(conditions).all().length,
  coverslips: t.ctx.db.select().from(coverslips).all().length,
  fields: t.ctx.db.select().from(fields).all().length,
});

describe('sample sheet check', () => {
  it('reads quoted cells and records the line each record starts on (RFC 4180)', () => {
    expect(parseCsvRecords('a,b\n\n"x\ny",2\r\n3,"q""r"\n')).toEqual([
      { line: 1, cells: ['a', 'b'] },
      { line: 3, cells: ['x\ny', '2'] },
      { line: 5, cells: ['3', 'q"r'] },
    ]);
  });

  it('a valid sheet: existing and new conditions/coverslips, file pairs, instrument, pixel size; nothing stored', async () => {
    const owner = await t.login('biologist');
    const before = counts();
    const csv = ['file,file2,condition,coverslip,name,pixel_size_um,instrument', 'a.tif,,control,CS1,f1,0.1,Scope 1', 'b_gfp.tif,b_rfp.tif,treated,CS9,,,'].join('\n');
    const res = await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const out = SampleSheetCheckResponse.parse(res.body);
    expect(out.ok).toBe(true);
    expect(out.problems).toEqual([]);
    expect(out.rows[0]).toMatchObject({ line: 2, file: 'a.tif', file2: null, ch1: 1, ch2: 2, conditionId: t.world.conditionA, coverslipId: t.world.coverslipA, pixelSizeUm: 0.1, instrument: 'Scope 1' });
    expect(out.rows[1]).toMatchObject({ line: 3, file2: 'b_rfp.tif', ch1: 1, ch2: 1, conditionId: null, coverslipId: null });
    expect(out.creates).toEqual({ conditions: ['treated'], coverslips: ['treated / CS9'] });
    expect(counts()).toEqual(before);
  });

  it('names every bad row by its line number and quotes the value received', async () => {
    const owner = await t.login('biologist');
    const csv = [
      'file,condition,coverslip,ch1,ch2,pixel_size_um,instrument',
      'a.tif,control,CS1,1,2,,',
      ',control,CS1,,,,', // line 3: no file
      'c.tif,control,CS1,x,2,,', // line 4: bad channel
      'd.tif,control,CS1,1,2,-3,', // line 5: bad pixel size
      'e.tif,control,CS1,1,2,,Nowhere', // line 6: unknown instrument
      'a.tif,control,CS1,1,2,,', // line 7: the same field as line 2
      'f.tif,control,CS1,2,2,,', // line 8: one channel twice
    ].join('\n');
    const out = SampleSheetCheckResponse.parse((await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv })).body);
    expect(out.ok).toBe(false);
    expect(out.problems.map((p) => p.line)).toEqual([3, 4, 5, 6, 7, 8]);
    expect(out.problems[0].message).toMatch(/the file is empty/);
    expect(out.problems[1].message).toMatch(/ch1 must be a channel number from 1, got "x"/);
    expect(out.problems[2].message).toMatch(/pixel_size_um .* got "-3"/);
    expect(out.problems[3].message).toMatch(/no instrument is named "Nowhere"/);
    expect(out.problems[4].message).toMatch(/same field as line 2/);
    expect(out.problems[5].message).toMatch(/both channel 2/);
  });

  it('a user who may not add conditions gets a problem for a new condition; a new coverslip is fine for a microscopist', async () => {
    const mic = await t.login('microscopist');
    const csv = 'file,condition,coverslip\na.tif,control,CS7\nb.tif,drug,CS1\n';
    const out = SampleSheetCheckResponse.parse((await mic.post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv })).body);
    expect(out.problems).toHaveLength(1);
    expect(out.problems[0]).toMatchObject({ line: 3 });
    expect(out.problems[0].message).toMatch(/no condition "drug", and you may not add conditions/);
    expect(out.creates.coverslips).toContain('control / CS7');
  });

  it('recognises a file already stored by its SHA-256 (resume after a dropped connection)', async () => {
    const owner = await t.login('biologist');
    const W = 8;
    const tif = writeTiffU16([Uint16Array.from({ length: W * W }, (_, i) => i), Uint16Array.from({ length: W * W }, (_, i) => 64 - i)], W, W);
    const up = await owner.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', tif, 'stored.tif');
    expect(up.status, JSON.stringify(up.body)).toBe(201);
    const sha = crypto.createHash('sha256').update(tif).digest('hex');
    const csv = 'file,condition,coverslip\nstored.tif,control,CS1\nnew.tif,control,CS1\n';
    const files = [{ name: 'stored.tif', sha256: sha }, { name: 'new.tif', sha256: 'f'.repeat(64) }];
    const out = SampleSheetCheckResponse.parse((await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv, files })).body);
    expect(out.alreadyStored).toEqual(['stored.tif']);
  });

  it('refuses a sheet without a required column or with an unknown one, quoting it; outsiders get 404', async () => {
    const owner = await t.login('biologist');
    const a = await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv: 'file,coverslip\na.tif,CS1\n' });
    expect(a.status).toBe(400);
    expect(a.body.error).toMatch(/no "condition" column/);
    const b = await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv: 'file,condition,coverslip,colour\na,b,c,d\n' });
    expect(b.status).toBe(400);
    expect(b.body.error).toMatch(/unknown column\(s\) "colour"/);
    const out = await (await t.login('outsider')).post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv: 'file,condition,coverslip\na,b,c\n' });
    expect(out.status).toBe(404);
  });

  it('apply: a bad sheet creates nothing (422 naming the line); a clean one creates what it names, uploads by plan, and resumes', async () => {
    const owner = await t.login('biologist');
    const before = counts();
    const bad = await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/apply`).send({ csv: 'file,condition,coverslip,ch1\na.tif,newcond,CSx,zero\n' });
    expect(bad.status).toBe(422);
    expect(bad.body.error).toMatch(/line 2: ch1 must be a channel number from 1, got "zero"/);
    expect(counts()).toEqual(before);

    const W = 8;
    const page = (k: number) => Uint16Array.from({ length: W * W }, (_, i) => (i * k) % 4096);
    const gfp = writeTiffU16([page(3)], W, W), rfp = writeTiffU16([page(7)], W, W), two = writeTiffU16([page(5), page(11)], W, W);
    const bytes: Record<string, Buffer> = { 'g.tif': gfp, 'r.tif': rfp, 'two.tif': two };
    const files = Object.entries(bytes).map(([name, b]) => ({ name, sha256: crypto.createHash('sha256').update(b).digest('hex') }));
    const csv = 'file,file2,condition,coverslip,name,pixel_size_um\ng.tif,r.tif,sheet cond,S1,pair,0.25\ntwo.tif,,sheet cond,S1,both,\n';
    const applied = SampleSheetApplyResponse.parse((await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/apply`).send({ csv, files })).body);
    expect(applied.created).toEqual({ conditions: ['sheet cond'], coverslips: ['sheet cond / S1'] });
    expect(applied.uploads).toHaveLength(1);
    const u = applied.uploads[0];
    expect(u.files).toEqual(['g.tif', 'r.tif', 'two.tif']);
    expect(u.lines).toEqual([2, 3]);
    // only the first field is sent: the connection "drops" before the second
    const first = await owner.post(`/api/coverslips/${u.coverslipId}/fields`).attach('files', gfp, 'g.tif').attach('files', rfp, 'r.tif').field('plan', JSON.stringify([u.plan[0]]));
    expect(first.status, JSON.stringify(first.body)).toBe(201);
    const stored = UploadResponse.parse(first.body).results[0];
    expect(stored.ok && stored.field.pixelSizeUm).toBe(0.25);
    // resume: the same sheet again creates nothing and leaves out line 2
    const again = SampleSheetApplyResponse.parse((await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/apply`).send({ csv, files })).body);
    expect(again.created).toEqual({ conditions: [], coverslips: [] });
    expect(again.uploaded).toEqual([2]);
    expect(again.uploads.map((x) => x.lines)).toEqual([[3]]);
    const rest = again.uploads[0];
    expect(rest.files).toEqual(['two.tif']);
    const second = await owner.post(`/api/coverslips/${rest.coverslipId}/fields`).attach('files', two, 'two.tif').field('plan', JSON.stringify(rest.plan));
    expect(second.status, JSON.stringify(second.body)).toBe(201);
    const onSlip = t.ctx.db.select().from(fields).where(eq(fields.coverslipId, u.coverslipId)).all();
    expect(onSlip.map((f) => f.name).sort()).toEqual(['both', 'pair']);
    const done = SampleSheetCheckResponse.parse((await owner.post(`/api/studies/${t.world.studyA}/sample-sheet/check`).send({ csv, files })).body);
    expect(done.uploaded).toEqual([2, 3]);
  });
});
