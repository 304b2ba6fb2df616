/** Reading ids from URL segments: a bad value is a 400 that names the segment and quotes what was received. */
import type { Request } from 'express';
import { badRequest } from '../http/errors.js';

export function idParam(req: Request, name: string): number {
  const raw = req.params[name];
  const s = Array.isArray(raw) ? raw[0] : raw;
  if (typeof s !== 'string' || !/^[1-9][0-9]{0,14}$/.test(s)) {
    throw badRequest(`${name}: expected a positive whole-number id, got ${JSON.stringify(s ?? null)}`);
  }
  return Number(s);
}
