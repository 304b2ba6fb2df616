/**
 * Permission matrix: every role × every route family, expected HTTP status (policy: server/auth/policy.ts).
 *
 * The world (tests/utils/app.ts): lab A = microscopist + biologist (owner of study A); collaborator is a
 * read-only member of study A; manager (facility manager) belongs to no lab; outsider is a biologist in lab B
 * (owner of study B). `anon` is not signed in.
 *
 * TO EXTEND: add rows to ROWS (one row per route; `setup` runs before EACH cell and may create fresh rows
 * for routes that change or delete things; `body` may depend on the setup result). Statuses: 401 signed
 * out, 404 study not visible, 403 visible but not allowed, 2xx allowed.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { conditions, coverslips, labs, outgoingMail, studies, users } from '../../server/db/schema.js';

type Who = 'anon' | 'microscopist' | 'manager' | 'biologist' | 'collaborator' | 'outsider';
const WHO: Who[] = ['anon', 'microscopist', 'manager', 'biologist', 'collaborator', 'outsider'];
type Ids = Record<string, number | string>;
interface Row {
  family: string;
  method: 'get' | 'post' | 'patch' | 'put' | 'delete';
  path: (t: TestApp, s: Ids) => string;
  body?: (t: TestApp, s: Ids) => unknown;
  setup?: (t: TestApp) => Ids;
  /** expected status per role, in WHO order: anon, microscopist, manager, biologist, collaborator, outsider */
  expect: [number, number, number, number, number, number];
}

let seq = 0;
const uniq = (p: string) => `${p}-${++seq}`;
const w = (t: TestApp) => t.world;
/** a fresh study in lab A owned by the lab A biologist (collaborator not a member) */
const freshStudy = (t: TestApp): Ids => ({ id: t.ctx.db.insert(studies).values({ labId: w(t).labA, ownerId: w(t).users.biologist.id, name: uniq('tmp study') }).returning().get().id });
const freshCondition = (t: TestApp): Ids => ({ id: t.ctx.db.insert(conditions).values({ studyId: w(t).studyA, name: uniq('tmp condition'), position: 99 }).returning().get().id });
const freshCoverslip = (t: TestApp): Ids => ({ id: t.ctx.db.insert(coverslips).values({ conditionId: w(t).conditionA, name: uniq('tmp coverslip'), replicate: 9 }).returning().get().id });
const freshUser = (t: TestApp): Ids => ({ id: t.ctx.db.insert(users).values({ email: `${uniq('u')}@test.example`, name: 'tmp', roles: ['collaborator'] }).returning().get().id });
const freshLab = (t: TestApp): Ids => ({ id: t.ctx.db.insert(labs).values({ name: uniq('tmp lab') }).returning().get().id });
const conditionIdsOfA = (t: TestApp) => t.ctx.db.select().from(conditions).where(eq(conditions.studyId, w(t).studyA)).all().map((c) => c.id);

