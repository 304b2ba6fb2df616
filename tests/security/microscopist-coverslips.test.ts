/**
 * Microscopists who may change a study's content add the coverslips they image and upload fields to them
 * (issue 19 item 5); the rest of the study's structure (renaming, deleting, conditions) stays with its
 * biologists and owner. Who counts as such a microscopist follows server/auth/policy.ts: a microscopist of the
 * study's lab, or one added to the study with write access. Expected codes: policy.ts "404 when the user may
 * not see it, 403 when they may see but not act" (common practice, no outside reference value).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { hashPassword } from '../../server/auth/passwords.js';
import { studyMembers, users, type Role } from '../../server/db/schema.js';
import { tiffPages, twoChannels } from './tiff.js';

let t: TestApp;
const PASSWORD = 'another horse battery';

async function addUser(email: string, roles: Role[], access?: 'read' | 'write') {
  const u = t.ctx.db.insert(users).values({ email, name: email, passwordHash: await hashPassword(PASSWORD), roles }).returning().get();
  if (access) t.ctx.db.insert(studyMembers).values({ studyId: t.world.studyA, userId: u.id, access }).run();
  return t.login(email, PASSWORD);
}

const tiff = () => tiffPages(32, 32, twoChannels(32, 32));

beforeAll(async () => {
  t = await makeTestApp();
}, 60_000);
afterAll(() => t?.close());

describe('a microscopist of the study lab', () => {
  it('sees "add_coverslips" among the study permissions, but not "edit_structure"', async () => {
    const a = await t.login('microscopist');
    const d = (await a.get(`/api/studies/${t.world.studyA}`)).body;
    expect(d.permissions).toContain('add_coverslips');
    expect(d.permissions).toContain('edit_images');
    expect(d.permissions).not.toContain('edit_structure');
  });

  it('adds a coverslip and uploads a field to it', async () => {
    const a = await t.login('microscopist');
    const res = await a.post(`/api/conditions/${t.world.conditionA}/coverslips`).send({ name: 'Imaged today' });
    expect(res.status).toBe(201);
    const cs = res.body.conditions[0].coverslips.find((c: { name: string }) => c.name === 'Imaged today');
    expect(cs).toBeDefined();
    const up = await a.post(`/api/coverslips/${cs.id}/fields`).attach('files', tiff(), { filename: 'field.tif', contentType: 'image/tiff' });
    expect(up.status).toBe(201);
    const list = await a.get(`/api/coverslips/${cs.id}/fields`);
    expect(list.status).toBe(200);
    expect(list.body.fields.length).toBe(1);
  });

  it('may not rename or delete coverslips, or add conditions (403 naming what was refused)', async () => {
    const a = await t.login('microscopist');
    const rename = await a.patch(`/api/coverslips/${t.world.coverslipA}`).send({ name: 'renamed' });
    expect(rename.status).toBe(403);
    expect(rename.body.error).toMatch(/changing conditions and coverslips/);
    expect((await a.delete(`/api/coverslips/${t.world.coverslipA}`)).status).toBe(403);
    expect((await a.post(`/api/studies/${t.world.studyA}/conditions`).send({ name: 'new' })).status).toBe(403);
  });
});

describe('study members', () => {
  it('a microscopist from another lab added with write access adds coverslips', async () => {
    const a = await addUser('guest-writer@test.example', ['microscopist'], 'write');
    const res = await a.post(`/api/conditions/${t.world.conditionA}/coverslips`).send({});
    expect(res.status).toBe(201);
  });

  it('a microscopist added read-only gets 403 with the action in words', async () => {
    const a = await addUser('guest-reader@test.example', ['microscopist'], 'read');
    const res = await a.post(`/api/conditions/${t.world.conditionA}/coverslips`).send({});
    expect(res.status).toBe(403);
    expect(res.body.error).toMatch(/adding coverslips/);
  });

  it('a microscopist who is not a member of the study or its lab gets 404', async () => {
    const a = await addUser('stranger@test.example', ['microscopist']);
    const res = await a.post(`/api/conditions/${t.world.conditionA}/coverslips`).send({});
    expect(res.status).toBe(404);
    expect(res.body.error).toBe(`no condition with id ${t.world.conditionA}`);
  });

  it('the read-only collaborator gets 403', async () => {
    const a = await t.login('collaborator');
    expect((await a.post(`/api/conditions/${t.world.conditionA}/coverslips`).send({})).status).toBe(403);
  });
});
