/** GET /api/openapi.json: the API as an OpenAPI 3.1 document (server/api-reference/document.ts). Schemas: shared/schemas/api-reference.ts. */
import { Router } from 'express';
import { createRequire } from 'node:module';
import type { AppContext } from '../context.js';
import { buildApiDocument } from '../api-reference/document.js';
import type { ApiDocument } from '../../shared/schemas/api-reference.js';

const { version } = createRequire(import.meta.url)('../../package.json') as { version: string };

export default function apiReferenceRoutes(_ctx: AppContext) {
  const r = Router();
  let doc: ApiDocument | null = null; // the document depends only on the code: built on first request
  r.get('/openapi.json', (_req, res) => {
    doc ??= buildApiDocument(version);
    res.json(doc);
  });
  return r;
}