//                                                                                 anon micro mgr  bio  coll  out
const ROWS: Row[] = [
  // ---- auth
  { family: 'auth', method: 'get', path: () => '/api/auth/me', expect: [401, 200, 200, 200, 200, 200] },
  { family: 'auth', method: 'post', path: () => '/api/auth/password', body: () => ({ currentPassword: 'not-it', newPassword: 'long enough password' }), expect: [401, 400, 400, 400, 400, 400] },
  // ---- studies
  { family: 'studies', method: 'get', path: () => '/api/studies', expect: [401, 200, 200, 200, 200, 200] },
  { family: 'studies', method: 'post', path: () => '/api/studies', body: () => ({ name: uniq('new study') }), expect: [401, 403, 403, 201, 403, 201] },
  { family: 'studies', method: 'get', path: (t) => `/api/studies/${w(t).studyA}`, expect: [401, 200, 200, 200, 200, 404] },
  { family: 'studies', method: 'get', path: (t) => `/api/studies/${w(t).studyB}`, expect: [401, 404, 200, 404, 404, 200] },
  { family: 'studies', method: 'patch', path: (t) => `/api/studies/${w(t).studyA}`, body: () => ({ description: uniq('d') }), expect: [401, 403, 403, 200, 403, 404] },
  { family: 'studies', method: 'patch', path: (t) => `/api/studies/${w(t).studyB}`, body: () => ({ description: uniq('d') }), expect: [401, 404, 403, 404, 404, 200] },
  {
    family: 'studies', method: 'delete', setup: freshStudy, path: (_t, s) => `/api/studies/${s.id}`,
    body: (t, s) => ({ confirmName: t.ctx.db.select().from(studies).where(eq(studies.id, Number(s.id))).get()!.name }),
    expect: [401, 403, 403, 200, 404, 404],
  },
  { family: 'studies', method: 'post', path: (t) => `/api/studies/${w(t).studyA}/reorder`, body: (t) => ({ conditionIds: conditionIdsOfA(t) }), expect: [401, 403, 403, 200, 403, 404] },
  // ---- conditions
  { family: 'conditions', method: 'post', path: (t) => `/api/studies/${w(t).studyA}/conditions`, body: () => ({ name: uniq('c') }), expect: [401, 403, 403, 201, 403, 404] },
  { family: 'conditions', method: 'post', path: (t) => `/api/studies/${w(t).studyB}/conditions`, body: () => ({ name: uniq('c') }), expect: [401, 404, 403, 404, 404, 201] },
  { family: 'conditions', method: 'patch', path: (t) => `/api/conditions/${w(t).conditionA}`, body: () => ({ name: uniq('control') }), expect: [401, 403, 403, 200, 403, 404] },
  { family: 'conditions', method: 'delete', setup: freshCondition, path: (_t, s) => `/api/conditions/${s.id}`, expect: [401, 403, 403, 200, 403, 404] },
  // ---- coverslips
  { family: 'coverslips', method: 'post', path: (t) => `/api/conditions/${w(t).conditionA}/coverslips`, body: () => ({ name: uniq('cs') }), expect: [401, 201, 403, 201, 403, 404] },
  { family: 'coverslips', method: 'patch', path: (t) => `/api/coverslips/${w(t).coverslipA}`, body: () => ({ notes: uniq('n') }), expect: [401, 403, 403, 200, 403, 404] },
  { family: 'coverslips', method: 'patch', path: (t) => `/api/coverslips/${w(t).coverslipB}`, body: () => ({ notes: uniq('n') }), expect: [401, 404, 403, 404, 404, 200] },
  { family: 'coverslips', method: 'delete', setup: freshCoverslip, path: (_t, s) => `/api/coverslips/${s.id}`, expect: [401, 403, 403, 200, 403, 404] },
  // ---- users (facility managers)
  { family: 'users', method: 'get', path: () => '/api/users', expect: [401, 403, 200, 403, 403, 403] },
  { family: 'users', method: 'post', path: () => '/api/users', body: () => ({ email: `${uniq('inv')}@test.example`, name: 'Invitee', roles: ['collaborator'] }), expect: [401, 403, 201, 403, 403, 403] },
  { family: 'users', method: 'patch', setup: freshUser, path: (_t, s) => `/api/users/${s.id}`, body: () => ({ roles: ['biologist'] }), expect: [401, 403, 200, 403, 403, 403] },
  { family: 'users', method: 'post', setup: freshUser, path: (_t, s) => `/api/users/${s.id}/invite`, expect: [401, 403, 200, 403, 403, 403] },
  // ---- labs
  { family: 'labs', method: 'get', path: () => '/api/labs', expect: [401, 200, 200, 200, 200, 200] },
  { family: 'labs', method: 'post', path: () => '/api/labs', body: () => ({ name: uniq('Lab') }), expect: [401, 403, 201, 403, 403, 403] },
  { family: 'labs', method: 'patch', setup: freshLab, path: (_t, s) => `/api/labs/${s.id}`, body: () => ({ name: uniq('Lab') }), expect: [401, 403, 200, 403, 403, 403] },
  { family: 'labs', method: 'delete', setup: freshLab, path: (_t, s) => `/api/labs/${s.id}`, expect: [401, 403, 200, 403, 403, 403] },
  { family: 'labs', method: 'put', setup: (t) => ({ ...freshLab(t), user: freshUser(t).id }), path: (_t, s) => `/api/labs/${s.id}/members/${s.user}`, expect: [401, 403, 200, 403, 403, 403] },
  { family: 'labs', method: 'delete', path: (t) => `/api/labs/${w(t).labB}/members/${w(t).users.microscopist.id}`, expect: [401, 403, 200, 403, 403, 403] },
  // ---- outbox (facility managers)
  { family: 'outbox', method: 'get', path: () => '/api/outbox', expect: [401, 403, 200, 403, 403, 403] },
  {
    family: 'outbox', method: 'get',
    setup: (t) => ({ id: t.ctx.db.insert(outgoingMail).values({ from: 'a@x', to: 'b@x', subject: 's', text: 't', via: 'sink' }).returning().get().id }),
    path: (_t, s) => `/api/outbox/${s.id}`, expect: [401, 403, 200, 403, 403, 403],
  },
];

