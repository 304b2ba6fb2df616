/**
 * The OpenAPI 3.1 document of GET /api/openapi.json, generated from the route table (server/auth/route-rules.ts)
 * and the operations (./operations.ts): every schema is zod 4's own JSON Schema output (`z.toJSONSchema`, draft
 * 2020-12, the dialect of OpenAPI 3.1), requests as their input side (what a client sends: "12" for an id
 * segment), responses as their output side. Named schemas go to `components.schemas` once and are referenced.
 */
import { z, type ZodType } from 'zod';
import { ROUTE_RULES, type Rule } from '../auth/route-rules.js';
import { SESSION_COOKIE } from '../auth/session.js';
import { ErrorResponse } from '../../shared/schemas/common.js';
import type { ApiDocument, OperationObject, ParameterObject, PermissionRule } from '../../shared/schemas/api-reference.js';
import { OPERATIONS, PATH_PARAMS, type Named, type Operation } from './operations.js';

type Json = Record<string, unknown>;
type Io = 'input' | 'output';

/** The rule in words and as data (the route table's rule meanings). */
export function permissionOf(rule: Rule): PermissionRule {
  if (typeof rule === 'object') {
    if ('study' in rule) return { kind: 'study', action: rule.study, text: `may "${rule.study}" in the study the route's object belongs to (404 when the study is not visible, 403 when the action is not allowed)` };
    return { kind: 'global', action: rule.global, text: `a role that allows "${rule.global}" (403 otherwise)` };
  }
  const text: Record<typeof rule, string> = {
    public: 'open: no session needed',
    'signed-in': 'any signed-in user (the answer holds only what the user may see)',
    session: 'a signed-in user with a cookie session; a personal API token gets 403',
    'share-token': 'no session: the signed share token in the path is the permission',
    'invite-token': 'no session: the single-use invitation token in the path is the permission',
  };
  return { kind: rule, text: text[rule] };
}

/** Collects named schemas into components, one JSON Schema per (name, side). */
class Components {
  readonly schemas: Record<string, Json> = {};
  private seen = new Map<string, ZodType>();

  ref(n: Named, io: Io): Json {
    const key = io === 'input' && this.needsInputName(n) ? `${n.name}Input` : n.name;
    const before = this.seen.get(key);
    if (before && before !== n.schema) throw new Error(`two different schemas are named ${key} in the API operations`);
    if (!before) {
      this.seen.set(key, n.schema);
      this.schemas[key] = toSchema(n.schema, io);
    }
    return { $ref: `#/components/schemas/${key}` };
  }

  /** A schema whose input and output sides differ (defaults, transforms) gets a separate input entry. */
  private needsInputName(n: Named) {
    return JSON.stringify(toSchema(n.schema, 'input')) !== JSON.stringify(toSchema(n.schema, 'output'));
  }
}

/** zod's JSON Schema of one schema, without its `$schema` line (the document states the dialect once). */
export function toSchema(schema: ZodType, io: Io): Json {
  const out = z.toJSONSchema(schema, { target: 'draft-2020-12', io, unrepresentable: 'any' }) as Json;
  delete out.$schema;
  if ('$defs' in out) throw new Error('a recursive schema needs its $defs placed in components; none is documented yet');
  return out;
}

/** "/api/fields/:id/cells" → "/api/fields/{id}/cells" and its parameter names. */
export function openApiPath(path: string) {
  const names: string[] = [];
  const p = path.replace(/:([A-Za-z]+)/g, (_m, n: string) => {
    names.push(n);
    return `{${n}}`;
  });
  return { path: p, names };
}

function queryParameters(q: Named): ParameterObject[] {
  const s = toSchema(q.schema, 'input');
  const props = (s.properties ?? null) as Record<string, Json> | null;
  if (s.type !== 'object' || !props) throw new Error(`query schema ${q.name} is not an object of parameters`);
  const required = new Set((s.required as string[] | undefined) ?? []);
  return Object.entries(props).map(([name, schema]) => {
    const { description, ...rest } = schema as Json & { description?: string };
    return { name, in: 'query' as const, required: required.has(name), ...(description ? { description } : {}), schema: rest };
  });
}

