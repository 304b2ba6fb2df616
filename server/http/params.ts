/** Reading ids from URL segments: a bad value is a 400 that names the segment and quotes what was received. */
import type { Request } from 'express';
import { IdParam } from '../../shared/schemas/common.js';
import { badRequest } from '../http/errors.js';

/** The id in path segment `name` (e.g. "id", "studyId"), parsed with the shared IdParam schema. */
export function idParam(req: Request, name: string): number {
  const raw = req.params[name];
  const r = IdParam.safeParse(Array.isArray(raw) ? raw[0] : raw);
  if (!r.success) throw badRequest(`${name}: ${r.error.issues[0].message}`);
  return r.data;
}
