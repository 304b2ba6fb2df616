/**
 * GET /api/openapi.json: the API described as an OpenAPI 3.1 document (OpenAPI Specification 3.1.0, OpenAPI
 * Initiative 2021, https://spec.openapis.org/oas/v3.1.0). The server generates it from the route table
 * (server/auth/route-rules.ts) and the request/response schemas of this folder (server/api-reference/); the
 * API reference page reads it with these schemas.
 *
 * These are the parts of the OpenAPI 3.1 objects the document uses, written from the specification's field
 * tables and strict (an unknown field is refused), so a document that drifts from the structure fails its test.
 * Schema Objects are JSON Schema 2020-12 (checked separately against the draft's meta-schema).
 */
import { z } from 'zod';

/** A JSON Schema 2020-12 object (its content is checked against the draft's meta-schema, not here). */
export const JsonSchemaObject = z.record(z.string(), z.unknown());

/** How a route is allowed: the rule of server/auth/route-rules.ts, as text ("study:read", "global:manage_users", "signed-in", …). */
export const PERMISSION_KINDS = ['public', 'signed-in', 'session', 'study', 'global', 'share-token', 'invite-token'] as const;
export const PermissionRule = z.strictObject({
  kind: z.enum(PERMISSION_KINDS),
  /** the study or global action for `study` / `global` rules */
  action: z.string().optional(),
  /** the rule in words */
  text: z.string(),
});
export type PermissionRule = z.infer<typeof PermissionRule>;

const MediaType = z.strictObject({ schema: JsonSchemaObject });
const Content = z.record(z.string().regex(/^[a-z]+\/[a-z0-9.+-]+$/, 'a media type such as application/json'), MediaType);

export const ParameterObject = z.strictObject({
  name: z.string().min(1),
  in: z.enum(['path', 'query', 'header', 'cookie']),
  description: z.string().optional(),
  required: z.boolean().optional(),
  schema: JsonSchemaObject,
});
export type ParameterObject = z.infer<typeof ParameterObject>;

export const ResponseObject = z.strictObject({ description: z.string(), content: Content.optional() });

export const OperationObject = z.strictObject({
  operationId: z.string().min(1),
  summary: z.string().min(1),
  tags: z.array(z.string()).optional(),
  parameters: z.array(ParameterObject).optional(),
  requestBody: z.strictObject({ description: z.string().optional(), required: z.boolean().optional(), content: Content }).optional(),
  responses: z.record(z.string().regex(/^([1-5]XX|[1-5][0-9]{2}|default)$/, 'an HTTP status, a range like 4XX, or default'), ResponseObject),
  /** [] for routes open without a session; else the accepted schemes */
  security: z.array(z.record(z.string(), z.array(z.string()))).optional(),
  /** OpenAPI specification extension: the route's permission rule */
  'x-permission': PermissionRule,
});
export type OperationObject = z.infer<typeof OperationObject>;

export const HTTP_METHODS = ['get', 'put', 'post', 'delete', 'patch'] as const;
export type HttpMethod = (typeof HTTP_METHODS)[number];
export const PathItem = z.strictObject(Object.fromEntries(HTTP_METHODS.map((m) => [m, OperationObject.optional()])) as Record<HttpMethod, z.ZodOptional<typeof OperationObject>>);

const SecurityScheme = z.union([
  z.strictObject({ type: z.literal('apiKey'), in: z.enum(['cookie', 'header', 'query']), name: z.string(), description: z.string().optional() }),
  z.strictObject({ type: z.literal('http'), scheme: z.string(), bearerFormat: z.string().optional(), description: z.string().optional() }),
]);

export const ApiDocument = z.strictObject({
  openapi: z.string().regex(/^3\.1\.\d+$/, 'an OpenAPI 3.1 version such as 3.1.0'),
  info: z.strictObject({ title: z.string(), version: z.string(), description: z.string().optional() }),
  jsonSchemaDialect: z.string().optional(),
  paths: z.record(z.string().regex(/^\//, 'a path starting with /'), PathItem),
  components: z.strictObject({
    schemas: z.record(z.string().regex(/^[a-zA-Z0-9._-]+$/), JsonSchemaObject),
    securitySchemes: z.record(z.string().regex(/^[a-zA-Z0-9._-]+$/), SecurityScheme),
  }),
});
export type ApiDocument = z.infer<typeof ApiDocument>;
