/**
 * Route inventory: every API route of the real Express app has a permission rule in
 * server/auth/route-rules.ts, and every rule there names a route that exists. Add the rule with the route.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { ROUTE_RULES } from '../../server/auth/route-rules.js';
import { apiRoutes, listRoutes } from './world.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t?.close());

describe('route inventory', () => {
  it('walks the router stack and finds the routes of every route module', () => {
    const keys = apiRoutes(t.app).map((r) => r.key);
    // one known route per module, so a broken walk cannot pass by finding nothing
    for (const k of ['GET /api/health', 'POST /api/auth/login', 'GET /api/users', 'GET /api/studies/:studyId', 'POST /api/coverslips/:id/fields', 'GET /api/fields/:id/cells', 'GET /api/recipes', 'POST /api/runs', 'GET /api/studies/:studyId/cell-table', 'GET /api/reports/:id', 'GET /api/shared/:token', 'GET /api/outbox'])
      expect(keys).toContain(k);
    expect(new Set(keys).size).toBe(keys.length); // no route registered twice
  });

  it('every API route has a rule', () => {
    const missing = apiRoutes(t.app).filter((r) => !(r.key in ROUTE_RULES)).map((r) => r.key);
    expect(missing, `routes without a rule in server/auth/route-rules.ts: ${missing.join(', ')}`).toEqual([]);
  });

  it('every rule names a route that exists', () => {
    const keys = new Set(apiRoutes(t.app).map((r) => r.key));
    const stale = Object.keys(ROUTE_RULES).filter((k) => !keys.has(k));
    expect(stale, `rules for routes that no longer exist: ${stale.join(', ')}`).toEqual([]);
  });

  it('nothing outside /api is a parameterised route (the client fallback serves only index.html)', () => {
    const other = listRoutes(t.app).filter((r) => !r.path.startsWith('/api/'));
    expect(other.filter((r) => r.path.includes(':'))).toEqual([]);
  });
});