let t: TestApp;
const agents = {} as Record<Who, ReturnType<typeof request.agent>>;
beforeAll(async () => {
  t = await makeTestApp();
  agents.anon = request.agent(t.app);
  for (const who of WHO.filter((x) => x !== 'anon')) agents[who] = await t.login(who);
});
afterAll(() => t.close());

describe('permission matrix (role × route)', () => {
  for (const row of ROWS) {
    it(`${row.family}: ${row.method.toUpperCase()} ${row.path.toString().replace(/^.*?=> ?/, '').slice(0, 70)}`, async () => {
      const got: Record<string, number> = {};
      const want: Record<string, number> = {};
      for (const [i, who] of WHO.entries()) {
        const s = row.setup ? row.setup(t) : {};
        const url = row.path(t, s);
        let req = agents[who][row.method](url);
        if (row.body) req = req.send(row.body(t, s) as object);
        const res = await req;
        got[who] = res.status;
        want[who] = row.expect[i];
        if (res.status >= 400) {
          expect(res.headers['content-type'], `${who} ${url}`).toMatch(/application\/json/);
          expect(typeof res.body.error, `${who} ${url}`).toBe('string');
        }
      }
      expect(got).toEqual(want);
    });
  }
});

describe('lab separation', () => {
  it('a lab A member gets 404 (not 403) for everything under lab B\'s study, and it is missing from their list', async () => {
    const [studyB, coverslipB] = [t.world.studyB, t.world.coverslipB];
    for (const who of ['microscopist', 'biologist', 'collaborator'] as const) {
      const a = agents[who];
      expect((await a.get(`/api/studies/${studyB}`)).status).toBe(404);
      expect((await a.patch(`/api/coverslips/${coverslipB}`).send({ notes: 'x' })).status).toBe(404);
      const list = await a.get('/api/studies');
      expect(list.body.studies.map((s: { id: number }) => s.id)).not.toContain(studyB);
    }
    // the 404 for an invisible study reads exactly like the one for an id that does not exist
    const invisible = await agents.biologist.get(`/api/studies/${studyB}`);
    const missing = await agents.biologist.get('/api/studies/999999');
    expect(invisible.body.error.replace(String(studyB), 'N')).toBe(missing.body.error.replace('999999', 'N'));
  });

  it('the collaborator sees only the study they were added to', async () => {
    const list = await agents.collaborator.get('/api/studies');
    expect(list.body.studies.map((s: { id: number }) => s.id)).toEqual([t.world.studyA]);
  });
});