function operation(key: string, op: Operation, rule: Rule, c: Components): OperationObject {
  const [method, path] = key.split(' ');
  const { names } = openApiPath(path);
  const parameters: ParameterObject[] = names.map((n) => {
    const p = PATH_PARAMS[n];
    if (!p) throw new Error(`${key}: path parameter :${n} has no entry in PATH_PARAMS (server/api-reference/operations.ts)`);
    return { name: n, in: 'path', required: true, description: p.description, schema: c.ref(p.schema, 'input') };
  });
  if (op.query) parameters.push(...queryParameters(op.query));

  let requestBody: OperationObject['requestBody'];
  if (op.body && 'multipart' in op.body) {
    const properties: Record<string, Json> = {};
    for (const [part, what] of Object.entries(op.body.multipart)) {
      const file = { type: 'string', contentMediaType: 'application/octet-stream' };
      properties[part] =
        what === 'file' ? file : what === 'files' ? { type: 'array', items: file } : { type: 'string', contentMediaType: 'application/json', contentSchema: c.ref(what, 'input') };
    }
    requestBody = { required: true, content: { 'multipart/form-data': { schema: { type: 'object', properties, required: Object.keys(properties) } } } };
  } else if (op.body) {
    requestBody = { required: true, content: { 'application/json': { schema: c.ref(op.body, 'input') } } };
  }

  const success =
    'media' in op.response
      ? { description: op.response.description, content: { [op.response.media]: { schema: { type: 'string', contentMediaType: op.response.media } } } }
      : { description: op.summary, content: { 'application/json': { schema: c.ref(op.response, 'output') } } };
  const error = { description: 'refused: a message (and per-field issues for a refused request)', content: { 'application/json': { schema: c.ref({ name: 'ErrorResponse', schema: ErrorResponse }, 'output') } } };
  const responses: OperationObject['responses'] = { [String(op.status ?? 200)]: success };
  if (op.also) responses[String(op.also.status)] = { ...success, description: op.also.description };
  responses['4XX'] = error;

  const permission = permissionOf(rule);
  const open = permission.kind === 'public' || permission.kind === 'share-token' || permission.kind === 'invite-token';
  const security: Record<string, string[]>[] = open ? [] : permission.kind === 'session' ? [{ session: [] }] : [{ session: [] }, { token: [] }];
  return {
    operationId: `${method.toLowerCase()}${path.replace(/^\/api/, '').replace(/[^A-Za-z0-9]+(.)?/g, (_m, ch: string | undefined) => (ch ? ch.toUpperCase() : ''))}`,
    summary: op.summary,
    tags: [path.split('/')[2]],
    ...(parameters.length ? { parameters } : {}),
    ...(requestBody ? { requestBody } : {}),
    responses,
    security,
    'x-permission': permission,
  };
}

/** Routes of the table without an operation, and operations without a route (both must be empty). */
export function undocumented(rules: Record<string, Rule> = ROUTE_RULES, ops: Record<string, Operation> = OPERATIONS) {
  return {
    missing: Object.keys(rules).filter((k) => !(k in ops)),
    stale: Object.keys(ops).filter((k) => !(k in rules)),
  };
}

export function buildApiDocument(version: string): ApiDocument {
  const { missing, stale } = undocumented();
  if (missing.length || stale.length) throw new Error(`API operations out of step with the route table: missing ${missing.join(', ') || 'none'}; stale ${stale.join(', ') || 'none'}`);
  const c = new Components();
  const paths: ApiDocument['paths'] = {};
  for (const [key, rule] of Object.entries(ROUTE_RULES)) {
    const [method, path] = key.split(' ');
    const p = openApiPath(path).path;
    paths[p] ??= {};
    paths[p][method.toLowerCase() as keyof (typeof paths)[string]] = operation(key, OPERATIONS[key], rule, c);
  }
  return {
    openapi: '3.1.0',
    info: {
      title: 'Syntopy API',
      version,
      description:
        'Every route of the Syntopy server. Sign in with the session cookie, or send a personal API token as `Authorization: Bearer <token>` (read-scope tokens: GET only). Errors are JSON with a message.',
    },
    jsonSchemaDialect: 'https://spec.openapis.org/oas/3.1/dialect/base',
    paths,
    components: {
      schemas: c.schemas,
      securitySchemes: {
        session: { type: 'apiKey', in: 'cookie', name: SESSION_COOKIE, description: 'the session cookie set by POST /api/auth/login' },
        token: { type: 'http', scheme: 'bearer', description: 'a personal API token (POST /api/tokens)' },
      },
    },
  };
}
