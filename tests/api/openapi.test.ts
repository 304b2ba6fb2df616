/**
 * GET /api/openapi.json: an OpenAPI 3.1 document covering every route of the route table with its permission
 * rule, generated from the shared zod schemas. Checked against the structure of OpenAPI 3.1 (OpenAPI
 * Specification 3.1.0, https://spec.openapis.org/oas/v3.1.0: the strict object schemas of
 * shared/schemas/api-reference.ts), every Schema Object against the JSON Schema 2020-12 meta-schema (ajv's
 * copy of the draft's meta-schema), and every documented JSON answer of a GET route against the server's real
 * answer (ajv validating the response of a lab-A world with one of everything).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { ROUTE_RULES } from '../../server/auth/route-rules.js';
import { OPERATIONS, type Operation } from '../../server/api-reference/operations.js';
import { openApiPath, permissionOf, undocumented } from '../../server/api-reference/document.js';
import { ApiDocument, HTTP_METHODS } from '../../shared/schemas/api-reference.js';
import { apiRoutes, buildLabA, fillPath, type LabAEntities } from '../security/world.js';

let t: TestApp;
let e: LabAEntities;
let doc: ApiDocument;
beforeAll(async () => {
  t = await makeTestApp();
  e = await buildLabA(t);
  const res = await (await t.login('biologist')).get('/api/openapi.json');
  expect(res.status).toBe(200);
  doc = res.body;
}, 120_000);
afterAll(() => t?.close());

/** Every value of every key named `key` in a JSON tree. */
function collect(node: unknown, key: string, out: unknown[] = []): unknown[] {
  if (Array.isArray(node)) for (const x of node) collect(x, key, out);
  else if (node && typeof node === 'object')
    for (const [k, v] of Object.entries(node)) {
      if (k === key) out.push(v);
      collect(v, key, out);
    }
  return out;
}

const DOC_ID = 'urn:syntopy:openapi';
const toDefs = (x: unknown) => JSON.parse(JSON.stringify(x).replaceAll('"#/components/schemas/', `"${DOC_ID}#/$defs/`));
/** ajv (strict: an unknown keyword is an error) holding the document's components as one schema's $defs. */
function ajv() {
  const a = new Ajv2020({ strict: true, validateFormats: false });
  a.addSchema({ $id: DOC_ID, $defs: toDefs(doc.components.schemas) });
  return a;
}
/** A documented schema whose references point into the components held by ajv(). */
const withDefs = (schema: object) => toDefs(schema);

