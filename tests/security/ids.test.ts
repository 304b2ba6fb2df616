/**
 * Ids in paths and bodies, over every API route of server/auth/route-rules.ts (the permission matrix's table):
 *   - a lab-B outsider naming a lab-A object gets exactly the answer (status and body, byte for byte) that an
 *     unknown id gets, apart from the id itself: nothing tells whether the object exists or whose it is;
 *   - every id path segment is read by one parser (shared/schemas/common.ts IdParam): "12" passes, and
 *     "12abc", "-1", "0", "1e3", " 7", "9007199254740993" are refused with the same 400 on every route.
 * (OWASP ASVS v4.0.3 §4.2.1, insecure direct object references; expected codes follow server/auth/policy.ts.)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type request from 'supertest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { ROUTE_RULES, type Rule } from '../../server/auth/route-rules.js';
import { IdParam } from '../../shared/schemas/common.js';
import { apiRoutes, buildLabA, fillPath, type ApiRoute, type LabAEntities } from './world.js';

let t: TestApp;
let e: LabAEntities;
let routes: ApiRoute[];
let outsider: ReturnType<typeof request.agent>;
let manager: ReturnType<typeof request.agent>;
const MISSING = 987654;

beforeAll(async () => {
  t = await makeTestApp();
  e = await buildLabA(t);
  routes = apiRoutes(t.app).filter((r) => r.key in ROUTE_RULES);
  outsider = await t.login('outsider');
  manager = await t.login('manager');
}, 120_000);
afterAll(() => t?.close());

const isStudy = (x: Rule) => typeof x === 'object' && 'study' in x;
const idSegments = (path: string) => path.split('/').filter((s) => /^:(id|\w+Id)$/.test(s)).map((s) => s.slice(1));

function call(agent: ReturnType<typeof request.agent>, method: string, url: string, body?: unknown) {
  const m = method.toLowerCase() as 'get' | 'post' | 'put' | 'patch' | 'delete';
  const req = agent[m](url);
  return m === 'get' ? req : req.send((body ?? {}) as object);
}

describe('a foreign id answers like a missing one', () => {
  it('on every study-scoped route with an id in the path (same status, same body but for the id)', async () => {
    const none = new Proxy({} as LabAEntities, { get: (_t, k) => (k === 'shareToken' ? 'x' : MISSING) });
    const differ: string[] = [];
    let checked = 0;
    for (const r of routes.filter((x) => isStudy(ROUTE_RULES[x.key]) && idSegments(x.path).length > 0)) {
      const foreignUrl = fillPath(r.path, e);
      const missingUrl = fillPath(r.path, none);
      const [foreignId] = foreignUrl.match(/\d+/g)!; // study-scoped routes carry one id
      const body = r.key === 'POST /api/runs' ? undefined : {};
      const foreign = await call(outsider, r.method, foreignUrl, body);
      const missing = await call(outsider, r.method, missingUrl, body);
      checked++;
      expect(foreign.status, r.key).toBe(404);
      const expected = missing.text.split(String(MISSING)).join(foreignId);
      if (foreign.status !== missing.status || foreign.text !== expected) differ.push(`${r.key}: foreign ${foreign.status} ${foreign.text} / missing ${missing.status} ${missing.text}`);
    }
    expect(checked).toBeGreaterThan(40);
    expect(differ).toEqual([]);
  });

  it('POST /api/runs names the scope object asked for, foreign or missing', async () => {
    const scopes = { study: e.studyId, condition: e.conditionId, coverslip: e.coverslipId, field: e.fieldId } as const;
    for (const [kind, id] of Object.entries(scopes)) {
      const foreign = await outsider.post('/api/runs').send({ recipeId: e.recipeId, scope: { kind, id } });
      const missing = await outsider.post('/api/runs').send({ recipeId: e.recipeId, scope: { kind, id: MISSING } });
      expect(foreign.status, kind).toBe(404);
      expect(missing.status, kind).toBe(404);
      expect(foreign.text).toBe(JSON.stringify({ error: `no ${kind} with id ${id}` }));
      expect(missing.text).toBe(JSON.stringify({ error: `no ${kind} with id ${MISSING}` }));
    }
  });

  it('cell, field and report routes name the object asked for, not the study that owns it', async () => {
    const cell = await outsider.patch(`/api/cells/${e.cellId}`).send({});
    expect(cell.body).toEqual({ error: `no cell with id ${e.cellId}` });
    const field = await outsider.get(`/api/fields/${e.fieldId}/cells`);
    expect(field.body).toEqual({ error: `no field with id ${e.fieldId}` });
    const report = await outsider.get(`/api/reports/${e.reportId}`);
    expect(report.body).toEqual({ error: `no report with id ${e.reportId}` });
  });
});

describe('one id parser for every path segment', () => {
  const BAD = ['12abc', '-1', '0', '1e3', ' 7', '9007199254740993', '0x1F', '012', '1.0'];

  it('IdParam takes plain positive decimal integers up to 2^53 − 1 only', () => {
    expect(IdParam.parse('12')).toBe(12);
    expect(IdParam.parse('9007199254740991')).toBe(Number.MAX_SAFE_INTEGER);
    for (const s of BAD) {
      const r = IdParam.safeParse(s);
      expect(r.success, s).toBe(false);
      expect(r.error!.issues[0].message).toBe(`expected a positive whole-number id, got ${JSON.stringify(s)}`);
    }
  });

  it('every route refuses the bad ids with the same 400 and accepts "12"', async () => {
    const wrong: string[] = [];
    let checked = 0;
    for (const r of routes) {
      for (const seg of idSegments(r.path)) {
        const segs = r.path.split('/');
        const filled = fillPath(r.path, e).split('/');
        const withValue = (v: string) => segs.map((s, i) => (s === `:${seg}` ? encodeURIComponent(v) : filled[i])).join('/');
        for (const bad of BAD) {
          const res = await call(manager, r.method, withValue(bad));
          checked++;
          const want = JSON.stringify({ error: `${seg}: expected a positive whole-number id, got ${JSON.stringify(bad)}` });
          if (res.status !== 400 || res.text !== want) wrong.push(`${r.key} ${seg}=${JSON.stringify(bad)} → ${res.status} ${res.text.slice(0, 120)}`);
        }
        const ok = await call(manager, r.method, withValue('12'));
        if (ok.status >= 500 || /expected a positive whole-number id/.test(ok.text)) wrong.push(`${r.key} ${seg}="12" → ${ok.status} ${ok.text.slice(0, 120)}`);
      }
    }
    expect(checked).toBeGreaterThan(400);
    expect(wrong).toEqual([]);
  }, 120_000);
});
