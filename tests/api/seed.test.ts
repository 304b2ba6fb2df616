/**
 * Migrations on an empty database, the invented demo seed (idempotent), and the synthetic generator's
 * known effect. Reference for the Pearson check: the textbook definition (Pearson 1896), computed inline.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { sql } from 'drizzle-orm';
import { openDb, MIGRATIONS_DIR } from '../../server/db/client.js';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedDemo, seedDemoIfNeeded, DEMO_ACCOUNTS, DEMO_PASSWORD, DEMO_STUDY, DEMO_COVERSLIPS, DEMO_FIELDS_PER_COVERSLIP } from '../../server/db/seed/index.js';
import { synthField } from '../../server/db/seed/synth.js';
import { writeTiff16 } from '../../server/db/seed/tiff.js';
import { rasterize, maskToIndices } from '../../shared/analysis/rasterize.js';
import * as schema from '../../server/db/schema.js';

describe('migrations', () => {
  it('apply to an empty database and create every table of the schema', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-mig-'));
    try {
      const db = openDb(path.join(dir, 'x.db'));
      const tables = db.all<{ name: string }>(sql`select name from sqlite_master where type = 'table'`).map((r) => r.name);
      for (const t of ['users', 'invitations', 'login_attempts', 'labs', 'lab_members', 'studies', 'study_members', 'conditions', 'coverslips', 'files', 'fields', 'cells', 'recipes', 'runs', 'run_fields', 'measurements', 'reports', 'share_links', 'audit_events', 'outgoing_mail']) {
        expect(tables, t).toContain(t);
      }
      expect(db.$client.pragma('foreign_keys', { simple: true })).toBe(1);
      expect(db.$client.pragma('journal_mode', { simple: true })).toBe('wal');
      // applying again is a no-op
      db.$client.close();
      const again = openDb(path.join(dir, 'x.db'));
      expect(again.all(sql`select count(*) as n from users`)).toEqual([{ n: 0 }]);
      again.$client.close();
      expect(fs.readdirSync(MIGRATIONS_DIR).some((f) => f.endsWith('.sql'))).toBe(true);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('synthetic generator (pure)', () => {
  it('is deterministic for a seed and returns 16-bit pixels, outlines and a few saturated pixels', () => {
    const a = synthField({ width: 256, height: 256, sharedFraction: 0.5, seed: 42 });
    const b = synthField({ width: 256, height: 256, sharedFraction: 0.5, seed: 42 });
    expect(a.ch1).toBeInstanceOf(Uint16Array);
    expect(Buffer.from(a.ch1.buffer).equals(Buffer.from(b.ch1.buffer))).toBe(true);
    expect(a.cells).toEqual(b.cells);
    expect(a.cells.length).toBeGreaterThanOrEqual(3);
    expect(a.saturated.ch1).toBeGreaterThan(0);
    expect(a.saturated.ch1).toBeLessThan(50);
    const c = synthField({ width: 256, height: 256, sharedFraction: 0.5, seed: 43 });
    expect(Buffer.from(a.ch1.buffer).equals(Buffer.from(c.ch1.buffer))).toBe(false);
  });

  it('more shared puncta → higher per-cell Pearson r (the demo effect)', () => {
    const meanR = (sharedFraction: number) => {
      const rs: number[] = [];
      for (const seed of [1, 2, 3, 4]) {
        const f = synthField({ width: 256, height: 256, sharedFraction, seed });
        for (const c of f.cells) {
          const idx = maskToIndices(rasterize({ kind: 'polygon', points: c.points }, f.width, f.height));
          let mx = 0, my = 0;
          for (const p of idx) (mx += f.ch1[p]), (my += f.ch2[p]);
          mx /= idx.length;
          my /= idx.length;
          let sxy = 0, sxx = 0, syy = 0;
          for (const p of idx) {
            const dx = f.ch1[p] - mx, dy = f.ch2[p] - my;
            sxy += dx * dy;
            sxx += dx * dx;
            syy += dy * dy;
          }
          rs.push(sxy / Math.sqrt(sxx * syy));
        }
      }
      return rs.reduce((s, r) => s + r, 0) / rs.length;
    };
    const low = meanR(0.2);
    const high = meanR(0.6);
    expect(high - low).toBeGreaterThan(0.15);
    expect(low).toBeGreaterThan(0);
  });

  it('rejects a share outside [0, 1], quoting it', () => {
    expect(() => synthField({ sharedFraction: 1.5, seed: 1 })).toThrow(/1\.5/);
  });

  it('the TIFF writer makes a baseline file geotiff reads back exactly (geotiff.js as the reader)', async () => {
    const { fromArrayBuffer } = await import('geotiff');
    const px = Uint16Array.from({ length: 12 }, (_, i) => i * 5000 + 7);
    const bytes = writeTiff16(4, 3, px, 'hello');
    const tiff = await fromArrayBuffer(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
    const img = await tiff.getImage();
    expect([img.getWidth(), img.getHeight(), img.getBitsPerSample()]).toEqual([4, 3, 16]);
    const [r] = (await img.readRasters()) as Uint16Array[];
    expect(Array.from(r)).toEqual(Array.from(px));
  });
});

describe('demo seed', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeTestApp();
  });
  afterAll(() => t.close());
  const count = (table: Parameters<TestApp['ctx']['db']['select']>[0] extends never ? never : any) =>
    t.ctx.db.select({ n: sql<number>`count(*)` }).from(table).get()!.n as number;
  const tables = { users: schema.users, labs: schema.labs, studies: schema.studies, conditions: schema.conditions, coverslips: schema.coverslips, fields: schema.fields, cells: schema.cells, recipes: schema.recipes, files: schema.files, studyMembers: schema.studyMembers, labMembers: schema.labMembers };
  const snapshot = () => Object.fromEntries(Object.entries(tables).map(([k, v]) => [k, count(v)]));

  it('seedDemoIfNeeded does nothing on a database that already has users', async () => {
    const before = snapshot();
    expect(await seedDemoIfNeeded(t.ctx)).toBe(false);
    expect(snapshot()).toEqual(before);
  });

  it('seeds the study (2 conditions × 3 coverslips × 2 fields, cells with pixel counts), and twice adds nothing', async () => {
    const before = snapshot();
    const first = await seedDemo(t.ctx, { size: 192 });
    expect(first.fieldsAdded).toBe(2 * DEMO_COVERSLIPS * DEMO_FIELDS_PER_COVERSLIP);
    const after = snapshot();
    expect(after.users - before.users).toBe(4);
    expect(after.conditions - before.conditions).toBe(2);
    expect(after.coverslips - before.coverslips).toBe(6);
    expect(after.fields - before.fields).toBe(12);
    expect(after.recipes - before.recipes).toBe(1);
    expect(after.cells - before.cells).toBeGreaterThanOrEqual(12 * 3);
    const second = await seedDemo(t.ctx, { size: 192 });
    expect(second.fieldsAdded).toBe(0);
    expect(snapshot()).toEqual(after);

    const seeded = t.ctx.db.select().from(schema.cells).all().filter((c) => c.source === 'seed');
    expect(seeded.every((c) => c.pixelCount > 50 && c.geometry.kind === 'polygon')).toBe(true);
    const f = t.ctx.db.select().from(schema.fields).all().at(-1)!;
    expect([f.width, f.height, f.bitDepth, f.sampleFormat]).toEqual([192, 192, 16, 'uint']);
    expect(f.facts.ch1.saturatedFraction).toBeGreaterThan(0);
    const r = t.ctx.db.select().from(schema.recipes).all().at(-1)!;
    expect(r.status).toBe('approved');
    expect(r.familyId).toBe(r.id);
  });

  it('every demo account signs in with the demo password and sees what its role allows', async () => {
    const seen: Record<string, number> = {};
    for (const a of DEMO_ACCOUNTS) {
      const agent = request.agent(t.app);
      expect((await agent.post('/api/auth/login').send({ email: a.email, password: DEMO_PASSWORD })).status, a.email).toBe(200);
      const list = await agent.get('/api/studies');
      expect(list.status).toBe(200);
      const demo = list.body.studies.find((s: { name: string }) => s.name === DEMO_STUDY);
      expect(demo, a.email).toBeDefined();
      seen[a.key] = demo.fieldCount;
      const perms: string[] = demo.permissions;
      if (a.key === 'biologist') expect(perms).toContain('delete');
      if (a.key === 'collaborator') expect(perms).toEqual(['read']);
      if (a.key === 'microscopist') expect(perms).toContain('edit_images');
      if (a.key === 'manager') expect(perms).toEqual(['read']);
    }
    expect(Object.values(seen)).toEqual([12, 12, 12, 12]);
  });
});