describe('the document', () => {
  it('has the OpenAPI 3.1 structure (strict schemas of the OpenAPI objects used)', () => {
    const r = ApiDocument.safeParse(doc);
    expect(r.success, r.success ? '' : JSON.stringify(r.error.issues.slice(0, 5))).toBe(true);
    expect(doc.openapi).toBe('3.1.0');
  });

  it('documents every route of the route table and of the app, each with its permission rule', () => {
    const keys = Object.keys(ROUTE_RULES);
    for (const r of apiRoutes(t.app)) expect(keys).toContain(r.key);
    let n = 0;
    for (const [key, rule] of Object.entries(ROUTE_RULES)) {
      const [method, path] = key.split(' ');
      const op = doc.paths[openApiPath(path).path]?.[method.toLowerCase() as (typeof HTTP_METHODS)[number]];
      expect(op, key).toBeDefined();
      expect(op!['x-permission'], key).toEqual(permissionOf(rule));
      n++;
    }
    const ops = Object.values(doc.paths).flatMap((p) => HTTP_METHODS.filter((m) => p[m]));
    expect(ops.length).toBe(n); // nothing documented that is not in the table
    expect(n).toBeGreaterThan(75);
  });

  it('states each route request: every path parameter, a body for every write that reads one, and a response', () => {
    for (const [key, op] of Object.entries(OPERATIONS) as [string, Operation][]) {
      const [method, path] = key.split(' ');
      const o = doc.paths[openApiPath(path).path][method.toLowerCase() as (typeof HTTP_METHODS)[number]]!;
      const pathParams = (o.parameters ?? []).filter((p) => p.in === 'path').map((p) => p.name);
      expect(pathParams, key).toEqual(openApiPath(path).names);
      expect(!!o.requestBody, key).toBe(op.body !== null);
      expect(Object.keys(o.responses).some((s) => s.startsWith('2')), key).toBe(true);
      expect(o.responses['4XX'], key).toBeDefined();
    }
    // the routes that read a JSON body (they call parse(…, req.body)) all document one — spot checks across modules
    for (const k of ['POST /api/studies', 'PATCH /api/cells/:id', 'POST /api/runs', 'POST /api/tokens', 'POST /api/cells/:cellId/exclusion', 'POST /api/fields/:id/cells/auto'])
      expect(doc.paths[openApiPath(k.split(' ')[1]).path][k.split(' ')[0].toLowerCase() as 'post' | 'patch']!.requestBody, k).toBeDefined();
  });

  it('fails when a route has no documented request and response', () => {
    expect(undocumented()).toEqual({ missing: [], stale: [] });
    // a route added to the table without an operation is reported, and an operation for a removed route too
    expect(undocumented({ ...ROUTE_RULES, 'GET /api/new-thing': 'signed-in' }, OPERATIONS).missing).toEqual(['GET /api/new-thing']);
    const { ['GET /api/health']: _gone, ...rest } = ROUTE_RULES;
    expect(undocumented(rest, OPERATIONS).stale).toEqual(['GET /api/health']);
  });

  it('every reference resolves, and every Schema Object is valid JSON Schema 2020-12', () => {
    for (const ref of collect(doc, '$ref') as string[]) {
      expect(ref).toMatch(/^#\/components\/schemas\//);
      expect(doc.components.schemas[ref.split('/').pop()!], ref).toBeDefined();
    }
    const a = ajv();
    const schemas = [...Object.values(doc.components.schemas), ...collect(doc.paths, 'schema')];
    expect(schemas.length).toBeGreaterThan(100);
    for (const s of schemas) {
      const ok = a.validateSchema(s as object);
      expect(ok, JSON.stringify(a.errors)).toBe(true);
    }
    for (const name of Object.keys(doc.components.schemas)) a.getSchema(`${DOC_ID}#/$defs/${name}`); // compiles in strict mode: no unknown keyword
    for (const s of collect(doc.paths, 'schema')) a.compile(withDefs(s as object));
  });

  it('permission rules read as the route table says (study, global, session, open)', () => {
    const op = (m: string, p: string) => doc.paths[p][m as 'get']!;
    expect(op('get', '/api/studies/{studyId}')['x-permission']).toMatchObject({ kind: 'study', action: 'read' });
    expect(op('post', '/api/users')['x-permission']).toMatchObject({ kind: 'global', action: 'manage_users' });
    expect(op('post', '/api/tokens')['x-permission'].kind).toBe('session');
    expect(op('post', '/api/tokens').security).toEqual([{ session: [] }]);
    expect(op('get', '/api/shared/{token}').security).toEqual([]);
    expect(op('get', '/api/runs/{id}').security).toEqual([{ session: [] }, { token: [] }]);
  });
});

describe('documented answers are the real answers', () => {
  it('every JSON GET route answers with what its response schema allows', async () => {
    const agents = { biologist: await t.login('biologist'), manager: await t.login('manager') };
    const a = ajv();
    const checked: string[] = [];
    const failures: string[] = [];
    for (const [key, op] of Object.entries(OPERATIONS) as [string, Operation][]) {
      const [method, path] = key.split(' ');
      if (method !== 'GET' || 'media' in op.response) continue;
      const url = fillPath(path, e);
      let res = await agents.biologist.get(url);
      if (res.status === 403 || res.status === 404) res = await agents.manager.get(url);
      if (key === 'GET /api/auth/invitations/:token') continue; // the world holds no open invitation (checked in invite.test.ts)
      expect(res.status, `${key}: ${JSON.stringify(res.body).slice(0, 200)}`).toBe(200);
      const o = doc.paths[openApiPath(path).path].get!;
      const validate = a.compile(withDefs(o.responses['200'].content!['application/json'].schema));
      if (!validate(res.body)) failures.push(`${key}: ${JSON.stringify(validate.errors?.slice(0, 2))}`);
      checked.push(key);
    }
    expect(failures).toEqual([]);
    expect(checked.length).toBeGreaterThan(25);
  });

  it('an error answer has the documented error shape', async () => {
    const res = await (await t.login('biologist')).get('/api/studies/999999');
    expect(res.status).toBe(404);
    const validate = ajv().compile(withDefs({ $ref: '#/components/schemas/ErrorResponse' }));
    expect(validate(res.body), JSON.stringify(validate.errors)).toBe(true);
  });
});
